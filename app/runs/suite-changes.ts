/**
 * Suite changes made in the browser, applied on top of a suite file (pure; the rows live in the
 * `suite_changes` table, app/models/suite-changes.server.ts). A change adds a problem to a suite or
 * takes it out again. The file stays as committed; the effective definition is the file's with
 * the changes applied in version order, and its content hash (app/runs/suite.ts) is that of the
 * effective definition, so a run records exactly which problems it was asked for.
 *
 * Also here: which suites include a problem and why, and the small suite "Run it now" queues
 * for one problem.
 */
import { SCHEMES } from "../engine/schemes/ids";
import { canonicalJson, DEFAULT_THRESHOLDS, sha256, SUITE_FORMAT, type LoadedSuite, type SuiteFile } from "./suite";

export const SUITE_CHANGE_ACTIONS = ["add", "remove"] as const;
export type SuiteChangeAction = (typeof SUITE_CHANGE_ACTIONS)[number];

export interface SuiteChange {
  /** 1, 2, … per suite name, in the order the changes were made. */
  version: number;
  action: SuiteChangeAction;
  problemId: string;
  /** Who made it (display name or e-mail) and when (ms since the epoch). */
  by: string;
  at: number;
  note: string;
}

/**
 * The file's definition with the changes applied in version order: "add" appends the id to
 * `problems` (unless listed by id already) and drops an earlier "remove" of it; "remove" drops an
 * earlier "add" and, when the file itself selects the problem (by id, tag or all), adds an
 * `exclude` entry for it. The last change of a problem wins.
 */
export function applySuiteChanges(def: SuiteFile, changes: readonly SuiteChange[]): SuiteFile {
  if (changes.length === 0) return def;
  const last = new Map<string, SuiteChangeAction>();
  for (const c of [...changes].sort((a, b) => a.version - b.version)) last.set(c.problemId, c.action);
  const problems = [...def.problems];
  const exclude = [...def.exclude];
  for (const [id, action] of last) {
    if (action === "add") {
      if (!problems.includes(id)) problems.push(id);
      // an added problem the file leaves out as a whole runs all the same
      for (let i = exclude.length - 1; i >= 0; i--) {
        const e = exclude[i]!;
        if (e.problem === id && e.scheme === undefined && e.intervals === undefined) exclude.splice(i, 1);
      }
    } else {
      exclude.push({ problem: id });
    }
  }
  return { ...def, problems, exclude };
}

/** A loaded suite with changes applied: definition, thresholds and content hash follow. */
export function withSuiteChanges(suite: LoadedSuite, changes: readonly SuiteChange[]): LoadedSuite & { changes: SuiteChange[] } {
  const relevant = changes.filter((c) => c.problemId.length > 0);
  if (relevant.length === 0) return { ...suite, changes: [] };
  const definition = applySuiteChanges(suite.definition, relevant);
  return { ...suite, definition, thresholds: { ...DEFAULT_THRESHOLDS, ...definition.thresholds }, contentHash: sha256(canonicalJson(definition)), changes: [...relevant] };
}

/** Why a suite runs a problem, or why not. */
export type Membership =
  | { included: true; via: "id" | "tag" | "all" | "change"; tag?: string; change?: SuiteChange }
  | { included: false; via: "not-selected" | "excluded" | "removed"; change?: SuiteChange };

/**
 * Whether the suite (file definition plus changes) runs `problemId` with these tags, and why:
 * listed by id in the file, selected by a tag or by "all", added in the browser; or not selected,
 * excluded by the file, removed in the browser. An exclusion restricted to a scheme or a mesh
 * leaves the problem included (some of its cases still run).
 */
export function suiteMembership(fileDef: SuiteFile, changes: readonly SuiteChange[], problemId: string, tags: readonly string[]): Membership {
  const own = [...changes].filter((c) => c.problemId === problemId).sort((a, b) => a.version - b.version);
  const lastChange = own[own.length - 1];
  if (lastChange?.action === "remove") return { included: false, via: "removed", change: lastChange };
  const fileExcludes = fileDef.exclude.some((e) => e.problem === problemId && e.scheme === undefined && e.intervals === undefined);
  if (fileExcludes) return lastChange?.action === "add" ? { included: true, via: "change", change: lastChange } : { included: false, via: "excluded" };
  if (fileDef.problems.some((p) => p === problemId)) return { included: true, via: "id" };
  for (const p of fileDef.problems) {
    if (typeof p === "object" && "all" in p) return { included: true, via: "all" };
    if (typeof p === "object" && "tag" in p && tags.includes(p.tag)) return { included: true, via: "tag", tag: p.tag };
  }
  if (lastChange?.action === "add") return { included: true, via: "change", change: lastChange };
  return { included: false, via: "not-selected" };
}

/** Name of the one-problem suite "Run it now" queues (runs of one problem are grouped by it). */
export function problemSuiteName(problemId: string): string {
  const slug = problemId.toLowerCase().replace(/[^a-z0-9-]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 55) || "problem";
  return `problem-${slug}`;
}

/** Coarsest meshes that still give two levels per scheme (common practice, no source). */
export const PROBLEM_CHECK_MESHES = { local: [10, 20], lgr: [4, 8], lgrDegree: 4 } as const;

/**
 * "Run it now": one problem, every scheme, two meshes each (the coarsest that still show how the
 * error falls), three timed repeats; wall clock, one case at a time.
 */
export function problemCheckSuite(problemId: string): SuiteFile {
  const local = SCHEMES.filter((s) => s !== "lgr");
  return {
    format: SUITE_FORMAT,
    name: problemSuiteName(problemId),
    description: `Run from the problem page: ${problemId}, every scheme on two coarse meshes.`,
    problems: [problemId],
    schemes: [...SCHEMES],
    meshes: [
      ...PROBLEM_CHECK_MESHES.local.map((n) => ({ intervals: n, schemes: [...local] })),
      ...PROBLEM_CHECK_MESHES.lgr.map((n) => ({ intervals: n, degree: PROBLEM_CHECK_MESHES.lgrDegree, schemes: ["lgr" as const] })),
    ],
    exclude: [],
    repeats: 3,
    warmup: 1,
    timeBudgetSeconds: 60,
    jobs: 1,
    clock: "wall",
    solver: { kind: "builtin" },
    thresholds: {},
  };
}
