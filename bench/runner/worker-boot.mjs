// Entry of every case worker thread: registers tsx's TypeScript loader inside the worker (Node 20
// workers do not inherit the parent's --import hooks) with the measured checkout's tsconfig, then
// imports the TypeScript worker module named in workerData.
import { workerData } from "node:worker_threads";
import { register } from "tsx/esm/api";

register({ tsconfig: workerData.tsconfig });
await import(workerData.entry);
