/**
 * Runs whose recording process died: a run with a stale heartbeat, or recorded on this host by a
 * pid that no longer exists, is marked interrupted with a note; a live one, a finished one and a
 * run without a heartbeat (an upload) are left alone. Sharded runs past their deadline are closed
 * naming the shards that never came.
 */
import { spawnSync } from "node:child_process";
import os from "node:os";
import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { useTempDatabase } from "../helpers/temp-db";

useTempDatabase("liveness");
const { getDb } = await import("~/db/client.server");
const { runs, suites, runShards } = await import("~/db/schema");
const { markDeadRuns, claimRun, HEARTBEAT_STALE_MS } = await import("~/models/run-liveness.server");
const { closeOverdueGroups } = await import("~/models/run-groups.server");

const db = getDb();
const suiteId = db.insert(suites).values({ name: "quick", contentHash: "h".repeat(64), definitionJson: {} }).returning().get().id;
function run(id: string, extra: Partial<typeof runs.$inferInsert> = {}) {
  db.insert(runs).values({ id, suiteId, commitHash: "c".repeat(40), machineJson: {}, machineKey: "k", startedAt: new Date(), status: "running", ...extra }).run();
}
const row = (id: string) => db.select().from(runs).where(eq(runs.id, id)).get()!;

/** A pid that surely is not running: a child that has exited. */
function deadPid(): number {
  const r = spawnSync(process.execPath, ["-e", "process.stdout.write(String(process.pid))"], { encoding: "utf8" });
  return Number(r.stdout);
}

describe("runs whose recorder died", () => {
  it("marks a stale heartbeat (any host) and a dead pid on this host interrupted, with the reason", () => {
    const now = Date.now();
    run("stale", { runnerHost: "another-host", runnerPid: 1234, heartbeatAt: new Date(now - HEARTBEAT_STALE_MS - 1000) });
    run("dead-pid", { runnerHost: os.hostname(), runnerPid: deadPid(), heartbeatAt: new Date(now - 2000) });
    run("alive");
    claimRun(db, "alive"); // this process: alive, fresh heartbeat
    run("remote-fresh", { runnerHost: "another-host", runnerPid: 1234, heartbeatAt: new Date(now - 1000) });
    run("upload", { status: "complete", finishedAt: new Date() });
    run("no-heartbeat");
    const marked = markDeadRuns(db, now);
    expect(marked.map((m) => m.id).sort()).toEqual(["dead-pid", "stale"]);
    expect(row("stale").status).toBe("interrupted");
    expect(row("stale").statusNote).toMatch(/^No heartbeat from the recording process since .* UTC \(over 60 s\)/);
    expect(row("dead-pid").statusNote).toMatch(/^The recording process \(pid \d+\) ended without finishing the run/);
    expect(row("dead-pid").finishedAt!.getTime()).toBe(now - 2000);
    for (const id of ["alive", "remote-fresh", "no-heartbeat"]) expect(row(id).status, id).toBe("running");
    expect(row("upload").status).toBe("complete");
    // Idempotent: a second sweep changes nothing.
    expect(markDeadRuns(db, now)).toEqual([]);
  });
});

describe("sharded runs past their deadline", () => {
  it("closes the run as interrupted naming the missing shards, and leaves runs within their deadline", () => {
    const now = new Date();
    run("late-group", { groupKey: "c:quick:p1", shardCount: 4, shardDeadlineAt: new Date(now.getTime() - 1) });
    run("fresh-group", { groupKey: "c:quick:p2", shardCount: 4, shardDeadlineAt: new Date(now.getTime() + 60_000) });
    for (const i of [1, 3]) db.insert(runShards).values({ runId: "late-group", shardIndex: i, shardCount: 4, sourceRunId: `s${i}`, sourceStatus: "complete" }).run();
    expect(closeOverdueGroups(db, now)).toEqual([{ runId: "late-group", missing: [2, 4] }]);
    expect(row("late-group").status).toBe("interrupted");
    expect(row("late-group").statusNote).toBe("Incomplete: shards 2, 4 of 4 never came before the deadline; no regression check was made on a part of the suite.");
    const states = db.select().from(runShards).where(eq(runShards.runId, "late-group")).all().map((s) => `${s.shardIndex}:${s.state}`).sort();
    expect(states).toEqual(["1:received", "2:missing", "3:received", "4:missing"]);
    expect(row("fresh-group").status).toBe("running");
    expect(closeOverdueGroups(db, now)).toEqual([]);
  });
});
