/**
 * Refinement of two library problems of our own, checked against independent direct solutions
 * (the project's LGR transcription, a different method from shooting) and across seeds:
 *   - kestrel-2-ascent (bang, boundary arc of the dynamic-pressure limit, singular arc, coast):
 *     seeds from trapezoidal and LGR reach the same point (objective to 1e-10, junctions to 1e-9),
 *     with the file's reference arc sequence; the LGR direct objective at the default mesh is
 *     within 1e-6 of it (its discretisation error on a problem with a singular arc);
 *   - tern-orbit-raise (smooth, mixed constraint active throughout): the refined final radius
 *     agrees with LGR at 40 intervals of degree 6 (NLP tolerance 1e-10) to 1e-9; LGR's spectral
 *     convergence (20×6 → 40×6 moves the value by 6e-10, measured here) makes that a sharp check.
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import type { CompiledProblem } from "~/engine/problem/types";
import { directSolve } from "~/engine/shooting/direct";
import { refineFromSolution } from "~/engine/shooting/refine";

function library(id: string): CompiledProblem {
  const r = loadProblem(id);
  if (!r.ok) throw new Error(r.errors.map((e) => e.message).join("; "));
  return r.problem;
}

describe("refinement of library problems", () => {
  it("kestrel-2-ascent: same refined point from trapezoidal and LGR seeds", () => {
    const p = library("kestrel-2-ascent");
    const dTrap = directSolve(p, "trapezoidal", { intervals: 60 });
    const dLgr = directSolve(p, "lgr", { intervals: 60, degree: 4 });
    const a = refineFromSolution(p, dTrap.solution!);
    const b = refineFromSolution(p, dLgr.solution!);
    for (const r of [a, b]) {
      expect(r.converged && r.structureConfirmed).toBe(true);
      expect(r.signature).toBe(p.reference.arcs!.join("|"));
    }
    expect(Math.abs(a.objective - b.objective)).toBeLessThan(1e-10);
    a.junctions.forEach((tj, k) => expect(Math.abs(tj - b.junctions[k])).toBeLessThan(1e-9));
    expect(Math.abs(a.finalTime - b.finalTime)).toBeLessThan(1e-9);
    expect(Math.abs(dLgr.solution!.objective - a.objective)).toBeLessThan(1e-6);
  });

  it("tern-orbit-raise: refined radius equals LGR 40×6 to 1e-9", () => {
    const p = library("tern-orbit-raise");
    const seed = directSolve(p, "hermite-simpson", { intervals: 40 });
    const r = refineFromSolution(p, seed.solution!);
    expect(r.converged && r.structureConfirmed).toBe(true);
    expect(r.signature).toBe("ur=boundary:direction;ut=boundary:direction");
    const fine = directSolve(p, "lgr", { intervals: 40, degree: 6 }, { tol: 1e-10 });
    expect(Math.abs(fine.solution!.objective - r.objective)).toBeLessThan(1e-9);
  });
});
