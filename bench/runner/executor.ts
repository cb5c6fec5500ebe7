/**
 * The swappable part of a case: how to load and solve it. A worker imports an executor module
 * (the built-in engine, an external command, or a module named by the suite) and calls
 * `createExecutor(context)` once; for each case it calls `prepare(spec)` outside the timed region
 * and then times `solve()` (tinybench). Whatever solves, the answer is a `CaseReport`.
 */
import type { CaseReport, CaseSpec } from "../../app/runs/types";

export interface ExecutorContext {
  /** Root of the checkout being measured (its problems/ and bench/). */
  root: string;
  /**
   * The problem library's roots in order (the checkout's problems/, then the uploaded folder):
   * `new ProblemLibrary(libraryRoots)` (app/engine/problem/library.ts) finds and loads a problem.
   */
  libraryRoots: string[];
  /** Executor-specific settings from the suite (e.g. the external command). */
  options: Record<string, unknown>;
}

export interface PreparedCase {
  /** One solve; timed by the worker. Must not throw for a solver failure (return a status). */
  solve(): CaseReport | Promise<CaseReport>;
  /** Optional post-processing of the last report, once, outside the timed region (e.g. arc structure). */
  finish?(report: CaseReport): CaseReport | Promise<CaseReport>;
}

export interface CaseExecutor {
  prepare(spec: CaseSpec): PreparedCase | Promise<PreparedCase>;
}

export type CreateExecutor = (context: ExecutorContext) => CaseExecutor | Promise<CaseExecutor>;
