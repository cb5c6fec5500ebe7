/**
 * The thread side of the solver pool (app/services/solver-pool.server.ts): reads a problem
 * submission (validate and compile) and, for a trial, solves it once. One task at a time;
 * answers `{ type: "result", id, value }`, or `{ type: "failed", id, message }` for an
 * unexpected exception (a solver failure is a result, never a throw).
 */
import { parentPort } from "node:worker_threads";
import { readProblemSubmission, SCHEMES, trialSolve, type SchemeName } from "~/models/problems.server";
import { deserializeForm, type SolverTask } from "./solver-pool.server";

async function perform(task: SolverTask): Promise<unknown> {
  const form = deserializeForm(task.form);
  if (task.kind === "submission") return { sub: await readProblemSubmission(form, task.fixedId) };
  const sub = await readProblemSubmission(form);
  if (!sub.files) return { sub };
  const scheme = (SCHEMES as readonly string[]).includes(task.scheme) ? (task.scheme as SchemeName) : "hermite-simpson";
  return { sub, trial: await trialSolve(sub.files, sub.id, scheme, task.intervals) };
}

const port = parentPort!;
port.on("message", (m: { type: string; id: number; task: SolverTask }) => {
  if (m.type !== "task") return;
  perform(m.task).then(
    (value) => port.postMessage({ type: "result", id: m.id, value }),
    (err: unknown) => port.postMessage({ type: "failed", id: m.id, message: err instanceof Error ? err.message : String(err) }),
  );
});
port.postMessage({ type: "ready" });
