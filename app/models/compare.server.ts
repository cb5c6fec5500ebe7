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
import { and, desc, eq, inArray, like } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, runs } from "~/db/schema";
import { getScheme } from "~/engine/schemes/index";
import { performanceProfile, type PerformanceProfile } from "~/engine/stats/performance-profile";
import { fitConvergenceOrder } from "~/engine/analysis/convergence-order";
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
  problemId: string;
  scheme: string;
  intervals: number;
  degree: number | null;
  solved: boolean;
  error: number | null;
  seconds: number | null;
}

export interface SchemeConvergence {
  scheme: string;
  theoreticalOrder: number | null;
  fittedOrder: number | null;
  fitConstant: number | null;
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
}

export interface CompareView {
  commit: string | null;
  commitSubject: string | null;
  runIds: string[];
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
  return { problem: problem && /^[A-Za-z0-9][A-Za-z0-9_.-]{0,127}$/.test(problem) ? problem : null, a: clean(params.get("a")), b: clean(params.get("b")), tol: Number.isFinite(tol) && tol > 0 ? tol : 1e-4, metric };
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

/** Cases of every run of a commit; a case key measured by several runs keeps the newest. */
function casesAt(db: Db, commit: string, problem: string | null): { points: (ComparePoint & { stateError: number | null })[]; runIds: string[] } {
  const runRows = db.select({ id: runs.id }).from(runs).where(eq(runs.commitHash, commit)).orderBy(desc(runs.startedAt)).all();
  const runIds = runRows.map((r) => r.id);
  if (runIds.length === 0) return { points: [], runIds };
  const order = new Map(runIds.map((id, i) => [id, i]));
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
    })
    .from(caseResults)
    .where(problem ? and(inArray(caseResults.runId, runIds), eq(caseResults.problemId, problem)) : inArray(caseResults.runId, runIds))
    .all();
  const byKey = new Map<string, (typeof rows)[number]>();
  for (const r of rows) {
    const cur = byKey.get(r.key);
    if (!cur || order.get(r.runId)! < order.get(cur.runId)!) byKey.set(r.key, r);
  }
  return {
    runIds,
    points: [...byKey.values()]
      .map((r) => ({ caseId: r.id, problemId: r.problemId, scheme: r.scheme, intervals: r.intervals, degree: r.degree, solved: isSolved(r.status), error: r.objErr, stateError: r.stateErr, seconds: r.med }))
      .sort((x, y) => x.problemId.localeCompare(y.problemId) || x.scheme.localeCompare(y.scheme) || x.intervals - y.intervals),
  };
}

/** Builds every view of the comparison from a set of cases (exported for tests). */
export function buildViews(points: ComparePoint[], tol: number): Omit<CompareView, "commit" | "commitSubject" | "runIds" | "points"> {
  const schemes = SCHEMES.filter((s) => points.some((p) => p.scheme === s));
  const problems = [...new Set(points.map((p) => p.problemId))].sort();
  const ok = (p: ComparePoint) => p.solved && p.error !== null && Number.isFinite(p.error);
  const convergence: SchemeConvergence[] = schemes.map((s) => {
    const pts = points.filter((p) => p.scheme === s && ok(p) && p.error! > 0).map((p) => ({ intervals: p.intervals, error: p.error! }));
    const fitPts = pts.filter((p) => p.error >= FIT_NOISE_FLOOR);
    const fit = problems.length === 1 ? fitConvergenceOrder(fitPts.map((p) => p.intervals), fitPts.map((p) => p.error)) : null;
    return { scheme: s, theoreticalOrder: theoretical(s), fittedOrder: fit?.order ?? null, fitConstant: fit?.constant ?? null, points: pts };
  });
  const ordersByProblem: ProblemOrders[] = problems.map((pid) => ({
    problemId: pid,
    orders: Object.fromEntries(
      schemes.map((s) => {
        const pts = points.filter((p) => p.problemId === pid && p.scheme === s && ok(p) && p.error! >= FIT_NOISE_FLOOR);
        return [s, fitConvergenceOrder(pts.map((p) => p.intervals), pts.map((p) => p.error!))?.order ?? null];
      }),
    ),
  }));
  const cheapest: CheapestRow[] = problems.map((pid) => {
    let best: ComparePoint | null = null;
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

export function compareAt(db: Db, commitPrefix: string | null, q: Pick<CompareQuery, "problem" | "tol" | "metric">): CompareView {
  const c = resolveCommit(db, commitPrefix);
  if (!c) return { commit: null, commitSubject: null, runIds: [], points: [], ...buildViews([], q.tol) };
  const { points: raw, runIds } = casesAt(db, c.hash, q.problem);
  const points: ComparePoint[] = raw.map(({ stateError, ...p }) => ({ ...p, error: q.metric === "state" ? stateError : p.error }));
  return { commit: c.hash, commitSubject: c.subject, runIds, points, ...buildViews(points, q.tol) };
}

export function compare(db: Db, q: CompareQuery): { query: CompareQuery; a: CompareView; b: CompareView | null } {
  return { query: q, a: compareAt(db, q.a, q), b: q.b ? compareAt(db, q.b, q) : null };
}
