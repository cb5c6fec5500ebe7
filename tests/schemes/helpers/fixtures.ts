/** Compiles a classic-problem fixture (tests/schemes/fixtures/<name>.json) or inline problem JSON. */
import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { compileProblemSource } from "~/engine/problem/compile";
import { formatProblemError } from "~/engine/problem/errors";
import type { CompiledProblem } from "~/engine/problem/types";

export function compileJson(id: string, json: string): CompiledProblem {
  const r = compileProblemSource(id, { problemJson: json });
  if (!r.ok) throw new Error(r.errors.map(formatProblemError).join("\n"));
  return r.problem;
}

export function fixture(name: string): CompiledProblem {
  const file = fileURLToPath(new URL(`../fixtures/${name}.json`, import.meta.url));
  return compileJson(name, readFileSync(file, "utf8"));
}

/** Least-squares slope of log(err) against log(N): the empirical order p in err ≈ C N^(−p). */
export function fittedOrder(N: number[], err: number[]): number {
  const x = N.map((n) => Math.log(n)), y = err.map((e) => Math.log(e));
  const mx = x.reduce((a, b) => a + b, 0) / x.length, my = y.reduce((a, b) => a + b, 0) / y.length;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < x.length; i++) {
    sxy += (x[i] - mx) * (y[i] - my);
    sxx += (x[i] - mx) ** 2;
  }
  return -sxy / sxx;
}
