/**
 * The one recording path for runs: the command line (bench/run.ts), the server's job worker (which
 * runs that command line) and the ingestion API (an uploaded "arcwatch-run/1" payload) all store
 * runs with these functions, so that a case is stored the same way wherever it was measured.
 *
 *   ensureSuite   the suite row (by name and content hash)
 *   insertRun     the run row, status "running" (or the uploaded status)
 *   insertCase    one case row + its timing samples + its problem and problem version, in one
 *                 synchronous transaction, so a killed run keeps every case that finished
 *   finishRun     status and finish time (and a patch of the machine record)
 *   storeRunPayload  all of the above for an uploaded payload, in one transaction
 *   buildRunPayload  a stored run read back as a payload (what `--upload` posts)
 *
 * Detection after a run is app/models/detection.server.ts (`afterRun`).
 */
import { and, eq, inArray } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, problemVersions, problems, runs, suites, timingSamples, type RunStatus } from "~/db/schema";
import { caseNumbers, PAYLOAD_FORMAT, runPayloadSchema, type CaseRecord, type RunPayload } from "~/runs/payload";
import { toPlain, UNKNOWN_VERSION } from "~/runs/record";
import { parseMeshEstimate, parsePasses } from "./mesh.server";
import { canonicalJson, sha256, type SuiteFile } from "~/runs/suite";
import type { Thresholds } from "~/runs/types";

/** A transaction or the database: every write below works inside a caller's transaction too. */
type Tx = Pick<Db, "insert" | "select" | "update">;

/** The suite as recorded: name, content hash, definition and thresholds (defaults merged). */
export interface SuiteRecord {
  name: string;
  contentHash: string;
  definition: SuiteFile | Record<string, unknown>;
  thresholds: Thresholds | Record<string, unknown> | null;
}

/** The suite row's id (created when new). */
export function ensureSuite(db: Tx, suite: SuiteRecord): number {
  db.insert(suites)
    .values({ name: suite.name, contentHash: suite.contentHash, definitionJson: suite.definition, thresholdsJson: suite.thresholds })
    .onConflictDoNothing()
    .run();
  const row = db.select({ id: suites.id }).from(suites).where(and(eq(suites.name, suite.name), eq(suites.contentHash, suite.contentHash))).get();
  if (!row) throw new Error(`suite row for ${suite.name} could not be created`);
  return row.id;
}

/** What a run row needs besides its suite. */
export interface NewRun {
  id?: string;
  suiteId: number;
  commitHash: string;
  branch: string | null;
  dirty: boolean;
  commitSubject: string | null;
  commitAuthor: string | null;
  commitDate: Date | null;
  machine: Record<string, unknown>;
  machineKey: string;
  calibrationSeconds: number | null;
  solverLabel?: string | null;
  externalRepo?: string | null;
  jobId?: number | null;
  startedAt?: Date;
  /** Default "running"; an upload arrives finished. */
  status?: RunStatus;
  finishedAt?: Date | null;
}

/** Inserts the run row and returns its id. */
export function insertRun(db: Tx, run: NewRun): string {
  const id = run.id ?? crypto.randomUUID();
  db.insert(runs)
    .values({
      id,
      suiteId: run.suiteId,
      commitHash: run.commitHash,
      branch: run.branch,
      dirty: run.dirty,
      commitSubject: run.commitSubject,
      commitAuthor: run.commitAuthor,
      commitDate: run.commitDate,
      machineJson: run.machine,
      machineKey: run.machineKey,
      startedAt: run.startedAt ?? new Date(),
      finishedAt: run.finishedAt ?? null,
      status: run.status ?? "running",
      calibrationSeconds: run.calibrationSeconds,
      solverLabel: run.solverLabel ?? null,
      externalRepo: run.externalRepo ?? null,
      jobId: run.jobId ?? null,
    })
    .run();
  return id;
}

/** The problem a case solved, as the problems and problem_versions tables keep it. */
export interface ProblemRecord {
  id: string;
  title: string;
  description: string;
  tags: string[];
  /** The problem.json text of this version. */
  json: string;
  versionHash: string;
}

function ensureProblem(tx: Tx, p: ProblemRecord | null, problemId: string): void {
  tx.insert(problems)
    .values({ id: problemId, title: p?.title ?? problemId, description: p?.description ?? "", tagsJson: p?.tags ?? [] })
    .onConflictDoNothing()
    .run();
  if (p && p.versionHash !== UNKNOWN_VERSION) tx.insert(problemVersions).values({ problemId, contentHash: p.versionHash, json: p.json }).onConflictDoNothing().run();
}

function insertCaseRow(tx: Tx, runId: string, c: CaseRecord): number {
  const row = tx
    .insert(caseResults)
    .values({
      runId,
      problemId: c.problemId,
      problemVersionHash: c.problemVersionHash,
      caseKey: c.caseKey,
      scheme: c.scheme,
      intervals: c.intervals,
      degree: c.degree,
      status: c.status,
      ...caseNumbers(c),
      sampleCount: c.samples.length,
      arcsJson: toPlain(c.arcs ?? null),
      trajectoryJson: toPlain(c.trajectory ?? null),
      iterationLogJson: toPlain(c.iterationLog ?? null),
      message: c.message,
      meshErrorMax: c.mesh?.errorMax ?? null,
      meshErrorJson: c.mesh?.estimate ?? null,
      meshPoints: c.mesh?.points ?? null,
      meshTolerance: c.mesh?.tolerance ?? null,
      meshPasses: c.mesh?.passes ?? null,
      meshToleranceMet: c.mesh?.met ?? null,
      refinementJson: c.mesh?.refinement ?? null,
    })
    .returning({ id: caseResults.id })
    .get();
  if (c.samples.length > 0) tx.insert(timingSamples).values({ caseResultId: row.id, samplesJson: c.samples }).run();
  return row.id;
}

/**
 * Writes one finished case (its problem and problem version when new, the case row, its samples)
 * in one transaction; returns the case_results id. `problem` null: the problem is not known beyond
 * its id (it did not load), so only a problems row with the id as title is ensured.
 */
export function insertCase(db: Db, runId: string, record: CaseRecord, problem: ProblemRecord | null): number {
  return db.transaction((tx) => {
    ensureProblem(tx, problem ? { ...problem, versionHash: record.problemVersionHash } : null, record.problemId);
    return insertCaseRow(tx, runId, record);
  });
}

/** Marks a run finished (status, finish time), merging `machinePatch` into its machine record. */
export function finishRun(db: Db, runId: string, status: RunStatus, machinePatch?: Record<string, unknown>): void {
  db.transaction((tx) => {
    if (machinePatch) {
      const row = tx.select({ m: runs.machineJson }).from(runs).where(eq(runs.id, runId)).get();
      const merged = { ...((row?.m as Record<string, unknown>) ?? {}), ...machinePatch };
      tx.update(runs).set({ machineJson: merged }).where(eq(runs.id, runId)).run();
    }
    tx.update(runs).set({ status, finishedAt: new Date() }).where(eq(runs.id, runId)).run();
  });
}

/**
 * The problems (and versions) and cases of a payload, written into run `runId` inside the
 * caller's transaction: the part of `storeRunPayload` a sharded run's shards share
 * (app/models/run-groups.server.ts).
 */
export function storePayloadCases(tx: Tx, runId: string, p: Pick<RunPayload, "problems" | "cases">): void {
  for (const pr of p.problems) ensureProblem(tx, pr, pr.id);
  for (const c of p.cases) {
    ensureProblem(tx, null, c.problemId);
    insertCaseRow(tx, runId, c);
  }
}

/**
 * Stores a whole uploaded payload in one transaction with the same writes as a command-line run:
 * the suite (its content hash re-computed and checked), the problems and versions, the run (same
 * id; a second upload of one id is refused) and its cases with their samples.
 */
export function storeRunPayload(db: Db, input: unknown, options: { jobId?: number | null } = {}): { runId: string } {
  const parsed = runPayloadSchema.safeParse(input);
  if (!parsed.success) {
    throw new Error(`invalid run payload: ${parsed.error.issues.slice(0, 10).map((i) => `${i.path.join(".") || "(root)"}: ${i.message}`).join("; ")}`);
  }
  const p = parsed.data;
  const hash = sha256(canonicalJson(p.suite.definition));
  if (hash !== p.suite.contentHash) throw new Error(`invalid run payload: suite.contentHash ${p.suite.contentHash} does not match its definition (${hash})`);
  return db.transaction((tx) => {
    if (tx.select({ id: runs.id }).from(runs).where(eq(runs.id, p.run.id)).get()) throw new Error(`run ${p.run.id} was already uploaded`);
    const suiteId = ensureSuite(tx, { name: p.suite.name, contentHash: p.suite.contentHash, definition: p.suite.definition, thresholds: p.suite.thresholds });
    storePayloadCases(tx, "", { problems: p.problems, cases: [] });
    const r = p.run;
    insertRun(tx, {
      id: r.id,
      suiteId,
      commitHash: r.commitHash,
      branch: r.branch,
      dirty: r.dirty,
      commitSubject: r.commitSubject,
      commitAuthor: r.commitAuthor,
      commitDate: r.commitDate ? new Date(r.commitDate) : null,
      machine: r.machine,
      machineKey: r.machineKey,
      startedAt: new Date(r.startedAt),
      finishedAt: r.finishedAt ? new Date(r.finishedAt) : null,
      status: r.status,
      calibrationSeconds: r.calibrationSeconds,
      solverLabel: r.solverLabel,
      externalRepo: r.externalRepo,
      jobId: options.jobId ?? null,
    });
    storePayloadCases(tx, r.id, { problems: [], cases: p.cases });
    return { runId: r.id };
  });
}

const iso = (d: Date | null | undefined) => (d ? d.toISOString() : null);

/** Reads a recorded run back into an upload payload. */
export function buildRunPayload(db: Db, runId: string): RunPayload {
  const row = db.select({ run: runs, suite: suites }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(eq(runs.id, runId)).get();
  if (!row) throw new Error(`run ${runId} not found`);
  const { run, suite } = row;
  if (run.status === "running") throw new Error(`run ${runId} is still running`);
  const cases = db.select({ c: caseResults, samples: timingSamples.samplesJson }).from(caseResults).leftJoin(timingSamples, eq(timingSamples.caseResultId, caseResults.id)).where(eq(caseResults.runId, runId)).all();
  const versionHashes = [...new Set(cases.map((c) => c.c.problemVersionHash))];
  const versions = versionHashes.length
    ? db.select({ v: problemVersions, p: problems }).from(problemVersions).innerJoin(problems, eq(problems.id, problemVersions.problemId)).where(inArray(problemVersions.contentHash, versionHashes)).all()
    : [];
  return {
    format: PAYLOAD_FORMAT,
    run: {
      id: run.id,
      commitHash: run.commitHash,
      branch: run.branch,
      dirty: run.dirty,
      commitSubject: run.commitSubject,
      commitAuthor: run.commitAuthor,
      commitDate: iso(run.commitDate),
      machine: (run.machineJson ?? {}) as Record<string, unknown>,
      machineKey: run.machineKey,
      calibrationSeconds: run.calibrationSeconds,
      startedAt: run.startedAt.toISOString(),
      finishedAt: iso(run.finishedAt),
      status: run.status as "complete" | "interrupted" | "failed",
      solverLabel: run.solverLabel,
      externalRepo: run.externalRepo,
    },
    suite: { name: suite.name, contentHash: suite.contentHash, definition: suite.definitionJson as RunPayload["suite"]["definition"], thresholds: (suite.thresholdsJson ?? null) as Record<string, unknown> | null },
    problems: versions.map(({ v, p }) => ({ id: p.id, title: p.title, description: p.description, tags: p.tagsJson, versionHash: v.contentHash, json: v.json })),
    cases: cases.map(({ c, samples }) => ({
      caseKey: c.caseKey,
      problemId: c.problemId,
      problemVersionHash: c.problemVersionHash,
      scheme: c.scheme,
      intervals: c.intervals,
      degree: c.degree,
      status: c.status,
      ...caseNumbers(c),
      samples: samples ?? [],
      arcs: c.arcsJson ?? undefined,
      trajectory: c.trajectoryJson ?? undefined,
      iterationLog: c.iterationLogJson ?? undefined,
      message: c.message,
      mesh: {
        errorMax: c.meshErrorMax,
        estimate: toPlain(parseMeshEstimate(c.meshErrorJson)) as { method: string; t: number[]; error: (number | null)[] } | null,
        points: c.meshPoints,
        tolerance: c.meshTolerance,
        passes: c.meshPasses,
        met: c.meshToleranceMet,
        refinement: parsePasses(c.refinementJson),
      },
    })),
  };
}
