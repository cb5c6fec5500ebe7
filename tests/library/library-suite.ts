/**
 * Shared body of tests/library/solve-<scheme>.test.ts: every problem in problems/ solved with one
 * scheme at the problem's default mesh. A converged solve must match the problem's reference
 * objective within the scheme's bound at that mesh and re-simulate to within the scheme's miss
 * bound; a case listed in EXPECTED must show the recorded behaviour instead.
 *
 * Bounds (relative objective error, scaled re-simulation miss) at the default meshes of 10–60
 * intervals — common practice for these orders, no source: first-order Euler 0.15 / 0.6,
 * trapezoidal 0.05 / 0.4, fourth-order and spectral schemes 1e-4 / 1e-2.
 */
import { describe, expect, it } from "vitest";
import { loadLibrary } from "~/engine/problem/load";
import { isConverged, solveProblem } from "~/engine/solve";
import type { SchemeId } from "~/engine/schemes/types";

const BOUNDS: Record<SchemeId, { rel: number; miss: number }> = {
  euler: { rel: 0.15, miss: 0.6 },
  trapezoidal: { rel: 0.05, miss: 0.4 },
  "hermite-simpson": { rel: 1e-4, miss: 1e-2 },
  lgr: { rel: 1e-4, miss: 1e-2 },
  "rk4-shooting": { rel: 1e-4, miss: 1e-2 },
};

/**
 * Recorded behaviour that differs from "converges to the reference" (problem/scheme → note).
 * "fragile": from the deliberately poor guess of the hard-start problem the outcome depends on the
 * solver's path (it changed between solver revisions): the test requires either a converged solve
 * (to the reference or to another local optimum, which is then reported as different) or a clean
 * failure report with a status and a message — never a crash.
 */
export const EXPECTED: Record<string, { kind: "fragile"; note: string }> = {
  "ibis-crane-load-flip/euler": { kind: "fragile", note: "Euler at 40 intervals has found a cheaper but inaccurate swing (re-simulation misses by O(1))" },
  "ibis-crane-load-flip/trapezoidal": { kind: "fragile", note: "has converged to another swing-up, or stopped at the iteration limit" },
  "ibis-crane-load-flip/lgr": { kind: "fragile", note: "has needed 150 to more than 400 iterations from the rest guess" },
  "ibis-crane-load-flip/rk4-shooting": { kind: "fragile", note: "lifted RK4 has both converged and stopped at the iteration limit" },
};

export const MAX_ITER = 400;

export function librarySuite(scheme: SchemeId): void {
  const lib = loadLibrary("problems");
  describe(`every library problem with ${scheme} at its default mesh`, () => {
    it("library loads without errors", () => {
      expect(lib.errors).toEqual([]);
      expect(lib.problems.length).toBeGreaterThanOrEqual(12);
    });
    for (const p of lib.problems) {
      const key = `${p.id}/${scheme}`;
      const exp = EXPECTED[key];
      it(`${p.id}${exp ? ` (expected: ${exp.kind})` : ""}`, () => {
        const mesh = { intervals: p.defaults?.intervals ?? 40, degree: p.defaults?.degree };
        const rep = solveProblem(p, scheme, mesh, { keepTrajectory: false, nlp: { maxIter: MAX_ITER } });
        const ref = p.reference.objective!.value;
        if (exp?.kind === "fragile") {
          if (isConverged(rep.status)) {
            expect(Number.isFinite(rep.objective)).toBe(true);
            const rel = Math.abs(rep.objective! - ref) / Math.abs(ref);
            // to the reference, or visibly elsewhere (another local optimum): never silently close
            if (rel >= BOUNDS[scheme].rel) expect(rel + (rep.errors.stateMax ?? 0)).toBeGreaterThan(1e-3);
          } else {
            expect(rep.status).toMatch(/iteration_limit|time_limit|numerical_trouble|diverging|infeasible|restoration/);
            expect(rep.message.length).toBeGreaterThan(0);
          }
          return;
        }
        expect(["optimal", "acceptable"]).toContain(rep.status);
        expect(rep.errors.objectiveRel!).toBeLessThan(BOUNDS[scheme].rel);
        expect(rep.resim).not.toBeNull();
        expect(rep.resim!.finalMiss).toBeLessThan(BOUNDS[scheme].miss);
      });
    }
  });
}
