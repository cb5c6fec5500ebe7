/**
 * Issue 17 item 3: the shooting Jacobian from the variational equations (variational.ts) against
 * the forward-difference one, on Bryson–Denham ℓ = 1/9 (boundary arc of a second-order state
 * constraint: cost 4/(9ℓ) = 4, Bryson and Ho, Applied Optimal Control, 1975, §3.11). Both reach
 * the published cost to 1e-9 with the same Newton iteration count and Jacobian condition (to 1 %);
 * the variational one needs fewer right-hand-side evaluations (a count, not a timing; measured
 * 16452 against 27748).
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import { directSolve } from "~/engine/shooting/direct";
import { refineFromSolution } from "~/engine/shooting/refine";

describe("shooting Jacobian from the variational equations", () => {
  it("matches forward differences on Bryson–Denham with fewer right-hand-side evaluations", () => {
    const r = loadProblem("tests/fixtures/classic/bryson-denham");
    if (!r.ok) throw new Error("bryson-denham does not load");
    const sol = directSolve(r.problem, "hermite-simpson", { intervals: 40 }).solution!;
    const v = refineFromSolution(r.problem, sol, { jacobian: "variational", retry: false });
    const d = refineFromSolution(r.problem, sol, { jacobian: "differences", retry: false });
    for (const rep of [v, d]) {
      expect(rep.status).toBe("converged");
      expect(Math.abs(rep.objective - 4)).toBeLessThan(1e-9);
    }
    expect(v.iterations).toBe(d.iterations);
    expect(Math.abs(v.jacobianCondition / d.jacobianCondition - 1)).toBeLessThan(0.01);
    expect(v.rhsEvaluations).toBeLessThan(d.rhsEvaluations);
  });
});
