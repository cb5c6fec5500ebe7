/**
 * One case result with everything the case page shows: all numbers, the NLP iteration log,
 * the recovered trajectory and the problem's reference trajectory (read from the problem
 * folder of this checkout when its version hash matches the case's, otherwise left out and
 * said so). Series are thinned to at most `MAX_POINTS` points for the charts.
 */
import { eq } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, runs, suites, timingSamples } from "~/db/schema";
import { loadAnyProblem } from "./problems.server";
import { SOLVED_STATUSES } from "~/runs/types";
import { caseNumbers } from "~/runs/payload";

export const MAX_POINTS = 400;

export interface Series {
  t: number[];
  columns: Record<string, number[]>;
}

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
}

function thin(t: number[], columns: Record<string, number[]>): Series {
  const n = t.length;
  if (n <= MAX_POINTS) return { t, columns };
  const step = (n - 1) / (MAX_POINTS - 1);
  const idx = Array.from({ length: MAX_POINTS }, (_, i) => Math.round(i * step));
  return { t: idx.map((i) => t[i]!), columns: Object.fromEntries(Object.entries(columns).map(([k, v]) => [k, idx.map((i) => v[i]!)])) };
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

const referenceCache = new Map<string, { hash: string; series: Series | null; states: string[]; controls: string[] } | null>();

function referenceFor(problemId: string): { hash: string; series: Series | null; states: string[]; controls: string[] } | null {
  if (referenceCache.has(problemId)) return referenceCache.get(problemId)!;
  let out: { hash: string; series: Series | null; states: string[]; controls: string[] } | null = null;
  try {
    // The checkout's library first, then problems added from the browser (app/models/problems.server.ts).
    const r = loadAnyProblem(problemId)?.result;
    if (r?.ok) {
      const tr = r.problem.reference.trajectory;
      out = {
        hash: r.problem.versionHash,
        series: tr ? thin(Array.from(tr.t), Object.fromEntries(Object.entries(tr.columns).map(([k, v]) => [k, Array.from(v)]))) : null,
        states: r.problem.states.map((s) => s.name),
        controls: r.problem.controls.map((s) => s.name),
      };
    }
  } catch {
    out = null;
  }
  referenceCache.set(problemId, out);
  return out;
}

export function getCaseTrajectory(db: Db, id: number): CaseTrajectory | null {
  const row = db.select({ traj: caseResults.trajectoryJson, problemId: caseResults.problemId, hash: caseResults.problemVersionHash }).from(caseResults).where(eq(caseResults.id, id)).get();
  if (!row) return null;
  const tr = (row.traj ?? null) as { t?: number[]; states?: Record<string, number[]>; tu?: number[]; controls?: Record<string, number[]>; tLambda?: number[] | null; costates?: Record<string, number[]> | null } | null;
  const ref = referenceFor(row.problemId);
  let referenceNote: string | null = null;
  let reference: Series | null = null;
  if (!ref) referenceNote = `The problem ${row.problemId} is neither in this checkout's problems/ folder nor among the uploaded problems, so no reference is drawn.`;
  else if (!ref.series) referenceNote = `The problem ${row.problemId} has no reference trajectory.`;
  else {
    reference = ref.series;
    if (ref.hash !== row.hash) referenceNote = "The problem file changed since this case ran: the reference drawn is the current one.";
  }
  return {
    solution: {
      states: tr?.t && tr.states ? thin(tr.t, tr.states) : null,
      controls: tr?.tu && tr.controls ? thin(tr.tu, tr.controls) : null,
      costates: tr?.tLambda && tr.costates ? thin(tr.tLambda, tr.costates) : null,
    },
    reference,
    referenceNote,
    stateNames: ref?.states ?? Object.keys(tr?.states ?? {}),
    controlNames: ref?.controls ?? Object.keys(tr?.controls ?? {}),
  };
}
