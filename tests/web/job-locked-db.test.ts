/**
 * A job's supervision survives a database another process keeps locked: a heartbeat that throws
 * SQLITE_BUSY (another process held the write lock past busy_timeout) is skipped, never thrown
 * out of the timer, where it would take the whole server down; and a job's final status is
 * written once the lock is released.
 */
import { spawn } from "node:child_process";
import { describe, expect, it } from "vitest";
import { useTempDatabase } from "../helpers/temp-db";

useTempDatabase("job-locked");

const { getDb, databasePath, BUSY_TIMEOUT_MS } = await import("~/db/client.server");
const { suites } = await import("~/db/schema");
const { enqueueJob, claimNextJob, finishJob, heartbeatJob, jobView } = await import("~/models/jobs.server");
const { superviseJobChild, whenUnlocked, isBusyError } = await import("~/services/job-child.server");

/** Another process that takes the write lock, says so on stdout, and releases it after `ms`. */
function holdWriteLock(file: string, ms: number): Promise<() => Promise<void>> {
  const child = spawn(process.execPath, ["-e", `const D=require("better-sqlite3");const d=new D(${JSON.stringify(file)});d.exec("BEGIN IMMEDIATE");process.stdout.write("locked\\n");setTimeout(()=>{d.exec("COMMIT");d.close();},${ms});`], { cwd: process.cwd(), stdio: ["ignore", "pipe", "inherit"] });
  const exited = new Promise<void>((r) => child.once("exit", () => r()));
  return new Promise((resolve) => child.stdout!.once("data", () => resolve(() => exited)));
}

describe("a job while another process holds the write lock", () => {
  it("skips the heartbeats that find the database locked, keeps supervising, and records the end once it is free", async () => {
    const db = getDb();
    db.insert(suites).values({ name: "quick", contentHash: "h".repeat(64), definitionJson: {} }).run();
    const job = enqueueJob(db, { kind: "bench", payload: { suite: "quick" } }, null);
    claimNextJob(db, process.pid);

    const released = await holdWriteLock(databasePath(), BUSY_TIMEOUT_MS + 1500);
    // The cause, shown directly: a write now fails with SQLITE_BUSY after busy_timeout.
    let caught: unknown = null;
    try {
      heartbeatJob(db, job.id, null, "");
    } catch (err) {
      caught = err;
    }
    expect(isBusyError(caught)).toBe(true);

    // Supervision of a child that runs 2.5 s while every beat fails: it must resolve, not throw.
    let beats = 0;
    const child = spawn(process.execPath, ["-e", "setTimeout(() => {}, 2500)"], { stdio: "ignore" });
    const code = await superviseJobChild(child, () => {
      beats++;
      throw Object.assign(new Error("database is locked"), { code: "SQLITE_BUSY" });
    });
    expect(code).toBe(0);
    expect(beats).toBeGreaterThanOrEqual(1);

    await released();

    // The final status waits for the lock (a first try fails after busy_timeout, a later one lands).
    const releasedAgain = await holdWriteLock(databasePath(), BUSY_TIMEOUT_MS + 1500);
    let tries = 0;
    await whenUnlocked(() => {
      tries++;
      finishJob(db, job.id, "done", null);
    });
    expect(tries).toBeGreaterThanOrEqual(2);
    expect(jobView(db, job.id)!.status).toBe("done");
    await releasedAgain();
  }, 90_000);

  it("retries only a locked database: any other error is thrown at once", async () => {
    let calls = 0;
    await expect(
      whenUnlocked(() => {
        calls++;
        throw new Error("no such table: jobs");
      }),
    ).rejects.toThrow("no such table");
    expect(calls).toBe(1);
  });
});
