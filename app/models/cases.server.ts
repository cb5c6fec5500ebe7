/**
 * One case result with everything the case page shows: all numbers, the NLP iteration log,
 * the recovered trajectory and the problem's reference trajectory (the problem as it is now in
 * the library; a note says when its version differs from the case's). Series are thinned to at most `MAX_POINTS` points for the charts.
 */
import { eq } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, runs, suites, timingSamples } from "~/db/schema";
import { SOLVED_STATUSES } from "~/runs/types";
import { caseNumbers } from "~/runs/payload";
import { outcomeMessage, problemReferenceSeries, SolverPoolBusy } from "~/services/problem-views.server";
import { MAX_POINTS, thin, type Series } from "./problem-view";

export { MAX_POINTS, type Series };

export interface CaseDetail {
  id: number;
  runId: string;
  run: { commitHash: string; branch: string | null; suite: string; isDemo: boolean; startedAt: number };
  caseKey: string;
  problemId: string;
  scheme: string;
  intervals: number;
  degree: number | null;
  status: string;
  solved: boolean;
  message: string | null;
  numbers: Record<string, number | null>;
  extra: Record<string, unknown>;
  samples: number[];
  arcs: unknown;
  log: Record<string, number | string>[];
}

export interface CaseTrajectory {
  solution: { states: Series | null; controls: Series | null; costates: Series | null };
  reference: Series | null;
  referenceNote: string | null;
  stateNames: string[];
  controlNames: string[];
  /** The reference was left out because the solver threads were busy (do not keep this answer). */
  referenceBusy?: true;
}

export function getCase(db: Db, id: number): CaseDetail | null {
  const row = db
    .select({ c: caseResults, samples: timingSamples.samplesJson, commitHash: runs.commitHash, branch: runs.branch, isDemo: runs.isDemo, startedAt: runs.startedAt, suite: suites.name })
    .from(caseResults)
    .innerJoin(runs, eq(runs.id, caseResults.runId))
    .innerJoin(suites, eq(suites.id, runs.suiteId))
    .leftJoin(timingSamples, eq(timingSamples.caseResultId, caseResults.id))
    .where(eq(caseResults.id, id))
    .get();
  if (!row) return null;
  const c = row.c;
  const logJson = (c.iterationLogJson ?? {}) as { log?: unknown; extra?: unknown };
  const log = Array.isArray(logJson.log) ? (logJson.log as Record<string, number | string>[]) : [];
  return {
    id: c.id,
    runId: c.runId,
    run: { commitHash: row.commitHash, branch: row.branch, suite: row.suite, isDemo: row.isDemo, startedAt: row.startedAt.getTime() },
    caseKey: c.caseKey,
    problemId: c.problemId,
    scheme: c.scheme,
    intervals: c.intervals,
    degree: c.degree,
    status: c.status,
    solved: SOLVED_STATUSES.has(c.status),
    message: c.message,
    numbers: {
      ...caseNumbers(c),
      sampleCount: c.sampleCount,
    },
    extra: (logJson.extra ?? {}) as Record<string, unknown>,
    samples: row.samples ?? [],
    arcs: c.arcsJson ?? null,
    log,
  };
}

/**
 * The case's recovered trajectory and the problem's reference (compiled on a solver thread,
 * app/services/problem-views.server.ts). With the solver queue full the case's own series are
 * still returned, the reference left out and `referenceBusy` set.
 */
export async function getCaseTrajectory(db: Db, id: number): Promise<CaseTrajectory | null> {
  const row = db.select({ traj: caseResults.trajectoryJson, problemId: caseResults.problemId, hash: caseResults.problemVersionHash }).from(caseResults).where(eq(caseResults.id, id)).get();
  if (!row) return null;
  const tr = (row.traj ?? null) as { t?: number[]; states?: Record<string, number[]>; tu?: number[]; controls?: Record<string, number[]>; tLambda?: number[] | null; costates?: Record<string, number[]> | null } | null;
  let referenceNote: string | null = null;
  let reference: Series | null = null;
  let referenceBusy = false;
  let names: { states: string[]; controls: string[] } | null = null;
  try {
    const ref = await problemReferenceSeries(row.problemId);
    if (!ref) referenceNote = `The problem ${row.problemId} is neither in this checkout's problems/ folder nor among the uploaded problems, so no reference is drawn.`;
    else if (!ref.outcome.ok) referenceNote = `The problem ${row.problemId} does not compile as it is now (${outcomeMessage(ref.outcome).slice(0, 300)}), so no reference is drawn.`;
    else {
      names = { states: ref.outcome.view.stateNames, controls: ref.outcome.view.controlNames };
      if (!ref.series) referenceNote = `The problem ${row.problemId} has no reference trajectory.`;
      else {
        reference = ref.series;
        if (ref.outcome.view.versionHash !== row.hash) referenceNote = "The problem file changed since this case ran: the reference drawn is the current one.";
      }
    }
  } catch (err) {
    if (!(err instanceof SolverPoolBusy)) throw err;
    referenceBusy = true;
    referenceNote = "The server is busy with other solves, so the reference is not drawn this time; reload in a moment.";
  }
  return {
    solution: {
      states: tr?.t && tr.states ? thin(tr.t, tr.states) : null,
      controls: tr?.tu && tr.controls ? thin(tr.tu, tr.controls) : null,
      costates: tr?.tLambda && tr.costates ? thin(tr.tLambda, tr.costates) : null,
    },
    reference,
    referenceNote,
    stateNames: names?.states ?? Object.keys(tr?.states ?? {}),
    controlNames: names?.controls ?? Object.keys(tr?.controls ?? {}),
    ...(referenceBusy ? { referenceBusy: true as const } : {}),
  };
}
