/**
 * Bryson–Denham problem (Bryson and Ho, Applied Optimal Control, 1975, §3.11, example with a
 * second-order state-variable inequality constraint): minimise ∫₀¹ u²/2 dt with ẋ = v, v̇ = u,
 * x(0) = x(1) = 0, v(0) = 1, v(1) = −1, x ≤ ℓ. For ℓ ≤ 1/6 the constraint is active on
 * [3ℓ, 1 − 3ℓ], the cost is 4/(9ℓ) and on the first arc x = ℓ(1 − (1 − t/(3ℓ))³).
 * With ℓ = 1/9 (a value with ℓ < 1/6, so the boundary arc has positive length): junctions 1/3 and
 * 2/3, cost 4. Tolerance: 1e-9 on cost and junctions (issue 9).
 */
import { describe, expect, it } from "vitest";
import { refineFromSolution } from "~/engine/shooting/refine";
import { inlineProblem, sampled } from "./helpers";

const l = 1 / 9;
const problem = inlineProblem({
  id: "bryson-denham",
  constants: { l },
  states: [{ name: "x", upper: l }, { name: "v" }],
  controls: [{ name: "u" }],
  dynamics: ["v", "u"],
  running: "u^2/2",
  initial: { x: 0, v: 1 },
  final: { x: 0, v: -1 },
  tf: 1,
});

/** Exact solution on the first arc and by symmetry (x(t) = x(1 − t), v(t) = −v(1 − t)). */
function exact(t: number): { x: number; v: number; u: number; lx: number; lv: number } {
  const left = t <= 0.5;
  const s = left ? t : 1 - t;
  if (s >= 3 * l) return { x: l, v: 0, u: 0, lx: 0, lv: 0 };
  const r = 1 - s / (3 * l);
  const x = l * (1 - r * r * r);
  const v = r * r; // dx/ds
  const u = -(2 / (3 * l)) * r;
  // λx = ±2/(9ℓ²), λv = −u on the unconstrained arcs (H_u = u + λv = 0).
  return { x, v: left ? v : -v, u, lx: left ? 2 / (9 * l * l) : -2 / (9 * l * l), lv: -u };
}

describe("Bryson–Denham, ℓ = 1/9", () => {
  it("refines to cost 4/(9ℓ) = 4 and junctions 3ℓ, 1 − 3ℓ within 1e-9", () => {
    // Seed: the exact solution with the boundary arc shrunk by 0.02 on each side, costates 10 % off.
    const warp = (t: number) => (t < 0.5 ? t * (1 + 0.02 / 0.5) : 1 - (1 - t) * (1 + 0.02 / 0.5));
    const sol = sampled(0, 1, 61, (t) => {
      const e = exact(Math.min(1, Math.max(0, warp(t))));
      return [e.x, e.v];
    }, (t) => [exact(t).u], (t) => {
      const e = exact(t);
      return [1.1 * e.lx, 1.1 * e.lv];
    });
    const r = refineFromSolution(problem, sol);
    expect(r.detectedSignature).toBe("interior|boundary:x|interior");
    expect(r.status).toBe("converged");
    expect(r.structureConfirmed).toBe(true);
    expect(Math.abs(r.objective - 4 / (9 * l))).toBeLessThan(1e-9);
    expect(Math.abs(r.junctions[0] - 3 * l)).toBeLessThan(1e-9);
    expect(Math.abs(r.junctions[1] - (1 - 3 * l))).toBeLessThan(1e-9);
  });
});
