/**
 * Issue 17 item 5: RK4 multiple shooting with a mixed control–state path constraint converges at
 * order 4 once the constraint is imposed at the midpoint state of RK4's continuous extension
 * (rk4-shooting.ts header), instead of at both c = ½ stage states that share one control.
 *
 * Problem: tests/fixtures/analytic/capped-growth, max x(1) with ẋ = u, x(0) = 1, u − x ≤ 0; the
 * constraint is active throughout and J = e (Grönwall's inequality; derivation in the fixture).
 * The solves use tolerance 1e-12 and no bound relaxation (NLP option boundRelaxFactor = 0): the
 * default relaxation of 1e-8 lets u exceed x by that much at every point, a floor of 1.6e-8 on
 * this problem that has nothing to do with the scheme.
 * Measured before the change: errors 2.1e-3, 5.5e-4, 1.4e-4 at N = 10, 20, 40 (order 2.0);
 * after: 3.8e-7, 2.4e-8, 1.5e-9 (order 4.0). Asserted: each doubling divides the error by at
 * least 12 (order ≥ 3.58), and the error at N = 10 is below 1e-6.
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";

describe("RK4 shooting with a mixed path constraint", () => {
  it("converges at order 4 on capped growth (J = e)", () => {
    const r = loadProblem("tests/fixtures/analytic/capped-growth");
    if (!r.ok) throw new Error(r.errors.map((e) => e.message).join("; "));
    const errors = [10, 20, 40].map((N) => {
      const rep = solveProblem(r.problem, "rk4-shooting", { intervals: N }, { resimulate: false, nlp: { tol: 1e-12, boundRelaxFactor: 0 } });
      expect(rep.status).toBe("optimal");
      return Math.abs(rep.objective! - Math.E);
    });
    const text = errors.map((e) => e.toExponential(2)).join(" ");
    expect(errors[0], text).toBeLessThan(1e-6);
    for (let k = 1; k < errors.length; k++) expect(errors[k - 1] / errors[k], text).toBeGreaterThan(12);
  });
});
