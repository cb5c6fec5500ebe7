/**
 * Issue 17 item 4: errors.switchingTimes measures the junctions of the detected arc structure,
 * with the interior-point solver's barrier offset taken into account.
 *
 * Outside values (analytic):
 *   - Pika rover (problems/pika-rover-dash, derivation in its problem.json): bang–bang with one
 *     switch at t_s = √(D/umax) = √80;
 *   - ridge hold (tests/fixtures/analytic/ridge-hold, derivation in its problem.json): boundary
 *     arc of x ≤ 1/4 from 1/√2 to 2 − 1/√2.
 * Tolerances: one grid interval for the synthetic solution; for the direct solves, the error must
 * fall at every mesh doubling (the point of the item) and end below a bound read off the measured
 * sequence with a factor 2 margin (stated at each assertion).
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import type { CompiledProblem } from "~/engine/problem/types";
import { solutionErrors } from "~/engine/analysis/errors";
import { solveProblem } from "~/engine/solve";
import type { SchemeId, Solution } from "~/engine/schemes/types";

function load(id: string): CompiledProblem {
  const r = loadProblem(id);
  if (!r.ok) throw new Error(r.errors.map((e) => e.message).join("; "));
  return r.problem;
}

const pika = load("pika-rover-dash");
const D = 40, umax = 0.5, ts = Math.sqrt(D / umax), tf = 2 * ts;

/** The closed form, with the control held `offset` inside its bound on both bang arcs. */
function offsetSolution(offset: number, n: number): Solution {
  const u = (s: number) => (s < ts ? umax - offset : -umax + offset);
  const x = (s: number) => (s < ts ? 0.5 * umax * s * s : D - 0.5 * umax * (tf - s) ** 2);
  const v = (s: number) => (s < ts ? umax * s : umax * (tf - s));
  const t = Float64Array.from({ length: n + 1 }, (_, k) => (tf * k) / n);
  return {
    scheme: "trapezoidal", t, tu: t,
    states: [Float64Array.from(t, x), Float64Array.from(t, v)],
    controls: [Float64Array.from(t, u)],
    tLambda: null, costates: null, pathMultipliers: null, t0: 0, tf, objective: tf,
    stateAt: (s, out) => { out[0] = x(s); out[1] = v(s); },
    controlAt: (s, out) => void (out[0] = u(s)),
  };
}

function switchingErrors(p: CompiledProblem, scheme: SchemeId, meshes: number[]): number[] {
  return meshes.map((N) => {
    const rep = solveProblem(p, scheme, { intervals: N, degree: scheme === "lgr" ? 4 : undefined }, { resimulate: false });
    expect(rep.status).toMatch(/optimal|acceptable/);
    return rep.errors.switchingTimes!;
  });
}

describe("switching-time error from the detected junctions", () => {
  it("a control left a barrier-sized distance inside its bound still has its switch measured", () => {
    // 5e-4 of the range (1e-3 of the scale 0.5), inside what the issue measured (3e-5 to 3e-3 of
    // the scale). Counting "at the bound" as within 1e-5 of the scale found no event here. Without
    // costates arc detection sees a bang point within 1e-3 of the range; with costates (every
    // scheme) the switching function's sign decides, whatever the offset.
    const n = 101;
    const e = solutionErrors(pika, offsetSolution(5e-4 * 2 * umax, n));
    expect(e.switchingTimes).not.toBeNull();
    expect(e.switchingTimes!).toBeLessThan(tf / n);
  });

  it("falls with the mesh on a bang–bang problem (Pika rover, LGR degree 4)", () => {
    const err = switchingErrors(pika, "lgr", [10, 20, 40, 80]);
    for (let k = 1; k < err.length; k++) expect(err[k], err.map((v) => v.toExponential(2)).join(" ")).toBeLessThan(err[k - 1]);
    // measured 7.2e-3 at 80 intervals (interval 0.22)
    expect(err[err.length - 1]).toBeLessThan(1.5e-2);
  });

  it("falls with the mesh on a bang–bang problem (Pika rover, trapezoidal)", () => {
    const err = switchingErrors(pika, "trapezoidal", [10, 20, 40, 80]);
    for (let k = 1; k < err.length; k++) expect(err[k], err.map((v) => v.toExponential(2)).join(" ")).toBeLessThan(err[k - 1]);
    // measured 1.4e-3 at 80 intervals
    expect(err[err.length - 1]).toBeLessThan(3e-3);
  });

  it("measures the entry and exit of a boundary arc (ridge hold, Hermite–Simpson, 40 intervals)", () => {
    const p = load("tests/fixtures/analytic/ridge-hold");
    const [e] = switchingErrors(p, "hermite-simpson", [40]);
    // measured 1.2e-3 (interval 0.05)
    expect(e).toBeLessThan(5e-3);
  });
});
