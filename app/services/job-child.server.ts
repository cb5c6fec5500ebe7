/**
 * What every job's child process shares: its run events read line by line from fd 3, and its
 * supervision (a beat every second that stores progress and reports the job's status; a job
 * cancelled meanwhile gets SIGTERM, then SIGKILL after a grace period; a beat that throws is
 * skipped and logged, never thrown out of the timer).
 */
import type { ChildProcess } from "node:child_process";
import type { JobRow } from "~/db/schema";
import { parseRunEvent, type RunEvent } from "~/runs/events";

const HEARTBEAT_MS = 1000;
const KILL_GRACE_MS = 15_000;

/** Calls `onEvent` for every well-formed run event the child writes on fd 3. */
export function onRunEvents(child: ChildProcess, onEvent: (e: RunEvent) => void): void {
  let partial = "";
  (child.stdio[3] as NodeJS.ReadableStream | null)?.on("data", (d: Buffer) => {
    partial += d.toString("utf8");
    const lines = partial.split("\n");
    partial = lines.pop() ?? "";
    for (const line of lines) {
      const e = parseRunEvent(line);
      if (e) onEvent(e);
    }
  });
}

/**
 * Waits for the child to close, calling `beat` every second with the seconds since the start;
 * `beat` stores progress and returns the job's status ("cancelled" stops the child).
 * Resolves with the exit code (null when killed by a signal).
 */
export async function superviseJobChild(child: ChildProcess, beat: (elapsedSeconds: number) => JobRow["status"] | null): Promise<number | null> {
  const started = Date.now();
  let killTimer: NodeJS.Timeout | null = null;
  let failing = false;
  const timer = setInterval(() => {
    let status: JobRow["status"] | null;
    try {
      status = beat((Date.now() - started) / 1000);
      failing = false;
    } catch (err) {
      // A beat that throws (typically SQLITE_BUSY: another process held the write lock past
      // busy_timeout) skips this beat; thrown out of a timer it would bring the whole server down.
      if (!failing) console.error("[arcwatch] job heartbeat skipped:", (err as Error).message);
      failing = true;
      return;
    }
    if (status === "cancelled" && !killTimer) {
      child.kill("SIGTERM");
      killTimer = setTimeout(() => child.kill("SIGKILL"), KILL_GRACE_MS);
    }
  }, HEARTBEAT_MS);
  const code: number | null = await new Promise((resolve) => {
    child.once("close", (c) => resolve(c));
    // Without a listener, a failed spawn (EAGAIN, ENOMEM on a loaded machine) is thrown out of
    // the event emitter and takes the server down; here it ends the job like a killed child.
    child.once("error", (err) => {
      console.error("[arcwatch] job process:", err.message);
      resolve(null);
    });
  });
  clearInterval(timer);
  if (killTimer) clearTimeout(killTimer);
  return code;
}

/** True for SQLite's "database is locked" family (SQLITE_BUSY, SQLITE_BUSY_SNAPSHOT...). */
export function isBusyError(err: unknown): boolean {
  return typeof (err as { code?: unknown })?.code === "string" && (err as { code: string }).code.startsWith("SQLITE_BUSY");
}

/**
 * Runs a database write that must not be lost (a job's last log and final status), retrying
 * while another process holds the write lock past busy_timeout: once a second, up to `tries`.
 */
export async function whenUnlocked<T>(write: () => T, tries = 60): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return write();
    } catch (err) {
      if (!isBusyError(err) || attempt >= tries) throw err;
      await new Promise((r) => setTimeout(r, 1000));
    }
  }
}
