/**
 * Background job rows. A job is queued here and executed by the job worker, which claims
 * the oldest queued row, records its pid, progress and log, and sets the final status.
 */
import { and, asc, desc, eq, sql } from "drizzle-orm";
import { z } from "zod";
import type { Db } from "~/db/client.server";
import { caseResults, jobs, regressions, runs, type JobRow } from "~/db/schema";
import { abJobPayload } from "~/runs/ab-result";
import { statusEntry } from "~/vocabulary";
import { PROBLEM_ID_PATTERN } from "~/engine/problem/files";
import { abCheckOfJob, type AbCheckView } from "./ab-checks.server";

/** Payload of a "bench" job: run a suite at a commit (default: the checked-out HEAD). */
export const benchJobPayload = z.object({
  suite: z.string().trim().regex(/^[a-z0-9][a-z0-9_-]{0,63}$/, "Suite names use a-z, 0-9, - and _ (at most 64)."),
  commit: z
    .string()
    .trim()
    .regex(/^[0-9a-f]{7,40}$/, "A commit is 7 to 40 hexadecimal characters.")
    .optional(),
  /** The branch (or ref) the commit was picked from, for display. */
  ref: z.string().trim().max(200).optional(),
  /**
   * "Run it now" from a problem page: run this one problem with every scheme on two coarse meshes
   * (app/runs/suite-changes.ts `problemCheckSuite`); `suite` is then its generated name.
   */
  problem: z.string().trim().regex(PROBLEM_ID_PATTERN, "A problem id uses letters, digits, '.', '_' and '-'.").optional(),
});
export type BenchJobPayload = z.infer<typeof benchJobPayload>;

export const enqueueJobInput = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("bench"), payload: benchJobPayload }),
  /** Interleaved A/B of two commits (app/services/ab-job.server.ts runs `bench --ab`). */
  z.object({ kind: z.literal("ab"), payload: abJobPayload }),
]);
export type EnqueueJobInput = z.infer<typeof enqueueJobInput>;

export type JobSummary = Pick<JobRow, "id" | "kind" | "payloadJson" | "status" | "createdAt" | "startedAt" | "finishedAt" | "error">;

const summaryColumns = {
  id: jobs.id,
  kind: jobs.kind,
  payloadJson: jobs.payloadJson,
  status: jobs.status,
  createdAt: jobs.createdAt,
  startedAt: jobs.startedAt,
  finishedAt: jobs.finishedAt,
  error: jobs.error,
};

export function enqueueJob(db: Db, input: EnqueueJobInput, createdById: number | null): JobSummary {
  return db
    .insert(jobs)
    .values({ kind: input.kind, payloadJson: input.payload, createdById })
    .returning(summaryColumns)
    .get();
}

export function listJobs(db: Db, limit = 50): JobSummary[] {
  return db.select(summaryColumns).from(jobs).orderBy(desc(jobs.createdAt), desc(jobs.id)).limit(limit).all();
}

export function getJob(db: Db, id: number): JobRow | undefined {
  return db.select().from(jobs).where(eq(jobs.id, id)).get();
}

// ---------------------------------------------------------------------------------------
// Worker side (app/services/job-worker.server.ts) and the live page
// ---------------------------------------------------------------------------------------

/** What the worker writes into `progress_json` while a bench job runs. */
export interface BenchProgress {
  done: number;
  total: number;
  current: string | null;
  lastCase: string | null;
  lastStatus: string | null;
  elapsedSeconds: number;
  etaSeconds: number | null;
  commit: string | null;
  runId: string | null;
  phase: "checkout" | "running" | "finishing";
}

/** Longest log kept per job (characters, the tail wins). */
export const MAX_JOB_LOG = 200_000;

/**
 * Claims the oldest queued job when no job is running (one run per machine at a time, so that
 * timings are not disturbed by a second run). Returns the claimed job or null.
 */
export function claimNextJob(db: Db, pid: number): JobRow | null {
  return db.transaction((tx) => {
    const running = tx.select({ id: jobs.id }).from(jobs).where(eq(jobs.status, "running")).get();
    if (running) return null;
    const next = tx.select().from(jobs).where(eq(jobs.status, "queued")).orderBy(asc(jobs.createdAt), asc(jobs.id)).limit(1).get();
    if (!next) return null;
    const now = new Date();
    return tx.update(jobs).set({ status: "running", pid, startedAt: now, heartbeatAt: now, log: "" }).where(and(eq(jobs.id, next.id), eq(jobs.status, "queued"))).returning().get() ?? null;
  });
}

/** Heartbeat with progress; returns the row's status (the API may have set "cancelled"). */
export function heartbeatJob(db: Db, id: number, progress: BenchProgress | null, logAppend: string): JobRow["status"] | null {
  return db.transaction((tx) => {
    const row = tx.select({ status: jobs.status, log: jobs.log }).from(jobs).where(eq(jobs.id, id)).get();
    if (!row) return null;
    const log = logAppend ? (row.log + logAppend).slice(-MAX_JOB_LOG) : row.log;
    tx.update(jobs).set({ heartbeatAt: new Date(), log, ...(progress ? { progressJson: progress } : {}) }).where(eq(jobs.id, id)).run();
    return row.status;
  });
}

/** What a cancelled job's error reads, however its process ended (exit 130, or killed). */
export const CANCELLED_MESSAGE = "Cancelled: the finished cases are kept and the run is marked interrupted.";

/** Final status; a job cancelled meanwhile stays "cancelled", and its error says so. */
export function finishJob(db: Db, id: number, status: "done" | "failed" | "cancelled", error: string | null): void {
  db.update(jobs)
    .set({
      status: sql`case when ${jobs.status} = 'cancelled' then 'cancelled' else ${status} end`,
      error: sql`case when ${jobs.status} = 'cancelled' or ${status} = 'cancelled' then ${CANCELLED_MESSAGE} else ${error} end`,
      finishedAt: new Date(),
      pid: null,
    })
    .where(eq(jobs.id, id))
    .run();
}

/**
 * Start-up recovery: a job still "running" belongs to a worker of an earlier server process,
 * which is gone (one worker per machine), so it is marked "died"; its run, if any, is marked
 * interrupted. Returns the ids marked.
 */
export function markDeadJobs(db: Db): { id: number; pid: number | null }[] {
  return db.transaction((tx) => {
    const rows = tx.select({ id: jobs.id, pid: jobs.pid }).from(jobs).where(eq(jobs.status, "running")).all();
    for (const r of rows) {
      tx.update(jobs).set({ status: "died", finishedAt: new Date(), error: "The worker stopped (server restart or crash) before the job finished.", pid: null }).where(eq(jobs.id, r.id)).run();
      tx.update(runs).set({ status: "interrupted", finishedAt: new Date() }).where(and(eq(runs.jobId, r.id), eq(runs.status, "running"))).run();
    }
    return rows;
  });
}

export type CancelOutcome = { ok: true; status: JobRow["status"] } | { ok: false; status: 404 | 409; error: string };

/** Cancels a queued or running job (the worker stops a running one at its next heartbeat). */
export function cancelJob(db: Db, id: number): CancelOutcome {
  const row = db.select({ status: jobs.status }).from(jobs).where(eq(jobs.id, id)).get();
  if (!row) return { ok: false, status: 404, error: `No job ${id}.` };
  if (row.status !== "queued" && row.status !== "running") return { ok: false, status: 409, error: `Job ${id} is ${row.status}; only queued or running jobs can be cancelled.` };
  db.update(jobs)
    .set({ status: "cancelled", ...(row.status === "queued" ? { finishedAt: new Date() } : {}) })
    .where(eq(jobs.id, id))
    .run();
  return { ok: true, status: "cancelled" };
}

/** The run a job produced (latest, if several). */
export function runOfJob(db: Db, jobId: number): { id: string; status: string } | null {
  return db.select({ id: runs.id, status: runs.status }).from(runs).where(eq(runs.jobId, jobId)).orderBy(desc(runs.startedAt)).limit(1).get() ?? null;
}

export interface JobView {
  id: number;
  kind: string;
  status: JobRow["status"];
  suite: string;
  ref: string | null;
  commit: string | null;
  createdAt: number;
  startedAt: number | null;
  finishedAt: number | null;
  error: string | null;
  progress: BenchProgress | null;
  log: string;
  runId: string | null;
  /** An "ab" job: its check (commits, cases, state and, once done, the verdict). */
  ab: AbCheckView | null;
  /** What the finished run found: cases solved, and findings by direction. */
  found: { cases: number; solved: number; regressions: number; improvements: number } | null;
}

/** Solved cases and findings of one run (for the finished job's panel). */
export function runFindings(db: Db, runId: string): NonNullable<JobView["found"]> {
  const c = db.select({ status: caseResults.status, n: sql<number>`count(*)` }).from(caseResults).where(eq(caseResults.runId, runId)).groupBy(caseResults.status).all();
  const f = db.select({ d: regressions.direction, n: sql<number>`count(*)` }).from(regressions).where(eq(regressions.runId, runId)).groupBy(regressions.direction).all();
  return {
    cases: c.reduce((a, r) => a + Number(r.n), 0),
    solved: c.filter((r) => statusEntry("case", r.status)?.tone === "good").reduce((a, r) => a + Number(r.n), 0),
    regressions: Number(f.find((r) => r.d === "regression")?.n ?? 0),
    improvements: Number(f.find((r) => r.d === "improvement")?.n ?? 0),
  };
}

export function jobView(db: Db, id: number, logTail = 20_000): JobView | null {
  const v = jobViewBase(db, id, logTail);
  if (v && v.runId && !ACTIVE_JOB.has(v.status)) v.found = runFindings(db, v.runId);
  return v;
}

const ACTIVE_JOB = new Set(["queued", "running"]);

function jobViewBase(db: Db, id: number, logTail: number): JobView | null {
  const j = getJob(db, id);
  if (!j) return null;
  const p = (j.payloadJson ?? {}) as { suite?: string; commit?: string; ref?: string; head?: string };
  return {
    id: j.id,
    kind: j.kind,
    status: j.status,
    suite: p.suite ?? "",
    ref: p.ref ?? null,
    commit: p.commit ?? p.head ?? null,
    createdAt: j.createdAt.getTime(),
    startedAt: j.startedAt?.getTime() ?? null,
    finishedAt: j.finishedAt?.getTime() ?? null,
    error: j.error,
    progress: (j.progressJson ?? null) as BenchProgress | null,
    log: j.log.slice(-logTail),
    runId: runOfJob(db, id)?.id ?? null,
    ab: j.kind === "ab" ? abCheckOfJob(db, id) : null,
    found: null,
  };
}

/**
 * A worktree is checked out detached, so the runner records no branch; the job knows which
 * branch the commit was picked from and writes it onto the job's runs.
 */
export function labelJobRuns(db: Db, jobId: number, branch: string): void {
  db.update(runs).set({ branch }).where(and(eq(runs.jobId, jobId), sql`${runs.branch} is null`)).run();
}

/** Records the pid of the job's bench child process (killed at start-up if a restart orphaned it). */
export function setJobPid(db: Db, id: number, pid: number | null): void {
  db.update(jobs).set({ pid }).where(eq(jobs.id, id)).run();
}
