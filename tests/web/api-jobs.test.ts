/**
 * The job queue the worker runs: one job at a time, oldest first; cancel rules; jobs left
 * running by a stopped server are marked died (and their runs interrupted) at start-up; the
 * worker reads the runner's machine-readable progress events (JSON lines), never the bar.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { useTempDatabase } from "../helpers/temp-db";

useTempDatabase("jobs");

const { getDb } = await import("~/db/client.server");
const { jobs, runs, suites } = await import("~/db/schema");
const { enqueueJob, claimNextJob, cancelJob, markDeadJobs, finishJob, heartbeatJob, jobView, labelJobRuns, MAX_JOB_LOG } = await import("~/models/jobs.server");
const { applyRunEvent } = await import("~/services/job-worker.server");
const { parseRunEvent } = await import("~/runs/events");
const { Progress } = await import("../../bench/runner/progress");
const { eq } = await import("drizzle-orm");

const db = () => getDb();

beforeAll(() => {
  db().insert(suites).values({ name: "quick", contentHash: "h".repeat(64), definitionJson: {} }).run();
});

describe("queue", () => {
  it("claims the oldest queued job, and no second one while it runs", () => {
    const a = enqueueJob(db(), { kind: "bench", payload: { suite: "quick", ref: "main" } }, null);
    const b = enqueueJob(db(), { kind: "bench", payload: { suite: "quick" } }, null);
    const claimed = claimNextJob(db(), 4242)!;
    expect(claimed.id).toBe(a.id);
    expect(claimed.status).toBe("running");
    expect(claimed.pid).toBe(4242);
    expect(claimNextJob(db(), 4242)).toBeNull();
    finishJob(db(), a.id, "done", null);
    expect(claimNextJob(db(), 4242)!.id).toBe(b.id);
    finishJob(db(), b.id, "failed", "bench exited with code 1");
    expect(jobView(db(), b.id)!.status).toBe("failed");
    expect(claimNextJob(db(), 4242)).toBeNull();
  });

  it("cancels queued and running jobs only; a cancelled running job stays cancelled when the worker finishes it", () => {
    const q = enqueueJob(db(), { kind: "bench", payload: { suite: "quick" } }, null);
    expect(cancelJob(db(), q.id)).toEqual({ ok: true, status: "cancelled" });
    expect(cancelJob(db(), q.id)).toMatchObject({ ok: false, status: 409 });
    expect(cancelJob(db(), 99999)).toMatchObject({ ok: false, status: 404 });
    const r = enqueueJob(db(), { kind: "bench", payload: { suite: "quick" } }, null);
    expect(claimNextJob(db(), 1)!.id).toBe(r.id);
    expect(cancelJob(db(), r.id).ok).toBe(true);
    // the worker's next heartbeat sees the cancellation
    expect(heartbeatJob(db(), r.id, null, "line\n")).toBe("cancelled");
    finishJob(db(), r.id, "done", null);
    expect(jobView(db(), r.id)!.status).toBe("cancelled");
  });

  it("keeps only the tail of a long log", () => {
    const j = enqueueJob(db(), { kind: "bench", payload: { suite: "quick" } }, null);
    claimNextJob(db(), 1);
    heartbeatJob(db(), j.id, null, "x".repeat(MAX_JOB_LOG));
    heartbeatJob(db(), j.id, null, "END");
    const log = db().select({ log: jobs.log }).from(jobs).where(eq(jobs.id, j.id)).get()!.log;
    expect(log).toHaveLength(MAX_JOB_LOG);
    expect(log.endsWith("END")).toBe(true);
    finishJob(db(), j.id, "done", null);
  });

  it("marks jobs left running by an earlier process as died, and their runs interrupted", () => {
    const j = enqueueJob(db(), { kind: "bench", payload: { suite: "quick", ref: "feature/x" } }, null);
    claimNextJob(db(), 777);
    const suiteId = db().select({ id: suites.id }).from(suites).get()!.id;
    db().insert(runs).values({ id: crypto.randomUUID(), suiteId, commitHash: "c".repeat(40), machineJson: {}, machineKey: "m", startedAt: new Date(), status: "running", jobId: j.id }).run();
    labelJobRuns(db(), j.id, "feature/x");
    const marked = markDeadJobs(db());
    expect(marked).toEqual([{ id: j.id, pid: 777 }]);
    const view = jobView(db(), j.id)!;
    expect(view.status).toBe("died");
    expect(view.error).toMatch(/stopped/);
    const run = db().select().from(runs).where(eq(runs.jobId, j.id)).get()!;
    expect(run.status).toBe("interrupted");
    expect(run.branch).toBe("feature/x");
    expect(markDeadJobs(db())).toEqual([]);
  });
});

describe("progress events", () => {
  it("reads the JSON lines the runner's Progress writes beside its bar (the bar is not parsed)", () => {
    let bar = "";
    let events = "";
    const sink = { isTTY: false, write: (s: string) => ((bar += s), true) } as unknown as NodeJS.WriteStream;
    const p = new Progress(3, sink, { write: (line: string) => void (events += line) });
    p.begin("run-1", ["pika-rover-dash/trapezoidal/20", "pika-rover-dash/lgr/8x4", "pika-rover-dash/euler/20"]);
    p.start("pika-rover-dash/trapezoidal/20");
    p.finish("pika-rover-dash/trapezoidal/20", "optimal");
    p.start("pika-rover-dash/lgr/8x4");
    p.finish("pika-rover-dash/lgr/8x4", "timeout");
    const parsed = events.trim().split("\n").map(parseRunEvent);
    expect(parsed.every((e) => e !== null)).toBe(true);
    expect(parsed.map((e) => e!.event)).toEqual(["begin", "start", "finish", "start", "finish"]);
    expect(parsed[2]).toMatchObject({ event: "finish", done: 1, total: 3, key: "pika-rover-dash/trapezoidal/20", status: "optimal" });
    expect(parsed[4]).toMatchObject({ event: "finish", done: 2, total: 3, key: "pika-rover-dash/lgr/8x4", status: "timeout" });
    // The job's progress record follows the events.
    const progress = { done: 0, total: 0, current: null, lastCase: null, lastStatus: null, elapsedSeconds: 0, etaSeconds: null, commit: null, runId: null, phase: "running" as const };
    const order: string[] = [];
    for (const e of parsed) applyRunEvent(progress, e!, order);
    expect(progress).toMatchObject({ runId: "run-1", done: 2, total: 3, lastCase: "pika-rover-dash/lgr/8x4", lastStatus: "timeout", current: "pika-rover-dash/euler/20" });
    expect(progress.etaSeconds).not.toBeNull();
    // The human bar is still printed, and is not an event.
    expect(bar).toMatch(/2\/3 .*pika-rover-dash\/lgr\/8x4: timeout/);
    expect(parseRunEvent(bar.trim().split("\n")[0]!)).toBeNull();
    expect(parseRunEvent("run 3f… · complete")).toBeNull();
  });
});
