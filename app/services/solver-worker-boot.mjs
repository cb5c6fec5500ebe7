// Entry of every solver thread of app/services/solver-pool.server.ts: registers tsx's
// TypeScript loader inside the thread (Node 20 threads do not inherit the parent's loader
// hooks, and the built server has none) with the project's tsconfig (for the `~/` paths),
// then imports the TypeScript thread module named in workerData.
import { workerData } from "node:worker_threads";
import { register } from "tsx/esm/api";

register({ tsconfig: workerData.tsconfig });
await import(workerData.entry);
