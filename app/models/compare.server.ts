/**
 * Scheme comparison for one problem or the whole library at one commit: convergence (error
 * against intervals, fitted order beside the theoretical one), work–precision (error against
 * solve time), performance profiles for time and accuracy (Dolan & Moré 2002) and the cheapest
 * scheme + mesh meeting a tolerance, per problem.
 *
 * Cost definitions for the profiles (problems p, schemes s):
 * - time: t_{p,s} = median solve seconds of the cheapest case of s on p whose error is ≤ tol;
 *   no such case (not solved, or never accurate enough) is a failure (r_{p,s} = r_M);
 * - accuracy: t_{p,s} = the smallest error of s's solved cases on p (floored at 1e-16 so that an
 *   exact answer stays a positive cost); no solved case is a failure.
 */
import { and, desc, eq, inArray, isNull, like } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, problems, runs, suites } from "~/db/schema";
import { getScheme } from "~/engine/schemes/index";
import { performanceProfile, type PerformanceProfile } from "~/engine/stats/performance-profile";
import { convergenceVerdict, solverErrorFromMessage, type ConvergenceVerdict } from "~/engine/analysis/convergence-verdict";
import { isSolved } from "~/runs/types";
import { SCHEMES } from "./problems.server";

export const ERROR_METRICS = ["objective", "state"] as const;
export type ErrorMetric = (typeof ERROR_METRICS)[number];

/**
 * Errors below this are round-off, not discretisation error (a scheme exact for the problem):
 * left out of the order fit (common practice, no source).
 */
export const FIT_NOISE_FLOOR = 1e-13;

/** Smallest accuracy cost (an exact answer stays a positive, finite cost). */
export const ACCURACY_FLOOR = 1e-16;

export interface ComparePoint {
  caseId: number;
  /** The run that measured this case, and the suite it ran in. */
  runId: string;
  suite: string;
  problemId: string;
  scheme: string;
  intervals: number;
  degree: number | null;
  solved: boolean;
  error: number | null;
  seconds: number | null;
  /**
   * The solver's own error estimate in the units of `error` (objective metric: duality gap ÷
   * |objective|, read from the case message); null when unknown or for the state metric.
   */
  solverError?: number | null;
}

export interface SchemeConvergence {
  scheme: string;
  theoreticalOrder: number | null;
  /** Order fitted over the meshes the verdict allows (null: none, see verdict). */
  fittedOrder: number | null;
  fitConstant: number | null;
  /** Is the error sequence monotone, pre-asymptotic, … (convergence-verdict.ts); single problem only. */
  verdict: ConvergenceVerdict | null;
  points: { intervals: number; error: number }[];
}

export interface CheapestRow {
  problemId: string;
  scheme: string | null;
  intervals: number | null;
  degree: number | null;
  error: number | null;
  seconds: number | null;
  caseId: number | null;
}

export interface ProfileView {
  schemes: string[];
  problems: string[];
  profile: PerformanceProfile | null;
}

export interface ProblemOrders {
  problemId: string;
  /** Fitted order per scheme (null: fewer than two meshes above the noise floor). */
  orders: Record<string, number | null>;
  /** Verdict per scheme (null: no solved mesh); its note is shown beside the order. */
  verdicts: Record<string, ConvergenceVerdict | null>;
}

/**
 * Timings are comparable only within one suite run with one repeat setting (repeats, warm-up):
 * the runs of a commit are grouped by that key, and one group is shown at a time.
 */
export interface TimingSource {
  /** `suite:r<repeats>:w<warmup>`, the value of the `suite` query parameter. */
  key: string;
  suite: string;
  repeats: number | null;
  warmup: number | null;
  runs: { id: string; startedAt: number; isDemo: boolean; cases: number }[];
  /** Cases of the selection (problem filter applied) measured by these runs. */
  cases: number;
}

/** A suite whose latest definition runs the problem on several meshes of one scheme. */
export interface SuiteWithMeshes {
  suite: string;
  meshesPerScheme: number;
}

export interface CompareView {
  commit: string | null;
  commitSubject: string | null;
  runIds: string[];
  /** Every group of runs at this commit; `source` is the one the views are built from. */
  sources: TimingSource[];
  source: string | null;
  /** Largest number of distinct meshes of one scheme on one problem in the selection. */
  maxMeshesPerScheme: number;
  points: ComparePoint[];
  convergence: SchemeConvergence[];
  /** Fitted order per problem and scheme (every problem of the selection). */
  ordersByProblem: ProblemOrders[];
  cheapest: CheapestRow[];
  timeProfile: ProfileView;
  accuracyProfile: ProfileView;
}

export interface CompareQuery {
  problem: string | null;
  /** Timing source key (see TimingSource); null: the group with the most cases. */
  suite: string | null;
  a: string | null;
  b: string | null;
  tol: number;
  metric: ErrorMetric;
}

export function parseCompareQuery(params: URLSearchParams): CompareQuery {
  const tol = Number(params.get("tol") ?? "1e-4");
  const metric = params.get("metric") === "state" ? "state" : "objective";
  const clean = (v: string | null) => (v && /^[0-9a-f]{4,40}$/i.test(v.trim()) ? v.trim().toLowerCase() : null);
  const problem = params.get("problem");
  const suite = params.get("suite");
  return { problem: problem && /^[A-Za-z0-9][A-Za-z0-9_.-]{0,127}$/.test(problem) ? problem : null, suite: suite && /^[A-Za-z0-9_.-]{1,128}:r\d*:w\d*$/.test(suite) ? suite : null, a: clean(params.get("a")), b: clean(params.get("b")), tol: Number.isFinite(tol) && tol > 0 ? tol : 1e-4, metric };
}

export interface CommitOption {
  commitHash: string;
  subject: string | null;
  branch: string | null;
  startedAt: number;
}

/** Commits with runs, newest first (one entry per commit). */
export function listComparableCommits(db: Db, limit = 50): CommitOption[] {
  const rows = db.select({ c: runs.commitHash, s: runs.commitSubject, b: runs.branch, at: runs.startedAt }).from(runs).orderBy(desc(runs.startedAt)).limit(500).all();
  const seen = new Set<string>();
  const out: CommitOption[] = [];
  for (const r of rows) {
    if (seen.has(r.c)) continue;
    seen.add(r.c);
    out.push({ commitHash: r.c, subject: r.s, branch: r.b, startedAt: new Date(r.at).getTime() });
    if (out.length >= limit) break;
  }
  return out;
}

/** Resolves a commit prefix to the full hash of a commit with runs (newest match); null → latest run on main. */
function resolveCommit(db: Db, prefix: string | null): { hash: string; subject: string | null } | null {
  const q = db.select({ c: runs.commitHash, s: runs.commitSubject }).from(runs);
  const row = prefix ? q.where(like(runs.commitHash, `${prefix}%`)).orderBy(desc(runs.startedAt)).get() : q.where(eq(runs.branch, "main")).orderBy(desc(runs.startedAt)).get() ?? db.select({ c: runs.commitHash, s: runs.commitSubject }).from(runs).orderBy(desc(runs.startedAt)).get();
  return row ? { hash: row.c, subject: row.s } : null;
}

const theoretical = (scheme: string): number | null => {
  try {
    const o = getScheme(scheme).order;
    return Number.isFinite(o) ? o : null;
  } catch {
    return null;
  }
};

export const sourceKey = (suite: string, repeats: number | null, warmup: number | null) => `${suite}:r${repeats ?? ""}:w${warmup ?? ""}`;

const num = (v: unknown): number | null => (typeof v === "number" && Number.isFinite(v) ? v : null);

/**
 * Cases of the runs of a commit, grouped by timing source (suite and repeat setting). Within the
 * chosen group a case key measured by several runs keeps the newest; other groups are only
 * listed, never merged (their timings were taken under other settings).
 */
function casesAt(db: Db, commit: string, problem: string | null, wanted: string | null): { points: (ComparePoint & { stateError: number | null })[]; runIds: string[]; sources: TimingSource[]; source: string | null } {
  const runRows = db
    .select({ id: runs.id, startedAt: runs.startedAt, isDemo: runs.isDemo, suite: suites.name, def: suites.definitionJson })
    .from(runs)
    .innerJoin(suites, eq(suites.id, runs.suiteId))
    .where(eq(runs.commitHash, commit))
    .orderBy(desc(runs.startedAt))
    .all();
  const runIds = runRows.map((r) => r.id);
  if (runIds.length === 0) return { points: [], runIds, sources: [], source: null };
  const order = new Map(runIds.map((id, i) => [id, i]));
  const keyOfRun = new Map<string, string>();
  const sourceMap = new Map<string, TimingSource>();
  for (const r of runRows) {
    const d = (r.def ?? {}) as { repeats?: unknown; warmup?: unknown };
    const repeats = num(d.repeats);
    const warmup = num(d.warmup);
    const key = sourceKey(r.suite, repeats, warmup);
    keyOfRun.set(r.id, key);
    if (!sourceMap.has(key)) sourceMap.set(key, { key, suite: r.suite, repeats, warmup, runs: [], cases: 0 });
    sourceMap.get(key)!.runs.push({ id: r.id, startedAt: r.startedAt.getTime(), isDemo: r.isDemo, cases: 0 });
  }
  const rows = db
    .select({
      id: caseResults.id,
      runId: caseResults.runId,
      key: caseResults.caseKey,
      problemId: caseResults.problemId,
      scheme: caseResults.scheme,
      intervals: caseResults.intervals,
      degree: caseResults.degree,
      status: caseResults.status,
      objErr: caseResults.objectiveErrorRel,
      stateErr: caseResults.stateError,
      med: caseResults.medianSeconds,
      objective: caseResults.objective,
      message: caseResults.message,
    })
    .from(caseResults)
    // uniform meshes only: a refined case's intervals are its first mesh's, not the one its error belongs to
    // (refined cases have their own panel, app/models/refinement-cost.server.ts)
    .where(and(inArray(caseResults.runId, runIds), isNull(caseResults.meshTolerance), ...(problem ? [eq(caseResults.problemId, problem)] : [])))
    .all();
  for (const r of rows) {
    const src = sourceMap.get(keyOfRun.get(r.runId)!)!;
    src.cases++;
    src.runs.find((x) => x.id === r.runId)!.cases++;
  }
  const sources = [...sourceMap.values()];
  const withCases = sources.filter((x) => x.cases > 0);
  // Default: the group with the most cases; ties go to the newest run (sources are in run order).
  const source = wanted && sourceMap.get(wanted)?.cases ? wanted : (withCases.reduce<TimingSource | null>((best, x) => (!best || x.cases > best.cases ? x : best), null)?.key ?? null);
  const byKey = new Map<string, (typeof rows)[number]>();
  for (const r of rows) {
    if (keyOfRun.get(r.runId) !== source) continue;
    const cur = byKey.get(r.key);
    if (!cur || order.get(r.runId)! < order.get(cur.runId)!) byKey.set(r.key, r);
  }
  const suiteOf = (runId: string) => sourceMap.get(keyOfRun.get(runId)!)!.suite;
  return {
    runIds,
    sources,
    source,
    points: [...byKey.values()]
      .map((r) => ({ caseId: r.id, runId: r.runId, suite: suiteOf(r.runId), problemId: r.problemId, scheme: r.scheme, intervals: r.intervals, degree: r.degree, solved: isSolved(r.status), error: r.objErr, stateError: r.stateErr, seconds: r.med, solverError: solverErrorRel(r.message, r.objective) }))
      .sort((x, y) => x.problemId.localeCompare(y.problemId) || x.scheme.localeCompare(y.scheme) || x.intervals - y.intervals),
  };
}

/** Duality gap in the message ÷ |objective|: the solver's share in the relative objective error's units. */
function solverErrorRel(message: string | null, objective: number | null): number | null {
  const gap = solverErrorFromMessage(message);
  return gap === null || objective === null || !(Math.abs(objective) > 0) ? null : gap / Math.abs(objective);
}

/** Distinct meshes per (problem, scheme), the largest count over the selection. */
export function maxMeshesPerScheme(points: Pick<ComparePoint, "problemId" | "scheme" | "intervals" | "degree">[]): number {
  const m = new Map<string, Set<string>>();
  for (const p of points) {
    const k = `${p.problemId}\u0000${p.scheme}`;
    if (!m.has(k)) m.set(k, new Set());
    m.get(k)!.add(`${p.intervals}x${p.degree ?? ""}`);
  }
  return Math.max(0, ...[...m.values()].map((s) => s.size));
}

/**
 * Suites (latest stored definition of each name) that select the problem and run some scheme on
 * at least two meshes, most meshes first: the ones that let an order be fitted.
 */
export function suitesWithSeveralMeshes(db: Db, problemId: string): SuiteWithMeshes[] {
  const tags = db.select({ t: problems.tagsJson }).from(problems).where(eq(problems.id, problemId)).get()?.t ?? [];
  const latest = new Map<string, unknown>();
  for (const r of db.select({ name: suites.name, def: suites.definitionJson }).from(suites).orderBy(desc(suites.createdAt), desc(suites.id)).all()) if (!latest.has(r.name)) latest.set(r.name, r.def);
  const out: SuiteWithMeshes[] = [];
  for (const [name, def] of latest) {
    const d = (def ?? {}) as { problems?: unknown[]; schemes?: string[]; meshes?: { schemes?: string[] }[] };
    const selects = (d.problems ?? []).some((p) => p === problemId || (typeof p === "object" && p !== null && tags.includes(String((p as { tag?: unknown }).tag))));
    if (!selects) continue;
    const schemes = d.schemes ?? [];
    const per = Math.max(0, ...schemes.map((s) => (d.meshes ?? []).filter((m) => !m.schemes || m.schemes.includes(s)).length));
    if (per >= 2) out.push({ suite: name, meshesPerScheme: per });
  }
  return out.sort((a, b) => b.meshesPerScheme - a.meshesPerScheme || a.suite.localeCompare(b.suite));
}

/**
 * The verdict on one problem × scheme's solved points (errors below the noise floor left out, as
 * in the order fit); null without a solved point.
 */
function verdictOf(pts: Pick<ComparePoint, "intervals" | "error" | "solverError">[]): ConvergenceVerdict | null {
  const use = pts.filter((p) => p.error !== null && p.error > 0);
  if (use.length === 0) return null;
  return convergenceVerdict(use.map((p) => ({ intervals: p.intervals, error: p.error!, solverError: p.solverError ?? null })), FIT_NOISE_FLOOR);
}

/** Builds every view of the comparison from a set of cases (exported for tests). */
export function buildViews(points: Omit<ComparePoint, "runId" | "suite">[], tol: number): Omit<CompareView, "commit" | "commitSubject" | "runIds" | "points" | "sources" | "source" | "maxMeshesPerScheme"> {
  const schemes = SCHEMES.filter((s) => points.some((p) => p.scheme === s));
  const problems = [...new Set(points.map((p) => p.problemId))].sort();
  type P = (typeof points)[number];
  const ok = (p: P) => p.solved && p.error !== null && Number.isFinite(p.error);
  const convergence: SchemeConvergence[] = schemes.map((s) => {
    const pts = points.filter((p) => p.scheme === s && ok(p) && p.error! > 0).map((p) => ({ intervals: p.intervals, error: p.error! }));
    const verdict = problems.length === 1 ? verdictOf(points.filter((p) => p.scheme === s && ok(p))) : null;
    return { scheme: s, theoreticalOrder: theoretical(s), fittedOrder: verdict?.order ?? null, fitConstant: verdict?.constant ?? null, verdict, points: pts };
  });
  const ordersByProblem: ProblemOrders[] = problems.map((pid) => {
    const verdicts = Object.fromEntries(schemes.map((s) => [s, verdictOf(points.filter((p) => p.problemId === pid && p.scheme === s && ok(p)))]));
    return { problemId: pid, orders: Object.fromEntries(schemes.map((s) => [s, verdicts[s]?.order ?? null])), verdicts };
  });
  const cheapest: CheapestRow[] = problems.map((pid) => {
    let best: P | null = null;
    for (const p of points) {
      if (p.problemId !== pid || !ok(p) || p.error! > tol || p.seconds === null) continue;
      if (!best || p.seconds < best.seconds!) best = p;
    }
    return best
      ? { problemId: pid, scheme: best.scheme, intervals: best.intervals, degree: best.degree, error: best.error, seconds: best.seconds, caseId: best.caseId }
      : { problemId: pid, scheme: null, intervals: null, degree: null, error: null, seconds: null, caseId: null };
  });
  const timeCost = problems.map((pid) =>
    schemes.map((s) => {
      let c: number | null = null;
      for (const p of points) if (p.problemId === pid && p.scheme === s && ok(p) && p.error! <= tol && p.seconds !== null && p.seconds > 0 && (c === null || p.seconds < c)) c = p.seconds;
      return c;
    }),
  );
  const accCost = problems.map((pid) =>
    schemes.map((s) => {
      let c: number | null = null;
      for (const p of points) if (p.problemId === pid && p.scheme === s && ok(p)) c = Math.min(c ?? Infinity, Math.max(ACCURACY_FLOOR, p.error!));
      return c;
    }),
  );
  const profile = (cost: (number | null)[][]) => (problems.length && schemes.length ? performanceProfile(cost) : null);
  return {
    convergence,
    ordersByProblem,
    cheapest,
    timeProfile: { schemes, problems, profile: profile(timeCost) },
    accuracyProfile: { schemes, problems, profile: profile(accCost) },
  };
}

export function compareAt(db: Db, commitPrefix: string | null, q: Pick<CompareQuery, "problem" | "tol" | "metric" | "suite">): CompareView {
  const c = resolveCommit(db, commitPrefix);
  if (!c) return { commit: null, commitSubject: null, runIds: [], sources: [], source: null, maxMeshesPerScheme: 0, points: [], ...buildViews([], q.tol) };
  const { points: raw, runIds, sources, source } = casesAt(db, c.hash, q.problem, q.suite);
  const points: ComparePoint[] = raw.map(({ stateError, ...p }) => ({ ...p, error: q.metric === "state" ? stateError : p.error, solverError: q.metric === "state" ? null : p.solverError }));
  return { commit: c.hash, commitSubject: c.subject, runIds, sources, source, maxMeshesPerScheme: maxMeshesPerScheme(points), points, ...buildViews(points, q.tol) };
}

export interface CompareResult {
  query: CompareQuery;
  a: CompareView;
  b: CompareView | null;
  /** For one problem measured on one mesh per scheme: suites that would let an order be fitted. */
  suitesWithMeshes: SuiteWithMeshes[];
}

/**
 * Both views read the same timing source: the one asked for, else view a's default; view b
 * falls back to its own default only when it has no runs of that source (the page says so).
 */
export function compare(db: Db, q: CompareQuery): CompareResult {
  const a = compareAt(db, q.a, q);
  const b = q.b ? compareAt(db, q.b, { ...q, suite: q.suite ?? a.source }) : null;
  const suitesWithMeshes = q.problem && a.points.length > 0 && a.maxMeshesPerScheme < 2 ? suitesWithSeveralMeshes(db, q.problem) : [];
  return { query: q, a, b, suitesWithMeshes };
}
