/**
 * The thread side of the solver pool (app/services/solver-pool.server.ts): reads a problem
 * submission (validate and compile) and, for a trial, solves it once; compiles problems into
 * their page views. One task at a time; answers `{ type: "result", id, value }`, or
 * `{ type: "failed", id, message }` for an unexpected exception (a solver failure is a result,
 * never a throw); a task of several items also sends `{ type: "partial", id, value }` per item.
 */
import { parentPort } from "node:worker_threads";
import { computeProblemView, type ProblemViewAnswer } from "~/models/problem-view";
import { readProblemSubmission, SCHEMES, trialSolve, type SchemeName } from "~/models/problems.server";
import { deserializeForm, type SolverTask } from "./solver-pool.server";

async function perform(task: SolverTask, partial: (value: unknown) => void): Promise<unknown> {
  if (task.kind === "problem-views") {
    // One `partial` answer per problem but the last, which is the task's result: the thread is
    // free again the moment its last answer arrives (a reader's next request finds it idle).
    let last: ProblemViewAnswer | null = null;
    for (const item of task.items) {
      if (last) partial(last);
      let answer: ProblemViewAnswer;
      try {
        answer = computeProblemView(item);
      } catch (err) {
        // a compiler fault, not the file's: still an answer for this problem, not a lost task
        answer = { key: item.key, ok: false, errors: [{ file: item.label, path: "", message: `the compiler failed: ${err instanceof Error ? err.message : String(err)}` }] };
      }
      last = answer;
    }
    return { last };
  }
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
  perform(m.task, (value) => port.postMessage({ type: "partial", id: m.id, value })).then(
    (value) => port.postMessage({ type: "result", id: m.id, value }),
    (err: unknown) => port.postMessage({ type: "failed", id: m.id, message: err instanceof Error ? err.message : String(err) }),
  );
});
port.postMessage({ type: "ready" });
