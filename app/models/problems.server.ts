/**
 * The problem library as the web app sees it: the checkout's problems/ folder (kept in git) and
 * the problems engineers added through the browser (kept in the database as problem versions and
 * written to the uploaded-problems folder, which the benchmark runner merges into its library;
 * see DEVELOPERS.md, Decisions, "Uploaded problems").
 */
import fs from "node:fs";
import path from "node:path";
import { and, desc, eq, sql, isNull } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { libraryProblemsDir, uploadedProblemsDir, webProblemLibrary } from "./library.server";
import { caseResults, problemVersions, runs } from "~/db/schema";
import { compileProblemSource, type ProblemSourceFiles } from "~/engine/problem/compile";
import { PROBLEM_ID_PATTERN } from "~/engine/problem/files";
import { solveProblem } from "~/engine/solve";
import type { ProblemView, ProvenanceLine } from "./problem-view";
export type { BoundRow, EndConditionRow, ProvenanceLine } from "./problem-view";
import { outcomeMessage, problemView, problemViews, type ProblemOrigin } from "~/services/problem-views.server";
import { BUILDER_FIELDS, buildProblemJson, builderFieldOf, describeBuilderError, errorsByField, uploadFieldOf, type BuilderOrigins } from "~/engine/problem/form";
import { isSolved } from "~/runs/types";
import { savePlanOf, type SavePlan } from "./problem-save.server";
export { isLibraryProblem, saveUploadedProblem, savePlanOf, type SaveOutcome, type SavePlan } from "./problem-save.server";


import { SCHEMES, type SchemeName } from "~/engine/schemes/ids";
export { SCHEMES, type SchemeName };

/** Largest accepted upload of problem.json / reference.csv (bytes). */
export const MAX_PROBLEM_UPLOAD_BYTES = 512 * 1024;
export const MAX_REFERENCE_UPLOAD_BYTES = 4 * 1024 * 1024;

export { libraryProblemsDir, uploadedProblemsDir };

export type { ProblemOrigin };

export interface SchemeState {
  cases: number;
  solved: number;
  /** Smallest relative objective error among the solved cases. */
  bestErrorRel: number | null;
  runId: string;
  commitHash: string;
}

export interface LibraryEntry {
  id: string;
  title: string;
  tags: string[];
  origin: ProblemOrigin;
  provenance: ProvenanceLine[];
  /** Compile errors (formatted) when the problem does not load. */
  error: string | null;
  /** Per scheme: the latest run on main that solved this problem with it. */
  schemes: Partial<Record<string, SchemeState>>;
}

/** Latest run on main per (problem, scheme): case counts, solved counts, best relative error. */
function schemeStatesOnMain(db: Db, problemId?: string): Map<string, Partial<Record<string, SchemeState>>> {
  const rows = db
    .select({
      problemId: caseResults.problemId,
      scheme: caseResults.scheme,
      status: caseResults.status,
      err: caseResults.objectiveErrorRel,
      runId: runs.id,
      commitHash: runs.commitHash,
      startedAt: runs.startedAt,
    })
    .from(caseResults)
    .innerJoin(runs, eq(runs.id, caseResults.runId))
    .where(and(eq(runs.branch, "main"), problemId ? eq(caseResults.problemId, problemId) : sql`1 = 1`))
    .orderBy(desc(runs.startedAt))
    .all();
  const out = new Map<string, Partial<Record<string, SchemeState>>>();
  for (const r of rows) {
    let per = out.get(r.problemId);
    if (!per) out.set(r.problemId, (per = {}));
    let s = per[r.scheme];
    if (!s) per[r.scheme] = s = { cases: 0, solved: 0, bestErrorRel: null, runId: r.runId, commitHash: r.commitHash };
    if (s.runId !== r.runId) continue; // an older run
    s.cases++;
    if (isSolved(r.status)) {
      s.solved++;
      if (r.err !== null && (s.bestErrorRel === null || r.err < s.bestErrorRel)) s.bestErrorRel = r.err;
    }
  }
  return out;
}

/** Problems in the library: the checkout's folders plus those added in Arcwatch (no compilation). */
export function libraryProblemCount(): number {
  return webProblemLibrary().ids().length;
}

/** Id and title of every problem, from the files as the schema reads them (no compilation; the compare page's picker). */
export function libraryProblemTitles(): { id: string; title: string }[] {
  const library = webProblemLibrary();
  return library
    .ids()
    .sort((a, b) => library.rootIndexOf(a) - library.rootIndexOf(b) || (a < b ? -1 : a > b ? 1 : 0))
    .map((id) => ({ id, title: library.facts(id)?.title ?? id }));
}

/**
 * Every problem of the checkout and every uploaded one (a checkout problem wins on a shared id),
 * each compiled on a solver thread (app/services/problem-views.server.ts; kept by content, so
 * only new or edited files are compiled). Throws SolverPoolBusy when the solver queue is full.
 */
export async function listProblemLibrary(db: Db, filter: { tag?: string; q?: string } = {}): Promise<LibraryEntry[]> {
  const library = webProblemLibrary();
  // The checkout's problems first, then the uploaded ones, each alphabetically.
  const ids = library.ids().sort((a, b) => library.rootIndexOf(a) - library.rootIndexOf(b) || (a < b ? -1 : a > b ? 1 : 0));
  const views = await problemViews(ids, { library });
  const states = schemeStatesOnMain(db);
  const entries: LibraryEntry[] = [];
  for (const id of ids) {
    const loaded = views.get(id);
    if (!loaded) continue;
    const o = loaded.outcome;
    const base = { id, origin: loaded.origin, schemes: states.get(id) ?? {} };
    if (o.ok) entries.push({ ...base, title: o.view.title, tags: o.view.tags, provenance: o.view.provenance, error: null });
    else entries.push({ ...base, title: id, tags: [], provenance: [], error: outcomeMessage(o) });
  }
  const q = filter.q?.trim().toLowerCase();
  return entries.filter((e) => (!filter.tag || e.tags.includes(filter.tag)) && (!q || e.id.includes(q) || e.title.toLowerCase().includes(q)));
}

export interface BestResult {
  scheme: string;
  caseId: number;
  intervals: number;
  degree: number | null;
  errorRel: number | null;
  medianSeconds: number | null;
  commitHash: string;
  runId: string;
}

/** Per scheme, the solved case on main with the smallest relative objective error (ties: faster). */
export function bestResultsPerScheme(db: Db, problemId: string): BestResult[] {
  const rows = db
    .select({
      id: caseResults.id,
      scheme: caseResults.scheme,
      status: caseResults.status,
      intervals: caseResults.intervals,
      degree: caseResults.degree,
      err: caseResults.objectiveErrorRel,
      med: caseResults.medianSeconds,
      commitHash: runs.commitHash,
      runId: runs.id,
    })
    .from(caseResults)
    .innerJoin(runs, eq(runs.id, caseResults.runId))
    // uniform meshes only (a refined case's intervals are its first mesh's)
    .where(and(eq(caseResults.problemId, problemId), eq(runs.branch, "main"), isNull(caseResults.meshTolerance)))
    .all();
  const best = new Map<string, BestResult>();
  for (const r of rows) {
    if (!isSolved(r.status)) continue;
    const cur = best.get(r.scheme);
    const e = r.err ?? Infinity;
    const ce = cur ? (cur.errorRel ?? Infinity) : Infinity;
    if (!cur || e < ce || (e === ce && (r.med ?? Infinity) < (cur.medianSeconds ?? Infinity))) {
      best.set(r.scheme, { scheme: r.scheme, caseId: r.id, intervals: r.intervals, degree: r.degree, errorRel: r.err, medianSeconds: r.med, commitHash: r.commitHash, runId: r.runId });
    }
  }
  return SCHEMES.filter((s) => best.has(s)).map((s) => best.get(s)!);
}

/** The problem page: the compiled problem's view (./problem-view.ts) and what the database holds about it. */
export interface ProblemDetail extends ProblemView {
  origin: ProblemOrigin;
  best: BestResult[];
  versions: { id: number; contentHash: string; createdAt: number; results: number }[];
  states: Partial<Record<string, SchemeState>>;
}

/**
 * The problem page's data. The problem is compiled on a solver thread (never here) and its view
 * kept by content; a compile error is a 422 naming file, field and column, a compile stopped by
 * the wall limit a 422 saying so. Throws SolverPoolBusy when the solver queue is full.
 */
export async function getProblemDetail(db: Db, id: string): Promise<{ ok: true; detail: ProblemDetail } | { ok: false; status: 404 | 422; message: string }> {
  const loaded = await problemView(id);
  if (!loaded) return { ok: false, status: 404, message: `No problem '${id.slice(0, 80)}' in the library.` };
  const o = loaded.outcome;
  if (!o.ok) return { ok: false, status: 422, message: o.reason === "errors" ? `The problem file does not compile: ${outcomeMessage(o)}` : outcomeMessage(o) };
  const view = o.view;
  const versions = db
    .select({ id: problemVersions.id, contentHash: problemVersions.contentHash, createdAt: problemVersions.createdAt })
    .from(problemVersions)
    .where(eq(problemVersions.problemId, id))
    .orderBy(desc(problemVersions.createdAt), desc(problemVersions.id))
    .all();
  const counts = new Map(
    db
      .select({ hash: caseResults.problemVersionHash, n: sql<number>`count(*)` })
      .from(caseResults)
      .where(eq(caseResults.problemId, id))
      .groupBy(caseResults.problemVersionHash)
      .all()
      .map((r) => [r.hash, Number(r.n)]),
  );
  const detail: ProblemDetail = {
    ...view,
    id,
    origin: loaded.origin,
    best: bestResultsPerScheme(db, id),
    versions: versions.map((v) => ({ id: v.id, contentHash: v.contentHash, createdAt: new Date(v.createdAt).getTime(), results: counts.get(v.contentHash) ?? 0 })),
    states: schemeStatesOnMain(db, id).get(id) ?? {},
  };
  if (!versions.some((v) => v.contentHash === view.versionHash)) {
    detail.versions.unshift({ id: 0, contentHash: view.versionHash, createdAt: 0, results: counts.get(view.versionHash) ?? 0 });
  }
  return { ok: true, detail };
}

/** The files of an uploaded problem (for editing); null for checkout problems and unknown ids. */
export function uploadedProblemFiles(id: string): ProblemSourceFiles | null {
  if (!PROBLEM_ID_PATTERN.test(id) || id.includes("..")) return null;
  if (fs.existsSync(path.join(libraryProblemsDir(), id, "problem.json"))) return null;
  const dir = path.join(uploadedProblemsDir(), id);
  try {
    const problemJson = fs.readFileSync(path.join(dir, "problem.json"), "utf8");
    const ref = path.join(dir, "reference.csv");
    return fs.existsSync(ref) ? { problemJson, referenceCsv: fs.readFileSync(ref, "utf8") } : { problemJson };
  } catch {
    return null;
  }
}

// ---------------------------------------------------------------------------------------
// Submissions of the add / edit form (upload or builder) and the trial solve
// ---------------------------------------------------------------------------------------

export type SubmissionMode = "upload" | "form";

export interface Submission {
  mode: SubmissionMode;
  id: string;
  files: ProblemSourceFiles | null;
  /** What was typed (and the text of uploaded files), to put back into the form. */
  values: Record<string, string>;
  /** Errors by field name ("form" for the whole form). */
  errors: Record<string, string>;
  /** What a save stores, from the compile that checked `files` (present with `files`). */
  plan?: SavePlan;
}

const JSON_TYPES = new Set(["application/json", "text/json", "text/plain", "application/octet-stream", ""]);
const CSV_TYPES = new Set(["text/csv", "application/csv", "application/vnd.ms-excel", "text/plain", "application/octet-stream", ""]);

/** Reads an uploaded file field, checking name, type and size; null when none was chosen. */
async function readUpload(value: FormDataEntryValue | null, ext: ".json" | ".csv", types: Set<string>, max: number): Promise<{ text: string } | { error: string } | null> {
  if (value === null || typeof value === "string") return null;
  if (value.size === 0 && !value.name) return null;
  if (!value.name.toLowerCase().endsWith(ext)) return { error: `Choose a ${ext} file (got '${value.name.slice(0, 60)}').` };
  if (!types.has(value.type)) return { error: `'${value.name.slice(0, 60)}' has type ${value.type}, not a ${ext.slice(1).toUpperCase()} text file.` };
  if (value.size > max) return { error: `'${value.name.slice(0, 60)}' is ${(value.size / 1024).toFixed(0)} KiB; the limit is ${(max / 1024).toFixed(0)} KiB.` };
  const bytes = new Uint8Array(await value.arrayBuffer());
  try {
    return { text: new TextDecoder("utf-8", { fatal: true }).decode(bytes) };
  } catch {
    return { error: `'${value.name.slice(0, 60)}' is not UTF-8 text.` };
  }
}

/**
 * Reads the add / edit form (multipart or url-encoded). Upload mode takes problem.json and
 * reference.csv from file fields (they win) or from the text areas; form mode builds the JSON
 * from the builder fields. Compiles the result and puts each error at its field.
 */
export async function readProblemSubmission(form: FormData, fixedId?: string): Promise<Submission> {
  const mode: SubmissionMode = form.get("mode") === "form" ? "form" : "upload";
  const str = (k: string) => {
    const v = form.get(k);
    return typeof v === "string" ? v : "";
  };
  const id = fixedId ?? str("id").trim();
  const values: Record<string, string> = { mode, id };
  const errors: Record<string, string> = {};
  if (!id) errors.id = "Enter an id (it names the problem's folder).";
  else if (!PROBLEM_ID_PATTERN.test(id) || id.includes("..")) errors.id = "Letters, digits, '-', '_' and '.', starting with a letter or digit (at most 128).";
  let files: ProblemSourceFiles | null = null;
  let origins: BuilderOrigins = {};
  if (mode === "upload") {
    values.problemJson = str("problemJson");
    values.referenceCsv = str("referenceCsv");
    const pj = await readUpload(form.get("problemFile"), ".json", JSON_TYPES, MAX_PROBLEM_UPLOAD_BYTES);
    const rc = await readUpload(form.get("referenceFile"), ".csv", CSV_TYPES, MAX_REFERENCE_UPLOAD_BYTES);
    if (pj && "error" in pj) errors.problemJson = pj.error;
    else if (pj) values.problemJson = pj.text;
    if (rc && "error" in rc) errors.referenceCsv = rc.error;
    else if (rc) values.referenceCsv = rc.text;
    if (values.problemJson.length > MAX_PROBLEM_UPLOAD_BYTES) errors.problemJson ??= `The problem file is over ${MAX_PROBLEM_UPLOAD_BYTES / 1024} KiB.`;
    if (values.referenceCsv.length > MAX_REFERENCE_UPLOAD_BYTES) errors.referenceCsv ??= `The reference file is over ${MAX_REFERENCE_UPLOAD_BYTES / 1024} KiB.`;
    if (!values.problemJson.trim()) errors.problemJson ??= "Choose a problem.json file or paste its text.";
    if (!errors.problemJson && !errors.referenceCsv) {
      files = { problemJson: values.problemJson };
      if (values.referenceCsv.trim()) files.referenceCsv = values.referenceCsv;
    }
  } else {
    for (const k of BUILDER_FIELDS) if (k !== "id") values[k] = str(k);
    const built = buildProblemJson({ ...(values as Record<(typeof BUILDER_FIELDS)[number], string>), id });
    if (!built.ok) Object.assign(errors, built.errors);
    else {
      files = { problemJson: `${JSON.stringify(built.json, null, 2)}\n` };
      origins = built.origins;
    }
    values.problemJson = files?.problemJson ?? "";
  }
  let plan: SavePlan | undefined;
  if (files) {
    const compiled = compileProblemSource(id || "new-problem", files, `${id || "new-problem"}/problem.json`);
    if (compiled.ok) plan = savePlanOf(compiled.problem);
    else {
      const byField: Record<string, string> = mode === "upload" ? errorsByField(compiled.errors, uploadFieldOf) : errorsByField(compiled.errors, builderFieldOf, (e) => describeBuilderError(e, origins));
      for (const [k, v] of Object.entries(byField)) errors[k] = errors[k] ? `${errors[k]}\n${v}` : v;
      files = null;
    }
  }
  const ok = Object.keys(errors).length === 0 && files !== null;
  return { mode, id, files: ok ? files : null, values, errors, ...(ok && plan ? { plan } : {}) };
}

export interface TrialResult {
  scheme: string;
  intervals: number;
  status: string;
  message: string;
  objective: number | null;
  finalTime: number | null;
  iterations: number;
  solveSeconds: number;
  errorRel: number | null;
  states: { t: number[]; columns: Record<string, number[]> } | null;
  controls: { t: number[]; columns: Record<string, number[]> } | null;
  reference: { t: number[]; columns: Record<string, number[]> } | null;
  stateNames: string[];
  controlNames: string[];
}

/** Largest mesh a trial solve may use (it runs inside a web request). */
export const TRIAL_MAX_INTERVALS = 60;
export const TRIAL_MIN_INTERVALS = 2;
/** Wall-clock limit of a trial solve (seconds). */
export const TRIAL_MAX_SECONDS = 20;

/** One modest solve of a submitted problem before it is saved (never throws for a solver failure). */
export async function trialSolve(files: ProblemSourceFiles, id: string, scheme: SchemeName, intervals: number): Promise<TrialResult | { error: string }> {
  const compiled = compileProblemSource(id || "new-problem", files);
  if (!compiled.ok) return { error: "The problem does not compile." };
  const p = compiled.problem;
  const n = Math.max(TRIAL_MIN_INTERVALS, Math.min(TRIAL_MAX_INTERVALS, Math.round(intervals) || 20));
  const report = solveProblem(p, scheme, { intervals: n, ...(scheme === "lgr" ? { degree: p.defaults?.degree ?? 4 } : {}) }, { nlp: { maxSeconds: TRIAL_MAX_SECONDS, maxIter: 500 } });
  const tr = report.trajectory;
  const ref = p.reference.trajectory;
  return {
    scheme,
    intervals: n,
    status: report.status,
    message: report.message,
    objective: report.objective,
    finalTime: report.finalTime,
    iterations: report.iterations,
    solveSeconds: report.solveSeconds,
    errorRel: report.errors.objectiveRel,
    states: tr ? { t: tr.t, columns: tr.states } : null,
    controls: tr ? { t: tr.tu, columns: tr.controls } : null,
    reference: ref ? { t: Array.from(ref.t), columns: Object.fromEntries(Object.entries(ref.columns).map(([k, v]) => [k, Array.from(v)])) } : null,
    stateNames: p.states.map((s) => s.name),
    controlNames: p.controls.map((c) => c.name),
  };
}

/** The builder's fields are not kept for a saved problem; editing starts from its files (upload mode). */
export function editValues(id: string): Record<string, string> | null {
  const files = uploadedProblemFiles(id);
  if (!files) return null;
  return { mode: "upload", id, problemJson: files.problemJson, referenceCsv: files.referenceCsv ?? "" };
}

/** Reads `{ id, problemJson, referenceCsv? }` (JSON) or the add form's fields (form data) into FormData. */
export async function submissionForm(request: Request): Promise<FormData | Response> {
  const type = request.headers.get("content-type") ?? "";
  if (!type.includes("application/json")) return request.formData();
  const text = await request.text();
  if (text.length > MAX_PROBLEM_UPLOAD_BYTES + MAX_REFERENCE_UPLOAD_BYTES + 4096) return Response.json({ error: "Request body too large." }, { status: 413 });
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch {
    return Response.json({ error: "The body is not valid JSON." }, { status: 400 });
  }
  const b = (body ?? {}) as Record<string, unknown>;
  const form = new FormData();
  form.set("mode", "upload");
  if (typeof b.id === "string") form.set("id", b.id);
  form.set("problemJson", typeof b.problemJson === "string" ? b.problemJson : b.problem !== undefined ? JSON.stringify(b.problem, null, 2) : "");
  if (typeof b.referenceCsv === "string") form.set("referenceCsv", b.referenceCsv);
  return form;
}

