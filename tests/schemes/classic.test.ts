/**
 * Classic published problems (fixtures in tests/schemes/fixtures/, each with its source) solved by
 * every scheme at a stated mesh; the objective must match the published or analytic value within
 * the tolerance given per case (set from the scheme's order at that mesh, with margin).
 *
 * Sources:
 *  - COPS Goddard rocket: Dolan, Moré and Munson, Benchmarking Optimization Software with COPS 3.0,
 *    ANL/MCS-TM-273, 2004: h(tf) = 1.01283 with the trapezoidal rule at 400 intervals; the
 *    continuous optimum is about 1.012837 (value as quoted in our issue tracker).
 *  - Bryson–Denham, ℓ = 1/6: J = 4/(9ℓ) = 8/3 (Bryson, Denham and Dreyfus, AIAA J. 1(11), 1963;
 *    Bryson and Ho, Applied Optimal Control, 1975, §3.11).
 *  - Low-thrust orbit raising: r(tf) ≈ 1.5253 at tf = 3.32 (Bryson and Ho 1975, pp. 66–69; value
 *    recalled from memory, so the tolerance is 2e-4).
 *  - Brachistochrone to the line x = 1 with g = 1: tf = √(π/g) (cycloid with φ_f = π, derivation
 *    in the fixture's description).
 *  - Scalar LQ: J = tanh(1)/2 from the Riccati equation P' = P² − 1, P(1) = 0 (fixture description).
 *  - Minimum-time double integrator from (1, 0): tf = 2, switch at t = 1 (Bryson and Ho 1975, §3.9).
 */
import { describe, expect, it } from "vitest";
import { solveProblem } from "~/engine/solve";
import type { SchemeId } from "~/engine/schemes/types";
import { getScheme } from "~/engine/schemes";
import { solveNlp } from "~/engine/nlp";
import { fixture } from "./helpers/fixtures";

type Case = { N: number; K?: number; tol: number };
const GODDARD_CONTINUOUS = 1.012837;
const plan: Array<{ name: string; value: number; cases: Partial<Record<SchemeId, Case>>; extra?: (s: SchemeId, N: number, rep: ReturnType<typeof solveProblem>) => void }> = [
  {
    name: "cops-goddard",
    value: GODDARD_CONTINUOUS,
    cases: {
      euler: { N: 200, tol: 5e-4 },
      trapezoidal: { N: 400, tol: 1e-5 },
      "hermite-simpson": { N: 100, tol: 1e-5 },
      "rk4-shooting": { N: 100, tol: 1e-5 },
      lgr: { N: 20, K: 6, tol: 1e-5 },
    },
    extra: (s, _N, rep) => {
      // the published trapezoidal figure at 400 intervals, to its 6 digits
      if (s === "trapezoidal") expect(Math.abs(rep.objective! - 1.01283)).toBeLessThan(1e-5);
    },
  },
  {
    name: "bryson-denham",
    value: 8 / 3,
    cases: {
      euler: { N: 100, tol: 5e-3 },
      trapezoidal: { N: 50, tol: 1e-2 },
      "hermite-simpson": { N: 50, tol: 1e-6 },
      "rk4-shooting": { N: 50, tol: 1e-4 },
      lgr: { N: 10, K: 4, tol: 1e-6 },
    },
  },
  {
    name: "bryson-ho-orbit-raising",
    value: 1.5253,
    cases: {
      euler: { N: 100, tol: 1e-3 },
      trapezoidal: { N: 50, tol: 1e-3 },
      "hermite-simpson": { N: 30, tol: 2e-4 },
      "rk4-shooting": { N: 30, tol: 2e-4 },
      lgr: { N: 10, K: 6, tol: 2e-4 },
    },
  },
  {
    name: "brachistochrone",
    value: Math.sqrt(Math.PI),
    cases: {
      euler: { N: 100, tol: 1e-2 },
      trapezoidal: { N: 40, tol: 5e-4 },
      "hermite-simpson": { N: 20, tol: 1e-6 },
      "rk4-shooting": { N: 20, tol: 1e-6 },
      lgr: { N: 4, K: 6, tol: 1e-6 },
    },
  },
  {
    name: "lq-scalar",
    value: Math.tanh(1) / 2,
    cases: {
      euler: { N: 100, tol: 3e-3 },
      trapezoidal: { N: 40, tol: 2e-4 },
      "hermite-simpson": { N: 10, tol: 1e-6 },
      "rk4-shooting": { N: 10, tol: 1e-6 },
      lgr: { N: 1, K: 10, tol: 1e-12 },
    },
  },
  {
    name: "double-integrator-min-time",
    value: 2,
    cases: {
      euler: { N: 40, tol: 2e-3 },
      trapezoidal: { N: 40, tol: 2e-3 },
      "hermite-simpson": { N: 40, tol: 2e-3 },
      "rk4-shooting": { N: 40, tol: 2e-3 },
      lgr: { N: 10, K: 4, tol: 2e-3 },
    },
    extra: (_s, N, rep) => {
      // switching time t_s = 1 found to within one mesh interval (length tf/N)
      expect(rep.errors.switchingTimes).not.toBeNull();
      expect(rep.errors.switchingTimes!).toBeLessThan(2 / N);
    },
  },
];

for (const p of plan) {
  describe(p.name, () => {
    const problem = fixture(p.name);
    for (const [scheme, c] of Object.entries(p.cases) as Array<[SchemeId, Case]>) {
      it(`${scheme} at ${c.N}${c.K ? `x${c.K}` : ""} intervals: |J − ${p.value.toPrecision(7)}| < ${c.tol}`, () => {
        const rep = solveProblem(problem, scheme, { intervals: c.N, degree: c.K }, { keepTrajectory: false, resimulate: false });
        expect(["optimal", "acceptable"]).toContain(rep.status);
        expect(Math.abs(rep.objective! - p.value)).toBeLessThan(c.tol);
        p.extra?.(scheme, c.N, rep);
      });
    }
  });
}

describe("defects recomputed outside the scheme (LQ, x' = u)", () => {
  const problem = fixture("lq-scalar");
  it("trapezoidal: x_{k+1} − x_k − h/2 (u_k + u_{k+1}) = 0 to 1e-9", () => {
    const tr = getScheme("trapezoidal").transcribe(problem, { intervals: 8 });
    const sol = tr.recover(solveNlp(tr.nlp, { tol: 1e-10 }));
    for (let k = 0; k < 8; k++) {
      const h = sol.t[k + 1] - sol.t[k];
      expect(Math.abs(sol.states[0][k + 1] - sol.states[0][k] - (h / 2) * (sol.controls[0][k] + sol.controls[0][k + 1]))).toBeLessThan(1e-9);
    }
  });
  it("Hermite–Simpson: Simpson and Hermite defects vanish to 1e-9", () => {
    const tr = getScheme("hermite-simpson").transcribe(problem, { intervals: 6 });
    const sol = tr.recover(solveNlp(tr.nlp, { tol: 1e-10 }));
    const x = sol.states[0], u = sol.controls[0];
    for (let k = 0; k < 6; k++) {
      const h = sol.t[2 * k + 2] - sol.t[2 * k];
      expect(Math.abs(x[2 * k + 2] - x[2 * k] - (h / 6) * (u[2 * k] + 4 * u[2 * k + 1] + u[2 * k + 2]))).toBeLessThan(1e-9);
      expect(Math.abs(x[2 * k + 1] - 0.5 * (x[2 * k] + x[2 * k + 2]) - (h / 8) * (u[2 * k] - u[2 * k + 2]))).toBeLessThan(1e-9);
    }
  });
});

describe("Hermite–Simpson compressed = separated (the same discrete problem with x_{k+½} eliminated)", () => {
  for (const [name, N] of [["brachistochrone", 20], ["bryson-ho-orbit-raising", 30]] as const) {
    it(`${name} at ${N} intervals: objectives agree to 1e-8 (solver tol 1e-10)`, () => {
      const p = fixture(name);
      const o = { keepTrajectory: false, resimulate: false, nlp: { tol: 1e-10 } };
      const a = solveProblem(p, "hermite-simpson", { intervals: N }, o);
      const b = solveProblem(p, "hermite-simpson", { intervals: N, variant: "compressed" }, o);
      expect(["optimal", "acceptable"]).toContain(b.status);
      expect(b.nlpSize.n).toBeLessThan(a.nlpSize.n);
      expect(Math.abs(a.objective! - b.objective!)).toBeLessThan(1e-8);
    });
  }
});
