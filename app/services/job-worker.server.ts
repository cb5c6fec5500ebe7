/**
 * The job worker: one per server process, so one run per machine at a time (timings stay clean).
 *
 * Loop (every POLL_MS): claim the oldest queued job when none runs → `git worktree add --detach`
 * the job's commit into its own folder (under the server's folder, so that it finds the server's
 * node_modules by Node's upward search) → run the same
 * command line as a person would there:
 *     node --import tsx bench/run.ts --suite <suite> --job <id> --db <this database> --base-url <url>
 * so the code measured is exactly that commit's code, and results arrive through the one
 * recording path (app/models/recording.server.ts). The child's output is appended to the job's
 * log. Progress comes from a machine-readable stream: the child writes JSON lines
 * (app/runs/events.ts) to file descriptor 3 (ARCWATCH_EVENTS_FD=3), which become `progress_json`;
 * a commit older than that stream leaves fd 3 silent, and then the count of its recorded cases in
 * the database is the progress. Every heartbeat reads the job's status back: "cancelled" (set by the API)
 * sends SIGTERM, and the runner marks its run interrupted, keeping the finished cases.
 * At start-up, jobs left "running" by an earlier process are marked "died" (models/jobs.server.ts).
 * An "ab" job (interleaved A/B of two commits) goes to app/services/ab-job.server.ts instead.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { databasePath, getDb, type Db } from "~/db/client.server";
import { benchJobPayload, claimNextJob, finishJob, heartbeatJob, labelJobRuns, markDeadJobs, runOfJob, setJobPid, type BenchProgress } from "~/models/jobs.server";
import { caseCountOfRun } from "~/models/runs.server";
import { problemLibraryFor } from "~/models/library.server";
import { RUN_EVENTS_FD_ENV, type RunEvent } from "~/runs/events";
import { canonicalJson, expandCases, suitePath } from "~/runs/suite";
import { problemCheckSuite } from "~/runs/suite-changes";
import { loadSuiteWithChanges } from "~/models/suite-changes.server";
import os from "node:os";
import type { JobRow } from "~/db/schema";
import { runAbJob } from "./ab-job.server";
import { afterAbJob } from "./ab-confirm.server";
import { onRunEvents, superviseJobChild, whenUnlocked } from "./job-child.server";
import { addWorktree, pruneWorktrees, removeWorktree, repoRoot, resolveRef } from "./git.server";

const POLL_MS = 1000;

/** Folds one runner event into the job's progress. */
export function applyRunEvent(progress: BenchProgress, e: RunEvent, order: string[]): void {
  progress.done = e.done;
  progress.total = e.total;
  if (e.event === "begin") {
    progress.runId = e.runId;
    order.splice(0, order.length, ...e.cases);
    progress.current = order[0] ?? null;
  } else if (e.event === "start") {
    progress.current = e.running.join(", ") || e.key;
  } else if (e.event === "finish") {
    Object.assign(progress, { lastCase: e.key, lastStatus: e.status, etaSeconds: e.etaSeconds, current: e.running.join(", ") || (order[e.done] ?? null) });
  } else if (e.event === "trial") {
    progress.current = `${e.key} · block ${e.block + 1} · ${e.side === "A" ? "A (base)" : "B (head)"}`;
    const rate = progress.elapsedSeconds > 0 && e.done > 0 ? progress.elapsedSeconds / e.done : null;
    progress.etaSeconds = rate !== null ? rate * (e.total - e.done) : null;
  } else {
    progress.current = null;
  }
}

/** True when `pid` is a bench command (so a reused pid of some other program is never signalled). */
function isBenchProcess(pid: number): boolean {
  try {
    return fs.readFileSync(`/proc/${pid}/cmdline`, "utf8").includes("bench/run.ts");
  } catch {
    return false;
  }
}

interface WorkerState {
  timer: NodeJS.Timeout | null;
  busy: boolean;
  child: ChildProcess | null;
}
const key = Symbol.for("arcwatch.jobWorker");
type G = typeof globalThis & { [key]?: WorkerState };

/**
 * Starts the worker once per process (idempotent). ARCWATCH_JOB_WORKER=0 disables it; servers
 * started by tests (VITEST set) run it only with ARCWATCH_JOB_WORKER=1, so that a test which
 * merely queues a job does not start a real suite run in the background.
 */
export function startJobWorker(): void {
  if (process.env.ARCWATCH_JOB_WORKER === "0") return;
  if (process.env.VITEST && process.env.ARCWATCH_JOB_WORKER !== "1") return;
  const g = globalThis as G;
  if (g[key]) return;
  const state: WorkerState = { timer: null, busy: false, child: null };
  g[key] = state;
  const db = getDb();
  for (const d of markDeadJobs(db)) {
    if (d.pid && isBenchProcess(d.pid)) {
      try {
        process.kill(d.pid, "SIGTERM");
      } catch {
        /* already gone */
      }
    }
    console.log(`[arcwatch] job ${d.id} marked died (its worker stopped before it finished)`);
    // An A/B that died cannot confirm: its findings stand unconfirmed and any held e-mail goes out saying so.
    void afterAbJob(db, d.id, { error: "the worker stopped (server restart or crash) before the A/B finished" }).catch((err) => console.error("[arcwatch] A/B check:", err));
  }
  void pruneWorktrees().catch(() => undefined);
  state.timer = setInterval(() => {
    if (state.busy) return;
    state.busy = true;
    tick(db, state)
      .catch((err) => console.error("[arcwatch] job worker:", err))
      .finally(() => (state.busy = false));
  }, POLL_MS);
  state.timer.unref();
  const stop = () => {
    state.child?.kill("SIGTERM");
  };
  process.once("exit", stop);
}

/**
 * The server's own tsx loader, by absolute URL: the worktree has no node_modules of its own and
 * finds the server's by walking up (worktrees live under the server's folder, see git.server.ts).
 */
function tsxLoader(): string {
  return pathToFileURL(path.resolve("node_modules", "tsx", "dist", "loader.mjs")).href;
}

/** Claims and runs the next queued job, if any (one per call; exported for tests). */
export async function runNextJob(db: Db, state: WorkerState = { timer: null, busy: false, child: null }): Promise<number | null> {
  const job = claimNextJob(db, process.pid);
  if (!job) return null;
  if (job.kind === "ab") await runAbJob(db, job, (c) => (state.child = c));
  else await runBenchJob(db, job, state);
  return job.id;
}

async function tick(db: Db, state: WorkerState): Promise<void> {
  await runNextJob(db, state);
}

async function runBenchJob(db: Db, job: JobRow, state: WorkerState): Promise<void> {
  let log = "";
  const append = (s: string) => (log += s);
  let worktree: string | null = null;
  let generated: string | null = null;
  try {
    if (job.kind !== "bench") throw new Error(`unknown job kind "${job.kind}"`);
    const payload = benchJobPayload.parse(job.payloadJson);
    const root = repoRoot();
    const commit = await resolveRef(payload.commit ?? payload.ref ?? "HEAD", root);
    if (!commit) throw new Error(`commit ${payload.commit ?? payload.ref ?? "HEAD"} not found in ${root}`);
    const progress: BenchProgress = { done: 0, total: 0, current: null, lastCase: null, lastStatus: null, elapsedSeconds: 0, etaSeconds: null, commit, runId: null, phase: "checkout" };
    append(`$ git worktree add --detach <worktree> ${commit}\n`);
    heartbeatJob(db, job.id, progress, log);
    log = "";
    worktree = await addWorktree(job.id, commit, root);
    // "Run it now" from a problem page: a generated one-problem suite, outside the worktree (which stays clean)
    let suiteArg = payload.suite;
    if (payload.problem) {
      generated = fs.mkdtempSync(path.join(os.tmpdir(), `arcwatch-job-${job.id}-`));
      suiteArg = path.join(generated, `${payload.suite}.json`);
      fs.writeFileSync(suiteArg, `${canonicalJson(problemCheckSuite(payload.problem))}\n`);
    }
    let order: string[] = [];
    try {
      const s = loadSuiteWithChanges(db, suitePath(suiteArg, worktree));
      order = expandCases(s.definition, problemLibraryFor(db, worktree)).map((c) => c.key);
    } catch (err) {
      append(`(case list unavailable: ${(err as Error).message})\n`);
    }
    Object.assign(progress, { total: order.length, current: order[0] ?? null, phase: "running" });
    const args = ["--import", tsxLoader(), "bench/run.ts", "--suite", suiteArg, "--job", String(job.id), "--db", databasePath(), "--base-url", process.env.ARCWATCH_BASE_URL ?? `http://${process.env.HOST ?? "127.0.0.1"}:${process.env.PORT ?? 3000}`];
    append(`$ cd <worktree> && node ${args.join(" ")}\n`);
    const child = spawn(process.execPath, args, {
      cwd: worktree,
      env: { ...process.env, ARCWATCH_DB: databasePath(), ARCWATCH_JOB_WORKER: "0", FORCE_COLOR: "0", [RUN_EVENTS_FD_ENV]: "3" },
      stdio: ["ignore", "pipe", "pipe", "pipe"],
    });
    state.child = child;
    if (child.pid) setJobPid(db, job.id, child.pid);
    const onData = (d: Buffer) => append(d.toString("utf8"));
    child.stdout!.on("data", onData);
    child.stderr!.on("data", onData);
    let sawEvents = false;
    onRunEvents(child, (e) => {
      sawEvents = true;
      applyRunEvent(progress, e, order);
    });
    const code = await superviseJobChild(child, (elapsed) => {
      progress.elapsedSeconds = elapsed;
      progress.runId ??= runOfJob(db, job.id)?.id ?? null;
      // A commit whose runner writes no events: the cases it has recorded so far.
      if (!sawEvents && progress.runId) progress.done = caseCountOfRun(db, progress.runId);
      if (progress.runId && payload.ref && !/^[0-9a-f]{7,40}$/.test(payload.ref)) labelJobRuns(db, job.id, payload.ref);
      const status = heartbeatJob(db, job.id, progress, log);
      log = "";
      return status;
    });
    state.child = null;
    progress.phase = "finishing";
    if (payload.ref && !/^[0-9a-f]{7,40}$/.test(payload.ref)) labelJobRuns(db, job.id, payload.ref);
    progress.runId ??= runOfJob(db, job.id)?.id ?? null;
    progress.current = null;
    append(`\n[exit ${code}]\n`);
    await whenUnlocked(() => heartbeatJob(db, job.id, progress, log));
    log = "";
    // 0: fine; 3: finished with new regressions (a result, not a failure); 130: interrupted.
    if (code === 0 || code === 3) await whenUnlocked(() => finishJob(db, job.id, "done", null));
    else if (code === 130) await whenUnlocked(() => finishJob(db, job.id, "cancelled", "Interrupted."));
    else await whenUnlocked(() => finishJob(db, job.id, "failed", `bench exited with code ${code}`));
  } catch (err) {
    append(`\n${(err as Error).message}\n`);
    await whenUnlocked(() => heartbeatJob(db, job.id, null, log));
    await whenUnlocked(() => finishJob(db, job.id, "failed", (err as Error).message.slice(0, 2000)));
  } finally {
    if (worktree) await removeWorktree(worktree).catch(() => undefined);
    if (generated) fs.rmSync(generated, { recursive: true, force: true });
  }
}
