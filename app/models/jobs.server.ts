/**
 * Background job rows. A job is queued here and executed by the job worker, which claims
 * the oldest queued row, records its pid, progress and log, and sets the final status.
 */
import { desc, eq } from "drizzle-orm";
import { z } from "zod";
import type { Db } from "~/db/client.server";
import { jobs, type JobRow } from "~/db/schema";

/** Payload of a "bench" job: run a suite at a commit (default: the checked-out HEAD). */
export const benchJobPayload = z.object({
  suite: z.string().trim().regex(/^[a-z0-9][a-z0-9_-]{0,63}$/, "Suite names use a-z, 0-9, - and _ (at most 64)."),
  commit: z
    .string()
    .trim()
    .regex(/^[0-9a-f]{7,40}$/, "A commit is 7 to 40 hexadecimal characters.")
    .optional(),
});
export type BenchJobPayload = z.infer<typeof benchJobPayload>;

export const enqueueJobInput = z.discriminatedUnion("kind", [z.object({ kind: z.literal("bench"), payload: benchJobPayload })]);
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
