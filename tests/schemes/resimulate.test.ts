/**
 * Re-simulation (app/engine/analysis/resimulate.ts) against exact answers:
 *  - the closed-form LQ optimum (x = cosh(1 − t)/cosh 1, u = −sinh(1 − t)/cosh 1, fixture lq-scalar)
 *    re-simulates with a final miss below 1e-8 (ODEX at rtol 1e-10);
 *  - a trajectory inconsistent with its control (x ≡ 0 reported, u ≡ 1 on x' = u, T = 1) misses by
 *    exactly 1 (|x_sim(1) − 0| = 1, state scale 1), to 1e-9;
 *  - an Euler solution of x' = u is exact under the held control it implies (miss < 1e-10), while
 *    the same nodes with linearly interpolated control would not be;
 *  - the path violation of u ≤ 0.5 with u ≡ 0.8 held is 0.3 (to 1e-12).
 */
import { describe, expect, it } from "vitest";
import { resimulate } from "~/engine/analysis/resimulate";
import type { Solution } from "~/engine/schemes/types";
import { getScheme } from "~/engine/schemes";
import { solveNlp } from "~/engine/nlp";
import { linearAt } from "~/engine/schemes/interpolation";
import { compileJson, fixture } from "./helpers/fixtures";

function fakeSolution(t: number[], x: (t: number) => number, u: (t: number) => number): Solution {
  const tt = Float64Array.from(t);
  return {
    scheme: "trapezoidal", t: tt, states: [Float64Array.from(t.map(x))], tu: tt, controls: [Float64Array.from(t.map(u))],
    tLambda: null, costates: null, pathMultipliers: null, t0: t[0], tf: t[t.length - 1], objective: 0,
    stateAt: (s, out) => void (out[0] = x(s)),
    controlAt: (s, out) => void (out[0] = u(s)),
  };
}

const grid = Array.from({ length: 11 }, (_, k) => k / 10);

describe("re-simulation", () => {
  const lq = fixture("lq-scalar");
  it("closed-form LQ optimum is a real trajectory", () => {
    const c = Math.cosh(1);
    const r = resimulate(lq, fakeSolution(grid, (t) => Math.cosh(1 - t) / c, (t) => -Math.sinh(1 - t) / c));
    expect(r.ok).toBe(true);
    expect(r.finalMiss).toBeLessThan(1e-8);
  });

  it("an inconsistent trajectory misses by the exact amount", () => {
    const r = resimulate(lq, fakeSolution(grid, () => 0, () => 1));
    expect(Math.abs(r.finalMiss - 1)).toBeLessThan(1e-9);
  });

  it("Euler solutions are exact under their held control", () => {
    const tr = getScheme("euler").transcribe(lq, { intervals: 7 });
    const sol = tr.recover(solveNlp(tr.nlp, { tol: 1e-12 }));
    expect(resimulate(lq, sol).finalMiss).toBeLessThan(1e-10);
    const linear: Solution = { ...sol, controlAt: (s, out) => void (out[0] = linearAt(sol.tu, sol.controls[0], s)) };
    expect(resimulate(lq, linear).finalMiss).toBeGreaterThan(1e-4);
  });

  it("reports the largest path violation", () => {
    const p = compileJson(
      "path-check",
      JSON.stringify({
        format: "arcwatch-problem/1", title: "path check", description: "x' = u with u <= 0.5.", tags: [], constants: {},
        states: [{ name: "x", unit: "-" }], controls: [{ name: "u", unit: "-" }], dynamics: { x: "u" },
        horizon: { initialTime: 0, finalTime: { fixed: 1 } }, initial: { x: 0 },
        path: [{ name: "cap", expr: "u", upper: 0.5 }], objective: { sense: "min", running: "u^2" },
      }),
    );
    const r = resimulate(p, fakeSolution(grid, (t) => 0.8 * t, () => 0.8));
    expect(r.finalMiss).toBeLessThan(1e-9);
    expect(Math.abs(r.maxPathViolation - 0.3)).toBeLessThan(1e-12);
  });
});
