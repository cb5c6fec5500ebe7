/**
 * Runs whose recording process died. A recorder (the command line, the job worker's child)
 * writes its host name and pid on the run and refreshes `heartbeat_at` every
 * HEARTBEAT_INTERVAL_MS while it runs. A "running" run is marked interrupted, with a note saying
 * why, when
 * - its heartbeat is older than HEARTBEAT_STALE_MS (any host: the process stopped, or its
 *   machine did), or
 * - it was recorded on this host and its pid no longer exists (found at once, without waiting
 *   for the heartbeat to age; a reused pid only delays this to the heartbeat rule).
 * Checked by the server every ARCWATCH_HOUSEKEEPING_MS (app/services/housekeeping.server.ts)
 * and by every run as it starts. Runs without a heartbeat (uploads, runs of sharded groups,
 * rows from before heartbeats) are left to their own rules.
 */
import os from "node:os";
import { and, eq, isNotNull, lt, or } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { runs } from "~/db/schema";

export const HEARTBEAT_INTERVAL_MS = 5_000;
/** Twelve missed beats: a loaded 2-core machine can stall a process for seconds, never a minute (common practice, no source). */
export const HEARTBEAT_STALE_MS = 60_000;

export interface RunnerIdentity {
  host: string;
  pid: number;
}

export function thisRunner(): RunnerIdentity {
  return { host: os.hostname(), pid: process.pid };
}

/** Records who is recording the run, and its first heartbeat. */
export function claimRun(db: Db, runId: string, who: RunnerIdentity = thisRunner(), now = new Date()): void {
  db.update(runs).set({ runnerHost: who.host, runnerPid: who.pid, heartbeatAt: now }).where(eq(runs.id, runId)).run();
}

export function beat(db: Db, runId: string, now = new Date()): void {
  db.update(runs).set({ heartbeatAt: now }).where(and(eq(runs.id, runId), eq(runs.status, "running"))).run();
}

/** Refreshes the heartbeat every HEARTBEAT_INTERVAL_MS until the returned function is called. */
export function startHeartbeat(db: Db, runId: string, intervalMs = HEARTBEAT_INTERVAL_MS): () => void {
  const timer = setInterval(() => {
    try {
      beat(db, runId);
    } catch {
      /* a busy database skips one beat; the stale limit allows for many */
    }
  }, intervalMs);
  timer.unref();
  return () => clearInterval(timer);
}

function pidAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === "EPERM";
  }
}

/** Marks running runs whose recorder died as interrupted; returns their ids and the reason. */
export function markDeadRuns(db: Db, now = Date.now(), here: string = os.hostname()): { id: string; note: string }[] {
  const candidates = db
    .select({ id: runs.id, host: runs.runnerHost, pid: runs.runnerPid, heartbeatAt: runs.heartbeatAt })
    .from(runs)
    .where(and(eq(runs.status, "running"), isNotNull(runs.heartbeatAt), or(lt(runs.heartbeatAt, new Date(now - HEARTBEAT_STALE_MS)), eq(runs.runnerHost, here))))
    .all();
  const out: { id: string; note: string }[] = [];
  for (const c of candidates) {
    const last = c.heartbeatAt!.getTime();
    const stale = now - last > HEARTBEAT_STALE_MS;
    const dead = c.host === here && c.pid !== null && c.pid !== process.pid && !pidAlive(c.pid);
    if (!stale && !dead) continue;
    const at = new Date(last).toISOString().replace("T", " ").slice(0, 19);
    const note = dead
      ? `The recording process (pid ${c.pid}) ended without finishing the run; last heartbeat ${at} UTC.`
      : `No heartbeat from the recording process since ${at} UTC (over ${HEARTBEAT_STALE_MS / 1000} s): it stopped without finishing the run.`;
    const r = db
      .update(runs)
      .set({ status: "interrupted", finishedAt: new Date(last), statusNote: note })
      .where(and(eq(runs.id, c.id), eq(runs.status, "running")))
      .run();
    if (r.changes > 0) out.push({ id: c.id, note });
  }
  return out;
}
