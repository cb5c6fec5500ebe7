/**
 * "Run it now" on a problem page: the latest job queued for one problem (payload.problem, see
 * models/jobs.server.ts) and the cases its run has recorded so far, for the page's result table.
 */
import { asc, desc, eq, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, jobs } from "~/db/schema";
import { jobView, type JobView } from "./jobs.server";

export interface ProblemCheckCase {
  id: number;
  caseKey: string;
  scheme: string;
  intervals: number;
  degree: number | null;
  status: string;
  objective: number | null;
  objectiveErrorRel: number | null;
  stateError: number | null;
  iterations: number | null;
  medianSeconds: number | null;
}

export interface ProblemCheck {
  job: JobView;
  cases: ProblemCheckCase[];
}

/** The newest "Run it now" job of `problemId` with its run's cases (in the order recorded), or null. */
export function latestProblemCheck(db: Db, problemId: string): ProblemCheck | null {
  const row = db
    .select({ id: jobs.id })
    .from(jobs)
    .where(sql`json_extract(${jobs.payloadJson}, '$.problem') = ${problemId}`)
    .orderBy(desc(jobs.id))
    .limit(1)
    .get();
  if (!row) return null;
  const job = jobView(db, row.id, 4000);
  if (!job) return null;
  const cases = job.runId
    ? db
        .select({
          id: caseResults.id,
          caseKey: caseResults.caseKey,
          scheme: caseResults.scheme,
          intervals: caseResults.intervals,
          degree: caseResults.degree,
          status: caseResults.status,
          objective: caseResults.objective,
          objectiveErrorRel: caseResults.objectiveErrorRel,
          stateError: caseResults.stateError,
          iterations: caseResults.iterations,
          medianSeconds: caseResults.medianSeconds,
        })
        .from(caseResults)
        .where(eq(caseResults.runId, job.runId))
        .orderBy(asc(caseResults.id))
        .all()
    : [];
  return { job, cases };
}
