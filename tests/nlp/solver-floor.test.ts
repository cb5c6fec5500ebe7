/**
 * No solver floor under the discretisation error (issue 17, item 1): at the default tolerance the
 * objective error of a library problem with an analytic optimum falls with the mesh until it reaches
 * 1e-10 relative, and the reported solver share (duality gap, app/engine/nlp/gap.ts) stays below it.
 *
 * References (analytic, from each problem's file): Pika rover t_f = 2 √(D/umax) = 17.88854381999832
 * (minimum-time double integrator, bang–bang with one switch; Pontryagin's principle); Alder Ridge
 * cable car and Gannet ballast trim as written in problems/<id>/problem.json with their
 * derivations. Before the duality-gap test the LGR errors of the Pika rover grew with the mesh
 * (1.2e-8 / 2.9e-8 / 6.2e-8 / 1.3e-7 at N = 30 / 60 / 120 / 240): the barrier left every control
 * about μ inside its bound at every mesh point. The duality-gap stop is the default (no option is
 * passed here). Osprey tug stand-off (a Bryson–Denham state-constrained problem, reference cost
 * from Bryson, Denham and Dreyfus, AIAA Journal 1(11), 1963, rescaled in its problem.json): at
 * N = 240 the final steps used to round a state onto its bound (slack 0) and stop at the
 * former point, 1.2e-6 (LGR) and 1.6e-6 (Hermite–Simpson) against 1.6e-11 at N = 120.
 */
import { describe, expect, it } from "vitest";
import { loadLibrary } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";
import type { SchemeId } from "~/engine/schemes/types";

const lib = loadLibrary("problems");
const FLOOR = 1e-10;

function errors(id: string, scheme: SchemeId, meshes: number[]) {
  const p = lib.problems.find((q) => q.id === id)!;
  return meshes.map((N) => {
    const r = solveProblem(p, scheme, { intervals: N, degree: p.defaults?.degree }, { keepTrajectory: false, resimulate: false, arcs: false });
    expect(r.status).toBe("optimal");
    expect(r.errorSplit.solver).not.toBeNull();
    // The solver's share is below the floor the goal names, relative to the optimum.
    expect(r.errorSplit.solver! / Math.abs(p.reference.objective!.value)).toBeLessThan(FLOOR);
    return r.errors.objectiveRel!;
  });
}

/** Each error is below the previous one, unless both are already under the floor. */
function expectDecreasingToFloor(e: number[]) {
  for (let k = 1; k < e.length; k++) if (e[k - 1] > FLOOR || e[k] > FLOOR) expect(e[k]).toBeLessThan(e[k - 1]);
  expect(e[e.length - 1]).toBeLessThan(Math.max(FLOOR, e[0]));
}

describe("objective error over four meshes decreases to 1e-10 (no barrier floor)", () => {
  it("bang–bang Pika rover, LGR, N = 30 / 60 / 120 / 240", () => {
    const e = errors("pika-rover-dash", "lgr", [30, 60, 120, 240]);
    expectDecreasingToFloor(e);
    expect(e[3]).toBeLessThan(FLOOR);
  });
  it("bang–bang Pika rover, trapezoidal, N = 30 / 60 / 120 / 240", () => {
    expectDecreasingToFloor(errors("pika-rover-dash", "trapezoidal", [30, 60, 120, 240]));
  });
  it("Alder Ridge cable car, Hermite–Simpson, N = 30 / 60 / 120 / 240", () => {
    expectDecreasingToFloor(errors("alder-ridge-cable-car", "hermite-simpson", [30, 60, 120, 240]));
  });
  for (const scheme of ["lgr", "hermite-simpson"] as SchemeId[]) {
    it(`Osprey tug stand-off (state constraint), ${scheme}, N = 30 / 60 / 120 / 240`, () => {
      expectDecreasingToFloor(errors("osprey-tug-standoff", scheme, [30, 60, 120, 240]));
    });
  }
  it("Gannet ballast trim, Hermite–Simpson, N = 30 / 60 / 120 / 240", () => {
    expectDecreasingToFloor(errors("gannet-ballast-trim", "hermite-simpson", [30, 60, 120, 240]));
  });
});
