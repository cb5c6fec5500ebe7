/**
 * Issue 17 item 2: a refinement whose Newton solution exceeds a state bound is not converged; the
 * worst violation (not the first crossing) is reported; the retry inserts a boundary arc of the
 * violated constraint and then converges to the constrained optimum.
 *
 * Outside values: the ridge-hold fixture (tests/fixtures/analytic/ridge-hold, analytic answers
 * derived in its description): min ∫₀² (u²/2 − x) dt, ẋ = u, x(0) = x(2) = 0, x ≤ 1/4.
 *   - unconstrained optimum x(t) = t(2 − t)/2: peak 1/2 at t = 1, first above 1/4 at
 *     t = 1 − 1/√2, last at 1 + 1/√2;
 *   - constrained optimum: entry 1/√2, exit 2 − 1/√2, J = −0.2642977396044841.
 * Tolerances: 1e-9 on the refined times and cost (Newton tolerance 1e-11, ODEX 1e-12); 1e-6 on
 * the located peak (parabola through ODEX's accepted steps of a quadratic: exact up to rounding,
 * with margin).
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import type { CompiledProblem } from "~/engine/problem/types";
import type { ArcStructure } from "~/engine/arcs/types";
import { directSolve } from "~/engine/shooting/direct";
import { refineFromSolution } from "~/engine/shooting/refine";

function fixture(path: string): CompiledProblem {
  const r = loadProblem(path);
  if (!r.ok) throw new Error(r.errors.map((e) => e.message).join("; "));
  return r.problem;
}

const SQRT1_2 = Math.SQRT1_2;
const J_REF = -0.2642977396044841;

/** The structure without the boundary arc (what a seed that stays below the bound shows). */
const interiorOnly: ArcStructure = {
  controls: [{ control: "u", arcs: [{ kind: "interior", control: "u", t0: 0, t1: 2 }], junctions: [] }],
  signature: "interior",
  usedSwitchingFunction: false,
  costateSign: 1,
  notes: [],
};

describe("refinement never calls a broken answer converged", () => {
  const p = fixture("tests/fixtures/analytic/ridge-hold");
  const seed = directSolve(p, "hermite-simpson", { intervals: 40 }).solution!;

  it("a Newton solution beyond the state bound is 'constraint_violated', with the worst violation", () => {
    const r = refineFromSolution(p, seed, { structure: interiorOnly, retry: false });
    expect(r.newtonStatus).toBe("converged");
    expect(r.status).toBe("constraint_violated");
    expect(r.converged).toBe(false);
    expect(r.structureConfirmed).toBe(false);
    const v = r.worstViolation!;
    expect(v.name).toBe("x");
    expect(v.side).toBe(1);
    expect(Math.abs(v.value - 0.5)).toBeLessThan(1e-6);
    expect(Math.abs(v.t - 1)).toBeLessThan(1e-3);
    expect(Math.abs(v.tIn - (1 - SQRT1_2))).toBeLessThan(0.05);
    expect(Math.abs(v.tOut - (1 + SQRT1_2))).toBeLessThan(0.05);
    expect(r.message).toMatch(/not optimal: state bound x ≤ 0\.25 violated: worst x = 0\.5/);
    expect(r.violations[0]).toMatch(/worst x = 0\.5/);
  });

  it("the retry adds the boundary arc and converges to the analytic optimum", () => {
    const r = refineFromSolution(p, seed, { structure: interiorOnly });
    expect(r.status, r.attempts.join("\n")).toBe("converged");
    expect(r.signature).toBe("interior|boundary:x|interior");
    expect(r.attempts[0]).toMatch(/constraint_violated/);
    expect(r.attempts[1]).toMatch(/boundary arc of x added.*converged/);
    expect(r.message).toMatch(/after adding a boundary arc of x/);
    expect(Math.abs(r.junctions[0] - SQRT1_2)).toBeLessThan(1e-9);
    expect(Math.abs(r.junctions[1] - (2 - SQRT1_2))).toBeLessThan(1e-9);
    expect(Math.abs(r.objective - J_REF)).toBeLessThan(1e-9);
    expect(r.worstViolation).toBeNull();
  });

  it("from the detected structure the fixture refines directly", () => {
    const r = refineFromSolution(p, seed);
    expect(r.status).toBe("converged");
    expect(r.attempts).toHaveLength(1);
    expect(Math.abs(r.junctions[0] - SQRT1_2)).toBeLessThan(1e-9);
    expect(Math.abs(r.objective - J_REF)).toBeLessThan(1e-9);
  });
});
