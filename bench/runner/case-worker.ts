/**
 * Worker-thread side of a case (started by bench/runner/pool.ts through worker-boot.mjs).
 *
 * Protocol (parentPort messages):
 *   in  { type: "init", executorModule, context }         → out { type: "ready" } | { type: "fatal", message }
 *   in  { type: "run", spec, repeats, warmup, clock }      → out { type: "done", outcome }
 * Timing: tinybench runs `prepared.solve` exactly `repeats` times after `warmup` untimed solves;
 * all samples are kept (seconds). The report returned is the one of the last timed solve.
 * After each timed repeat the calibration kernel runs once, untimed by tinybench (machine.ts,
 * CaseCalibration); the median of those is the case's calibration.
 */
import { parentPort } from "node:worker_threads";
import { pathToFileURL } from "node:url";
import { Bench } from "tinybench";
import type { CaseExecutor, CreateExecutor, ExecutorContext } from "./executor";
import type { CaseOutcome, CaseReport, CaseSpec } from "../../app/runs/types";
import { CaseCalibration } from "./machine";

let executor: CaseExecutor | null = null;

type InMessage =
  | { type: "init"; executorModule: string; context: ExecutorContext }
  | { type: "run"; spec: CaseSpec; repeats: number; warmup: number; clock: "wall" | "cpu" };

/** CPU milliseconds of this process (user + system), the "cpu" clock. */
const cpuNow = () => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};

async function runCase(spec: CaseSpec, repeats: number, warmup: number, clock: "wall" | "cpu"): Promise<CaseOutcome> {
  const t0 = performance.now();
  const wall = () => (performance.now() - t0) / 1000;
  if (!executor) throw new Error("case worker: not initialised");
  try {
    const prepared = await executor.prepare(spec);
    let report: CaseReport | null = null;
    for (let i = 0; i < warmup; i++) report = await prepared.solve();
    const calibration = new CaseCalibration();
    const bench = new Bench({
      iterations: repeats,
      time: 0,
      warmup: false,
      retainSamples: true,
      throws: true,
      ...(clock === "cpu" ? { now: cpuNow, timerOverhead: 0 } : {}),
    });
    bench.add(
      spec.key,
      async () => {
        report = await prepared.solve();
      },
      { afterEach: () => calibration.tick() },
    );
    await bench.run();
    const task = bench.tasks[0];
    const result = task.result;
    if (result.state !== "completed") {
      const message = result.state === "errored" ? result.error.message : `timing ended in state ${result.state}`;
      return { spec, status: "error", message, report, samples: [], wallSeconds: wall() };
    }
    const samples = Array.from(result.latency.samples ?? [], (ms) => ms / 1000);
    let r = report as CaseReport | null;
    if (r && prepared.finish) r = await prepared.finish(r);
    return { spec, status: r?.status ?? "error", message: r?.message ?? null, report: r, samples, wallSeconds: wall(), calibrationSeconds: calibration.seconds() };
  } catch (err) {
    const e = err as Error;
    return { spec, status: "error", message: `${e.name}: ${e.message}`, report: null, samples: [], wallSeconds: wall() };
  }
}

parentPort!.on("message", async (msg: InMessage) => {
  if (msg.type === "init") {
    try {
      const url = msg.executorModule.startsWith("file:") ? msg.executorModule : pathToFileURL(msg.executorModule).href;
      const mod = (await import(url)) as { createExecutor?: CreateExecutor };
      if (typeof mod.createExecutor !== "function") throw new Error(`${msg.executorModule} does not export createExecutor()`);
      executor = await mod.createExecutor(msg.context);
      parentPort!.postMessage({ type: "ready" });
    } catch (err) {
      parentPort!.postMessage({ type: "fatal", message: (err as Error).message });
    }
  } else if (msg.type === "run") {
    const outcome = await runCase(msg.spec, msg.repeats, msg.warmup, msg.clock ?? "wall");
    parentPort!.postMessage({ type: "done", outcome });
  }
});
