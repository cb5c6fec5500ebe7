/**
 * What every job's child process shares: its run events read line by line from fd 3, and its
 * supervision (a beat every second that stores progress and reports the job's status; a job
 * cancelled meanwhile gets SIGTERM, then SIGKILL after a grace period).
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
  const timer = setInterval(() => {
    if (beat((Date.now() - started) / 1000) === "cancelled" && !killTimer) {
      child.kill("SIGTERM");
      killTimer = setTimeout(() => child.kill("SIGKILL"), KILL_GRACE_MS);
    }
  }, HEARTBEAT_MS);
  const code: number | null = await new Promise((resolve) => child.once("close", (c) => resolve(c)));
  clearInterval(timer);
  if (killTimer) clearTimeout(killTimer);
  return code;
}
