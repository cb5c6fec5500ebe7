/**
 * Refinement against the library's analytic references (problems/<id>/problem.json,
 * `reference.objective` etc. with provenance "analytic", derived by the problem authors — see each
 * file's citation/detail). Every problem with an analytic objective is refined from its default
 * Hermite–Simpson solution and must reproduce the objective to 1e-9 relative, and the analytic
 * final time and switching times (where given) to 1e-9.
 */
import { describe, expect, it } from "vitest";
import { loadLibrary } from "~/engine/problem/load";
import { refineProblem } from "~/engine/shooting/refine-problem";

const { problems } = loadLibrary("problems");
const analytic = problems.filter((p) => p.reference.objective?.provenance.kind === "analytic");

describe("refinement reproduces the analytic library references", () => {
  it("has analytic references to check", () => expect(analytic.length).toBeGreaterThan(0));
  for (const p of analytic) {
    it(p.id, () => {
      const r = refineProblem(p, { scheme: "hermite-simpson" });
      expect(r.converged, r.message).toBe(true);
      expect(r.structureConfirmed, r.violations.join("; ")).toBe(true);
      const ref = p.reference;
      expect(Math.abs(r.objective - ref.objective!.value)).toBeLessThan(1e-9 * (1 + Math.abs(ref.objective!.value)));
      if (ref.finalTime?.provenance.kind === "analytic") expect(Math.abs(r.finalTime - ref.finalTime.value)).toBeLessThan(1e-9 * (1 + ref.finalTime.value));
      if (ref.switchingTimes?.provenance.kind === "analytic") {
        expect(r.junctions.length).toBe(ref.switchingTimes.values.length);
        ref.switchingTimes.values.forEach((ts, k) => expect(Math.abs(r.junctions[k] - ts)).toBeLessThan(1e-9 * (1 + ts)));
      }
      expect(r.reference).not.toBeNull();
      expect(r.provenance.kind).toBe("shooting");
    });
  }
});
