// Entry of every solver thread of app/services/solver-pool.server.ts: registers tsx's
// TypeScript loader inside the thread (Node 20 threads do not inherit the parent's loader
// hooks, and the built server has none) with the project's tsconfig (for the `~/` paths),
// then imports the TypeScript thread module named in workerData.
//
// First it lowers its own scheduling priority (nice ARCWATCH_SOLVER_NICE, default 10): on
// Linux a nice value belongs to a thread, and setpriority(PRIO_PROCESS, 0) changes the calling
// thread only, so the server's request thread keeps its priority while solves share what is
// left. Elsewhere the call may change the whole process, so it is made on Linux only.
import os from "node:os";
import { workerData } from "node:worker_threads";
import { register } from "tsx/esm/api";

const nice = Number(process.env.ARCWATCH_SOLVER_NICE ?? 10);
if (process.platform === "linux" && Number.isInteger(nice) && nice > 0 && nice <= 19) {
  try {
    os.setPriority(0, nice);
  } catch {
    /* not permitted here: the thread keeps the server's priority */
  }
}

register({ tsconfig: workerData.tsconfig });
await import(workerData.entry);
