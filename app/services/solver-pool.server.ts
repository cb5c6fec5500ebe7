/**
 * Solver work asked for by a web request (a problem submission's compile and the trial solve)
 * runs here, in a small pool of worker threads, never on the server's request thread.
 *
 * - Size: ARCWATCH_SOLVER_WORKERS threads (default: cores − 1, at least 1, at most 4), started
 *   on first use and kept (loading the engine in a thread costs about a second).
 * - Queue: at most ARCWATCH_SOLVER_QUEUE tasks wait (default 8). A full queue throws
 *   `SolverPoolBusy`, which routes answer 503 with Retry-After.
 * - Hard wall-clock limit per task, from the moment a thread takes it: past it the thread is
 *   terminated (`Worker.terminate()` stops it even inside a numeric loop) and replaced; the
 *   task resolves with a `timeout` outcome. The solver's own time limit covers iterations only.
 *   A task made of several items (the problem views) posts a `partial` answer per item but the
 *   last (the result); each restarts the clock, so the limit holds per item and a slow item
 *   stops only the items after it.
 * - Memory: each thread's heap is capped (resourceLimits), so one huge problem cannot take
 *   the server down; a thread that dies reports its task as failed.
 *
 * Threads load app/services/solver-worker.ts through tsx (as the bench runner's threads do),
 * found from the project root, so the same code runs under `npm start`'s built server, the
 * dev server and tests.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { Worker } from "node:worker_threads";
import { data } from "react-router";
import type { ProblemViewRequest } from "~/models/problem-view";
import { TRIAL_MAX_SECONDS, type Submission, type TrialResult } from "~/models/problems.server";

export type SolverTask =
  | { kind: "submission"; form: SerializedForm; fixedId?: string }
  | { kind: "trial"; form: SerializedForm; scheme: string; intervals: number }
  | { kind: "problem-views"; items: ProblemViewRequest[] };

/** A form's entries in a shape that crosses to a thread: strings, and files as bytes. */
export type SerializedForm = [string, string | { name: string; type: string; bytes: Uint8Array }][];

export type TaskOutcome<T> = { ok: true; value: T } | { ok: false; reason: "timeout" | "crashed"; message: string };

export class SolverPoolBusy extends Error {
  constructor(readonly retryAfterSeconds: number) {
    super(`The server is busy with other solves; try again in ${retryAfterSeconds} s.`);
  }
}

/** A 503 answer for a full queue (JSON on the API). */
export function busyResponse(err: SolverPoolBusy): Response {
  return Response.json({ error: err.message }, { status: 503, headers: { "Retry-After": String(err.retryAfterSeconds) } });
}

/** A 503 for a page's loader to throw: the error page says why, and Retry-After goes out with it (the route's `headers` passes `errorHeaders` on). */
export function busyPage(err: SolverPoolBusy) {
  return data({ message: err.message }, { status: 503, headers: { "Retry-After": String(err.retryAfterSeconds) } });
}

/** A 503 answer for a page's form: the message at the form, what was typed kept (files' names dropped). */
export function busyFormResponse(err: SolverPoolBusy, form: FormData) {
  const values = Object.fromEntries([...form.entries()].filter((e): e is [string, string] => typeof e[1] === "string"));
  return data({ errors: { form: err.message } as Record<string, string>, values }, { status: 503, headers: { "Retry-After": String(err.retryAfterSeconds) } });
}

function projectRoot(): string {
  let dir = path.dirname(fileURLToPath(import.meta.url));
  for (;;) {
    if (fs.existsSync(path.join(dir, "package.json")) && fs.existsSync(path.join(dir, "app", "services"))) return dir;
    const up = path.dirname(dir);
    if (up === dir) throw new Error("solver pool: project root (package.json beside app/) not found");
    dir = up;
  }
}

function envInt(name: string, fallback: number, min: number, max: number): number {
  const v = Number(process.env[name]);
  return Number.isInteger(v) && v >= min && v <= max ? v : fallback;
}

export function poolSize(): number {
  return envInt("ARCWATCH_SOLVER_WORKERS", Math.max(1, Math.min(4, os.availableParallelism() - 1)), 1, 16);
}
export function queueLimit(): number {
  return envInt("ARCWATCH_SOLVER_QUEUE", 8, 0, 1000);
}

interface Slot {
  worker: Worker;
  ready: Promise<void>;
  busy: boolean;
}

interface Pending {
  task: SolverTask;
  timeoutMs: number;
  resolve: (o: TaskOutcome<unknown>) => void;
  onPartial?: (value: unknown) => void;
}

let nextId = 1;

class SolverPool {
  private slots: Slot[] = [];
  private queue: Pending[] = [];
  private readonly root = projectRoot();

  constructor(
    private readonly size: number,
    private readonly maxQueue: number,
  ) {}

  stats() {
    return { size: this.size, busy: this.slots.filter((s) => s.busy).length, queued: this.queue.length, maxQueue: this.maxQueue };
  }

  /**
   * Runs `task` on a thread. `onPartial` receives each partial answer of a task of several items
   * (each restarts the wall-clock limit). Throws SolverPoolBusy at once when the queue is full.
   */
  run<T>(task: SolverTask, timeoutMs: number, onPartial?: (value: unknown) => void): Promise<TaskOutcome<T>> {
    const idle = this.idleSlot();
    if (!idle && this.queue.length >= this.maxQueue) {
      // A rough wait: the queue ahead, one task per thread at a time, about 10 s each (common practice, no source).
      throw new SolverPoolBusy(Math.max(5, Math.ceil(((this.queue.length + 1) / this.size) * 10)));
    }
    return new Promise((resolve) => {
      const pending: Pending = { task, timeoutMs, resolve: resolve as (o: TaskOutcome<unknown>) => void, ...(onPartial ? { onPartial } : {}) };
      if (idle) this.dispatch(idle, pending);
      else this.queue.push(pending);
    });
  }

  private idleSlot(): Slot | undefined {
    const free = this.slots.find((s) => !s.busy);
    if (free) return free;
    if (this.slots.length < this.size) {
      const slot = this.start();
      this.slots.push(slot);
      return slot;
    }
    return undefined;
  }

  private start(): Slot {
    const worker = new Worker(path.join(this.root, "app", "services", "solver-worker-boot.mjs"), {
      workerData: { entry: pathToFileURL(path.join(this.root, "app", "services", "solver-worker.ts")).href, tsconfig: path.join(this.root, "tsconfig.json") },
      resourceLimits: { maxOldGenerationSizeMb: 768 },
      stdout: true,
      stderr: true,
    });
    worker.stdout.pipe(process.stderr, { end: false });
    worker.stderr.pipe(process.stderr, { end: false });
    worker.unref();
    const ready = new Promise<void>((resolve, reject) => {
      const onMessage = (m: { type: string }) => {
        if (m.type !== "ready") return;
        worker.off("message", onMessage);
        resolve();
      };
      worker.on("message", onMessage);
      worker.once("error", reject);
      worker.once("exit", (code) => reject(new Error(`solver thread exited with code ${code} while starting`)));
    });
    ready.catch(() => {});
    return { worker, ready, busy: false };
  }

  private replace(slot: Slot): void {
    const i = this.slots.indexOf(slot);
    if (i >= 0) this.slots.splice(i, 1);
    void slot.worker.terminate();
  }

  private dispatch(slot: Slot, pending: Pending): void {
    slot.busy = true;
    const id = nextId++;
    let timer: NodeJS.Timeout | undefined;
    let settled = false;
    const finish = (outcome: TaskOutcome<unknown>, keep: boolean) => {
      if (settled) return;
      settled = true;
      if (timer) clearTimeout(timer);
      slot.worker.off("message", onMessage);
      slot.worker.off("error", onError);
      slot.worker.off("exit", onExit);
      if (keep) slot.busy = false;
      else this.replace(slot);
      pending.resolve(outcome);
      this.drain();
    };
    const startClock = () => {
      if (timer) clearTimeout(timer);
      timer = setTimeout(
        () => finish({ ok: false, reason: "timeout", message: `Stopped after ${Math.round(pending.timeoutMs / 1000)} s, the limit for work done for a web request.` }, false),
        pending.timeoutMs,
      );
    };
    const onMessage = (m: { type: string; id?: number; value?: unknown; message?: string }) => {
      if (m.id !== id || settled) return;
      if (m.type === "partial") {
        startClock();
        pending.onPartial?.(m.value);
      } else if (m.type === "result") finish({ ok: true, value: m.value }, true);
      else if (m.type === "failed") finish({ ok: false, reason: "crashed", message: m.message ?? "The solver thread failed." }, true);
    };
    const onError = (e: Error) => finish({ ok: false, reason: "crashed", message: `The solver thread failed: ${e.message}` }, false);
    const onExit = (code: number) => finish({ ok: false, reason: "crashed", message: `The solver thread stopped (exit code ${code}).` }, false);
    slot.worker.on("message", onMessage);
    slot.worker.once("error", onError);
    slot.worker.once("exit", onExit);
    slot.ready.then(
      () => {
        if (settled) return;
        startClock();
        slot.worker.postMessage({ type: "task", id, task: pending.task });
      },
      (err: Error) => finish({ ok: false, reason: "crashed", message: `The solver thread could not start: ${err.message}` }, false),
    );
  }

  private drain(): void {
    while (this.queue.length > 0) {
      const slot = this.idleSlot();
      if (!slot) return;
      this.dispatch(slot, this.queue.shift()!);
    }
  }

  async close(): Promise<void> {
    const slots = this.slots;
    this.slots = [];
    await Promise.all(slots.map((s) => s.worker.terminate()));
  }
}

const globalKey = Symbol.for("arcwatch.solverPool");
type G = typeof globalThis & { [globalKey]?: SolverPool };

/** The process-wide pool (kept on globalThis so dev reloads do not start a second one). */
export function solverPool(): SolverPool {
  const g = globalThis as G;
  g[globalKey] ??= new SolverPool(poolSize(), queueLimit());
  return g[globalKey];
}

/** Reads a form's entries into the shape a thread accepts (file bytes are read here; the body is already capped). */
export async function serializeForm(form: FormData): Promise<SerializedForm> {
  const out: SerializedForm = [];
  for (const [k, v] of form.entries()) {
    if (typeof v === "string") out.push([k, v]);
    else out.push([k, { name: v.name, type: v.type, bytes: new Uint8Array(await v.arrayBuffer()) }]);
  }
  return out;
}

/** The thread side: back to FormData. */
export function deserializeForm(entries: SerializedForm): FormData {
  const form = new FormData();
  for (const [k, v] of entries) {
    if (typeof v === "string") form.append(k, v);
    else form.append(k, new File([new Uint8Array(v.bytes)], v.name, { type: v.type }));
  }
  return form;
}

// ---------------------------------------------------------------------------------------
// The tasks routes ask for
// ---------------------------------------------------------------------------------------

/** Largest problem a trial solve takes, checked before any work (a trial runs for a person waiting at a form). */
export const TRIAL_MAX_STATES = 40;
export const TRIAL_MAX_CONTROLS = 20;
/**
 * Hard wall-clock limit of a trial (ms): the trial's 20 s solver limit covers iterations only,
 * not compiling or assembling. ARCWATCH_TRIAL_WALL_SECONDS overrides it (tests, slow machines).
 */
export function trialWallMs(): number {
  return envInt("ARCWATCH_TRIAL_WALL_SECONDS", TRIAL_MAX_SECONDS + 10, 1, 3600) * 1000;
}
export const SUBMISSION_WALL_MS = 20_000;

/** Field errors for a problem too large to try, from the submitted JSON alone (no compiling). */
export function trialSizeErrors(form: SerializedForm): Record<string, string> | null {
  const file = form.find(([k, v]) => k === "problemFile" && typeof v !== "string" && v.bytes.byteLength > 0)?.[1];
  const pasted = form.find(([k]) => k === "problemJson")?.[1];
  const text = file && typeof file !== "string" ? new TextDecoder().decode(file.bytes) : typeof pasted === "string" ? pasted : "";
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch {
    return null; // the compile step reports the syntax error at its position
  }
  const d = (doc ?? {}) as { states?: unknown; controls?: unknown };
  const states = Array.isArray(d.states) ? d.states.length : 0;
  const controls = Array.isArray(d.controls) ? d.controls.length : 0;
  if (states > TRIAL_MAX_STATES || controls > TRIAL_MAX_CONTROLS)
    return {
      problemJson: `A trial solve takes at most ${TRIAL_MAX_STATES} states and ${TRIAL_MAX_CONTROLS} controls (this problem has ${states} and ${controls}). Save it and solve it with the bench command instead.`,
    };
  return null;
}

function failedSubmission(form: SerializedForm, message: string): Submission {
  const str = (k: string) => {
    const v = form.find(([key]) => key === k)?.[1];
    return typeof v === "string" ? v : "";
  };
  const mode = str("mode") === "form" ? "form" : "upload";
  return { mode, id: str("id"), files: null, values: { mode, id: str("id"), problemJson: str("problemJson"), referenceCsv: str("referenceCsv") }, errors: { form: message } };
}

/** `readProblemSubmission` (validate and compile) on a solver thread. Throws SolverPoolBusy when the queue is full. */
export async function readSubmissionOffThread(form: FormData, fixedId?: string): Promise<Submission> {
  const entries = await serializeForm(form);
  const out = await solverPool().run<{ sub: Submission }>({ kind: "submission", form: entries, ...(fixedId ? { fixedId } : {}) }, SUBMISSION_WALL_MS);
  return out.ok ? out.value.sub : failedSubmission(entries, `Checking the problem failed: ${out.message}`);
}

/**
 * Validate, compile and solve once, on a solver thread, after the size check. Resolves with
 * the submission and either the trial or an error message for the form. Throws
 * SolverPoolBusy when the queue is full.
 */
export async function trialOffThread(form: FormData, scheme: string, intervals: number): Promise<{ sub: Submission; trial?: TrialResult; error?: string }> {
  const entries = await serializeForm(form);
  const tooBig = trialSizeErrors(entries);
  if (tooBig) {
    const sub = failedSubmission(entries, "The problem is too large for a trial solve.");
    return { sub: { ...sub, errors: tooBig } };
  }
  const out = await solverPool().run<{ sub: Submission; trial?: TrialResult | { error: string } }>({ kind: "trial", form: entries, scheme, intervals }, trialWallMs());
  if (!out.ok) return { sub: failedSubmission(entries, ""), error: out.reason === "timeout" ? `The trial solve was stopped: ${out.message}` : out.message };
  const { sub, trial } = out.value;
  if (trial && "error" in trial) return { sub, error: trial.error };
  return { sub, trial };
}
