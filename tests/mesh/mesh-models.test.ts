/**
 * Reading stored mesh estimates and refinement records (app/models/mesh.server.ts) and the compare
 * page's refinement-cost rows (app/models/refinement-cost.server.ts), on hand-made rows: malformed
 * JSON gives null parts, and the cost medians are over the cases that met ε only.
 */
import { describe, expect, it } from "vitest";
import { parseMeshEstimate, parsePasses } from "~/models/mesh.server";
import { refinementCostRows } from "~/models/refinement-cost.server";

describe("stored mesh estimate", () => {
  it("accepts { method, t (N + 1), error (N) } and refuses other shapes", () => {
    expect(parseMeshEstimate({ method: "residual-quadrature", t: [0, 1, 2], error: [1e-3, 2e-4] })).toEqual({ method: "residual-quadrature", t: [0, 1, 2], error: [1e-3, 2e-4] });
    expect(parseMeshEstimate({ t: [0, 1], error: [1e-3, 2e-4] })).toBeNull();
    expect(parseMeshEstimate({ t: [0, 1], error: ["x"] })).toBeNull();
    expect(parseMeshEstimate(null)).toBeNull();
    expect(parseMeshEstimate("[1,2]")).toBeNull();
  });
  it("passes need their numbers and a status", () => {
    const ok = { pass: 1, intervals: 10, points: 11, status: "optimal", iterations: 12, seconds: 0.5, maxEstimate: 1e-4 };
    expect(parsePasses([ok, { ...ok, pass: 2, maxEstimate: null }])).toEqual([ok, { ...ok, pass: 2, maxEstimate: null }]);
    expect(parsePasses([{ ...ok, status: 3 }])).toBeNull();
    expect(parsePasses({})).toBeNull();
  });
});

describe("cost to reach ε with refinement", () => {
  it("groups by tolerance and scheme; medians over the cases that met ε", () => {
    const rows = refinementCostRows(
      [
        { scheme: "trapezoidal", tolerance: 1e-6, met: true, seconds: 1, points: 100, passes: 3, iterations: 30 },
        { scheme: "trapezoidal", tolerance: 1e-6, met: true, seconds: 3, points: 200, passes: 5, iterations: 50 },
        { scheme: "trapezoidal", tolerance: 1e-6, met: false, seconds: 100, points: 2000, passes: 10, iterations: 500 },
        { scheme: "lgr", tolerance: 1e-6, met: false, seconds: 2, points: 50, passes: 10, iterations: 90 },
        { scheme: "lgr", tolerance: 1e-4, met: true, seconds: 0.5, points: 30, passes: 2, iterations: 20 },
      ],
      ["trapezoidal", "lgr"],
    );
    expect(rows.map((r) => [r.tolerance, r.scheme])).toEqual([[1e-4, "lgr"], [1e-6, "trapezoidal"], [1e-6, "lgr"]]);
    expect(rows[1]).toEqual({ scheme: "trapezoidal", tolerance: 1e-6, cases: 3, met: 2, medianSeconds: 2, medianPoints: 150, medianPasses: 4, medianIterations: 40 });
    expect(rows[2]).toMatchObject({ cases: 1, met: 0, medianSeconds: null, medianPoints: null });
  });
});
