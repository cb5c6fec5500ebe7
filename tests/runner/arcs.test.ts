import { describe, expect, it } from "vitest";
import path from "node:path";
import { loadProblem } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";
import { arcsOfReport, solutionFromTrajectory } from "../../bench/runner/arcs-from-report";
import { REPO } from "./helpers";

describe("arc structure from a report's trajectory", () => {
  it("recovers the bang–bang structure of the rover dash (reference arcs: upper, lower)", () => {
    const loaded = loadProblem(path.join(REPO, "problems/pika-rover-dash"), path.join(REPO, "problems"));
    if (!loaded.ok) throw new Error(loaded.errors.map((e) => e.message).join("; "));
    const report = solveProblem(loaded.problem, "hermite-simpson", { intervals: 20 });
    expect(report.status).toBe("optimal");
    // Reference (problem file): "arcs": ["upper", "lower"], one switch at t_s = √(D/umax) = 8.944 s.
    const arcs = arcsOfReport(loaded.problem, "hermite-simpson", report.trajectory, report.objective);
    expect(arcs?.signature).toBe("upper|lower");
    const sw = arcs!.controls[0].junctions[0];
    // Hermite–Simpson on 20 intervals of 0.894 s resolves the switch to within one interval.
    expect(Math.abs(sw - 8.94427190999916)).toBeLessThan(0.9);
    // The rebuilt solution interpolates linearly between grid points.
    const sol = solutionFromTrajectory(loaded.problem, "hermite-simpson", report.trajectory!, report.objective!);
    const x = new Float64Array(2);
    const k = 5;
    const tm = 0.5 * (sol.t[k] + sol.t[k + 1]);
    sol.stateAt(tm, x);
    expect(x[0]).toBeCloseTo(0.5 * (sol.states[0][k] + sol.states[0][k + 1]), 12);
    expect(arcsOfReport(loaded.problem, "hermite-simpson", null, null)).toBeNull();
  });
});
