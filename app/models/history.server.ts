/**
 * History: one metric of one case along the runs of a branch (oldest first), with the
 * regressions and improvements recorded at each run. Uses the case_results_case_key_idx index
 * and then joins the (far fewer) runs; one point per run.
 */
import { and, asc, eq, sql } from "drizzle-orm";
import { z } from "zod";
import type { Db } from "~/db/client.server";
import { caseResults, regressions, runs, suites } from "~/db/schema";
import { metricAxisLabel } from "~/vocabulary";

/** Metrics a history can follow; each is a column of case_results. */
export const HISTORY_METRICS = {
  medianSeconds: { column: caseResults.medianSeconds, label: metricAxisLabel("medianSeconds"), regressionMetric: "median_seconds" },
  objectiveErrorRel: { column: caseResults.objectiveErrorRel, label: metricAxisLabel("objectiveErrorRel"), regressionMetric: "objective_error_rel" },
  stateError: { column: caseResults.stateError, label: metricAxisLabel("stateError"), regressionMetric: "state_error" },
  controlError: { column: caseResults.controlError, label: metricAxisLabel("controlError"), regressionMetric: "control_error" },
  finalTimeError: { column: caseResults.finalTimeError, label: metricAxisLabel("finalTimeError"), regressionMetric: "final_time_error" },
  resimMiss: { column: caseResults.resimMiss, label: metricAxisLabel("resimMiss"), regressionMetric: "resim_miss" },
  iterations: { column: caseResults.iterations, label: metricAxisLabel("iterations"), regressionMetric: "iterations" },
  objective: { column: caseResults.objective, label: metricAxisLabel("objective"), regressionMetric: "objective" },
} as const;
export type HistoryMetric = keyof typeof HISTORY_METRICS;
export const HISTORY_METRIC_KEYS = Object.keys(HISTORY_METRICS) as HistoryMetric[];

export const historyQuery = z.object({
  caseKey: z.string().trim().min(1, "Pick a case.").max(300),
  metric: z.enum(HISTORY_METRIC_KEYS as [HistoryMetric, ...HistoryMetric[]]).catch("medianSeconds"),
  branch: z.string().trim().min(1).max(300).catch("main"),
  suite: z.string().trim().max(64).optional().catch(undefined),
  limit: z.coerce.number().int().min(2).max(2000).catch(200),
});
export type HistoryQuery = z.infer<typeof historyQuery>;

export interface HistoryPoint {
  runId: string;
  caseId: number;
  commitHash: string;
  commitSubject: string | null;
  startedAt: number;
  status: string;
  value: number | null;
  isDemo: boolean;
  /** "regression" / "improvement" when a row of that direction exists for this case at this run. */
  mark: "regression" | "improvement" | null;
  markKinds: string[];
}

export function historySeries(db: Db, q: HistoryQuery): { metric: HistoryMetric; label: string; points: HistoryPoint[] } {
  const m = HISTORY_METRICS[q.metric];
  const conds = [eq(caseResults.caseKey, q.caseKey), eq(runs.branch, q.branch)];
  if (q.suite) conds.push(eq(suites.name, q.suite));
  const rows = db
    .select({
      runId: runs.id,
      caseId: caseResults.id,
      commitHash: runs.commitHash,
      commitSubject: runs.commitSubject,
      startedAt: runs.startedAt,
      status: caseResults.status,
      value: sql<number | null>`${m.column}`,
      isDemo: runs.isDemo,
    })
    .from(caseResults)
    .innerJoin(runs, eq(runs.id, caseResults.runId))
    .innerJoin(suites, eq(suites.id, runs.suiteId))
    .where(and(...conds))
    .orderBy(sql`${runs.startedAt} desc`)
    .limit(q.limit)
    .all()
    .reverse();
  const marks = db
    .select({ runId: regressions.runId, direction: regressions.direction, kind: regressions.kind })
    .from(regressions)
    .where(eq(regressions.caseKey, q.caseKey))
    .orderBy(asc(regressions.id))
    .all();
  const byRun = new Map<string, { dirs: Set<string>; kinds: Set<string> }>();
  for (const r of marks) {
    const e = byRun.get(r.runId) ?? { dirs: new Set(), kinds: new Set() };
    e.dirs.add(r.direction);
    e.kinds.add(`${r.kind} ${r.direction}`);
    byRun.set(r.runId, e);
  }
  return {
    metric: q.metric,
    label: m.label,
    points: rows.map((r) => {
      const e = byRun.get(r.runId);
      return {
        ...r,
        startedAt: r.startedAt.getTime(),
        value: typeof r.value === "number" && Number.isFinite(r.value) ? r.value : null,
        mark: e?.dirs.has("regression") ? "regression" : e?.dirs.has("improvement") ? "improvement" : null,
        markKinds: e ? [...e.kinds] : [],
      };
    }),
  };
}

/** The branch of the most recent run (the history page's default when main has no runs). */
export function latestRunBranch(db: Db): string | null {
  return db.select({ b: runs.branch }).from(runs).where(sql`${runs.branch} is not null`).orderBy(sql`${runs.startedAt} desc`).limit(1).get()?.b ?? null;
}

/** Case keys and branches available for the history pickers. */
export function historyOptions(db: Db, branch: string): { caseKeys: string[]; branches: string[] } {
  const branches = db.selectDistinct({ b: runs.branch }).from(runs).all().map((r) => r.b).filter((b): b is string => !!b).sort();
  // Case keys of the latest complete run on the branch (cheap: one run's cases). A cancelled or
  // interrupted run may hold only some cases, or none, so it is used only when nothing completed.
  const latestOf = (complete: boolean) =>
    db
      .select({ id: runs.id })
      .from(runs)
      .where(complete ? and(eq(runs.branch, branch), eq(runs.status, "complete")) : eq(runs.branch, branch))
      .orderBy(sql`${runs.startedAt} desc`)
      .limit(1)
      .get();
  const latest = latestOf(true) ?? latestOf(false);
  const caseKeys = latest
    ? db.select({ k: caseResults.caseKey }).from(caseResults).where(eq(caseResults.runId, latest.id)).orderBy(asc(caseResults.caseKey)).all().map((r) => r.k)
    : [];
  return { caseKeys, branches };
}
