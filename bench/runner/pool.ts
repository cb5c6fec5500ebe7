/**
 * Runs cases in worker threads, `jobs` at a time, each within a wall-clock budget.
 *
 * A worker is started once and reused for many cases (loading the engine costs ~0.5 s). A case
 * that overruns its budget gets its worker terminated (`Worker.terminate()` stops the thread even
 * inside a tight numeric loop) and is reported as status "timeout"; a fresh worker takes its place
 * and the suite goes on. A worker that dies reports its case as "error". Aborting (SIGINT/SIGTERM
 * in the command line) terminates all workers and resolves with the cases that finished.
 */
import { Worker } from "node:worker_threads";
import path from "node:path";
import { fileURLToPath } from "node:url";
import type { ExecutorContext } from "./executor";
import type { CaseOutcome, CaseSpec } from "../../app/runs/types";

const BOOT = fileURLToPath(new URL("./worker-boot.mjs", import.meta.url));
const ENTRY = new URL("./case-worker.ts", import.meta.url).href;

export interface PoolOptions {
  jobs: number;
  budgetSeconds: number;
  repeats: number;
  warmup: number;
  clock?: "wall" | "cpu";
  /** Path of the executor module the workers import. */
  executorModule: string;
  context: ExecutorContext;
  /** tsconfig.json for the workers' TypeScript loader (default: <context.root>/tsconfig.json). */
  tsconfig?: string;
  signal?: AbortSignal;
  onStart?: (spec: CaseSpec) => void;
  /** Called as each case finishes (recording happens here, in order of completion). */
  onDone?: (outcome: CaseOutcome) => void;
}

interface Slot {
  worker: Worker;
  ready: Promise<void>;
}

function startWorker(opts: PoolOptions): Slot {
  const worker = new Worker(BOOT, {
    workerData: { entry: ENTRY, tsconfig: opts.tsconfig ?? path.join(opts.context.root, "tsconfig.json") },
    // Anything a solver prints goes to stderr, never into the command's stdout (which may be --json).
    stdout: true,
    stderr: true,
  });
  worker.stdout.pipe(process.stderr, { end: false });
  worker.stderr.pipe(process.stderr, { end: false });
  const ready = new Promise<void>((resolve, reject) => {
    const onMessage = (m: { type: string; message?: string }) => {
      if (m.type === "ready") {
        worker.off("message", onMessage);
        worker.off("error", onError);
        resolve();
      } else if (m.type === "fatal") reject(new Error(m.message));
    };
    const onError = (e: Error) => reject(e);
    worker.on("message", onMessage);
    worker.once("error", onError);
  });
  worker.postMessage({ type: "init", executorModule: opts.executorModule, context: opts.context });
  return { worker, ready };
}

/** Runs one case on a ready worker; resolves with its outcome, or a timeout/error outcome. */
function runOn(slot: Slot, spec: CaseSpec, opts: PoolOptions): Promise<{ outcome: CaseOutcome; workerAlive: boolean }> {
  return new Promise((resolve) => {
    const t0 = performance.now();
    let settled = false;
    const finish = (outcome: CaseOutcome, workerAlive: boolean) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      slot.worker.off("message", onMessage);
      slot.worker.off("error", onError);
      slot.worker.off("exit", onExit);
      opts.signal?.removeEventListener("abort", onAbort);
      resolve({ outcome, workerAlive });
    };
    const failed = (status: string, message: string): CaseOutcome => ({
      spec,
      status,
      message,
      report: null,
      samples: [],
      wallSeconds: (performance.now() - t0) / 1000,
    });
    const onMessage = (m: { type: string; outcome?: CaseOutcome }) => {
      if (m.type === "done" && m.outcome) finish(m.outcome, true);
    };
    const onError = (e: Error) => finish(failed("error", `worker crashed: ${e.message}`), false);
    const onExit = (code: number) => finish(failed("error", `worker exited with code ${code}`), false);
    const onAbort = () => {
      void slot.worker.terminate();
      finish(failed("interrupted", "run interrupted"), false);
    };
    const timer = setTimeout(() => {
      void slot.worker.terminate();
      finish(failed("timeout", `exceeded the time budget of ${opts.budgetSeconds} s`), false);
    }, opts.budgetSeconds * 1000);
    slot.worker.on("message", onMessage);
    slot.worker.once("error", onError);
    slot.worker.once("exit", onExit);
    opts.signal?.addEventListener("abort", onAbort, { once: true });
    slot.worker.postMessage({ type: "run", spec, repeats: opts.repeats, warmup: opts.warmup, clock: opts.clock ?? "wall" });
  });
}

/** Runs all cases; resolves with the finished outcomes (interrupted ones are not included). */
export async function runCases(cases: CaseSpec[], opts: PoolOptions): Promise<CaseOutcome[]> {
  const queue = [...cases];
  const done: CaseOutcome[] = [];
  const lanes = Math.max(1, Math.min(opts.jobs, cases.length));
  const lane = async () => {
    let slot: Slot | null = null;
    try {
      while (queue.length > 0 && !opts.signal?.aborted) {
        if (!slot) slot = startWorker(opts);
        try {
          await slot.ready;
        } catch (err) {
          // The executor could not even be loaded: every remaining case would fail the same way.
          const spec = queue.shift()!;
          const outcome: CaseOutcome = { spec, status: "error", message: `executor failed to load: ${(err as Error).message}`, report: null, samples: [], wallSeconds: 0 };
          done.push(outcome);
          opts.onDone?.(outcome);
          void slot.worker.terminate();
          slot = null;
          continue;
        }
        if (opts.signal?.aborted) break;
        const spec = queue.shift();
        if (!spec) break;
        opts.onStart?.(spec);
        const { outcome, workerAlive } = await runOn(slot, spec, opts);
        if (outcome.status === "interrupted") break;
        done.push(outcome);
        opts.onDone?.(outcome);
        if (!workerAlive) slot = null;
      }
    } finally {
      if (slot) await slot.worker.terminate();
    }
  };
  await Promise.all(Array.from({ length: lanes }, lane));
  return done;
}
