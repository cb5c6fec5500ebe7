/**
 * Minimum-time double integrator: ẍ = u, |u| ≤ 1, x(0) = 1, ẋ(0) = 0 → x(tf) = ẋ(tf) = 0.
 * Analytic solution (Bryson and Ho, Applied Optimal Control, 1975, §3.9, the time-optimal
 * double integrator): u = −1 on [0, 1), u = +1 on (1, 2]; switching time ts = 1, tf = 2;
 * costates λ1 = 1, λ2 = 1 − t (with H = 1 + λ1 x2 + λ2 u and H(tf) = 0).
 * Tolerance: 1e-10 on ts and tf (issue 9).
 */
import { describe, expect, it } from "vitest";
import { refineFromSolution } from "~/engine/shooting/refine";
import { inlineProblem, sampled } from "./helpers";

const problem = inlineProblem({
  id: "double-integrator-min-time",
  states: [{ name: "x1" }, { name: "x2" }],
  controls: [{ name: "u", lower: -1, upper: 1 }],
  dynamics: ["x2", "u"],
  terminal: "tf",
  initial: { x1: 1, x2: 0 },
  final: { x1: 0, x2: 0 },
  tf: { lower: 0.1, upper: 10, guess: 1 },
});

const exactX = (t: number) => (t <= 1 ? [1 - (t * t) / 2, -t] : [((t - 2) * (t - 2)) / 2, t - 2]);

describe("minimum-time double integrator", () => {
  it("refines a perturbed direct solution to ts = 1, tf = 2 within 1e-10", () => {
    // A seed as a coarse direct solution would give: tf 1 % long, switch 2 % late, costates 5 % off.
    const sol = sampled(0, 2.02, 41, (t) => exactX(t / 1.01), (t) => [t < 1.02 ? -1 : 1], (t) => [1.05, 1.05 * (1 - t / 1.01)]);
    const r = refineFromSolution(problem, sol);
    expect(r.detectedSignature).toBe("lower|upper");
    expect(r.status).toBe("converged");
    expect(r.structureConfirmed).toBe(true);
    expect(Math.abs(r.junctions[0] - 1)).toBeLessThan(1e-10);
    expect(Math.abs(r.finalTime - 2)).toBeLessThan(1e-10);
    expect(Math.abs(r.objective - 2)).toBeLessThan(1e-10);
    // Costates: λ2(0) = 1 (analytic above).
    expect(Math.abs(r.trajectory!.costates.x2[0] - 1)).toBeLessThan(1e-8);
  });
});

describe("a wrong structure is reported, not refined", () => {
  it("one upper arc cannot meet the end conditions: not converged or not confirmed", () => {
    const sol = sampled(0, 2, 41, exactX, (t) => [t < 1 ? -1 : 1], (t) => [1, 1 - t]);
    const wrong = {
      controls: [{ control: "u", arcs: [{ kind: "upper" as const, control: "u", t0: 0, t1: 2 }], junctions: [] }],
      signature: "upper",
      usedSwitchingFunction: false,
      costateSign: 1 as const,
      notes: [],
    };
    const r = refineFromSolution(problem, sol, { structure: wrong, maxIter: 15 });
    expect(r.converged && r.structureConfirmed).toBe(false);
    expect(Number.isFinite(r.residual) ? r.residual : Infinity).toBeGreaterThan(1e-6);
  });
});
