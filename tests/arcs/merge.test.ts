/**
 * The minimum-length filter on label sequences built by hand (expected results follow from the
 * rule in app/engine/arcs/merge.ts: stable runs ≥ minDuration, gap majority ≥ 75 %).
 */
import { describe, expect, it } from "vitest";
import { filterRuns, runsOf } from "~/engine/arcs/merge";

const grid = (n: number) => Float64Array.from({ length: n }, (_, k) => k / (n - 1));
const labels = (spec: [string, number][]) => spec.flatMap(([l, n]) => Array<string>(n).fill(l));

describe("filterRuns", () => {
  it("drops mixed fragments between two stable runs (ringing)", () => {
    const lab = labels([["upper", 40], ["singular", 1], ["upper", 1], ["singular", 2], ["lower", 1], ["singular", 1], ["lower", 55]]);
    const t = grid(lab.length);
    const r = filterRuns(runsOf(lab), t, 0, 1, 0.025); // grid spacing 0.01: fragments ≤ 0.02
    expect(r.map((q) => q.label)).toEqual(["upper", "lower"]);
    expect(r[0].k1).toBe(39);
    expect(r[1].k0).toBe(46);
  });

  it("keeps an arc broken by noise when one label holds the gap", () => {
    // A singular arc of 12 points with two isolated points at the bound (0.7 % each of the grid).
    const lab = labels([["upper", 30], ["singular", 5], ["upper", 1], ["singular", 6], ["upper", 1], ["singular", 2], ["lower", 50]]);
    const t = grid(lab.length);
    const r = filterRuns(runsOf(lab), t, 0, 1, 0.06);
    expect(r.map((q) => q.label)).toEqual(["upper", "singular", "lower"]);
  });

  it("merges stable runs of the same label across a glitch", () => {
    const lab = labels([["interior", 30], ["lower", 1], ["interior", 30]]);
    const r = filterRuns(runsOf(lab), grid(lab.length), 0, 1, 0.05);
    expect(r).toEqual([{ label: "interior", k0: 0, k1: 60 }]);
  });

  it("returns the longest run when nothing is stable", () => {
    const lab = labels([["upper", 2], ["lower", 3], ["upper", 1]]);
    const r = filterRuns(runsOf(lab), grid(lab.length), 0, 1, 0.9);
    expect(r).toEqual([{ label: "lower", k0: 0, k1: 5 }]);
  });
});

describe("filterRuns minimum points", () => {
  it("does not make an arc of a single grid point between two bang arcs", () => {
    // One point at u = 0 between upper and lower (a trapezoidal switch); its extent is one grid
    // spacing (0.025 here), above minDuration 0.02, but it is a single point.
    const lab = labels([["upper", 20], ["singular", 1], ["lower", 20]]);
    const r = filterRuns(runsOf(lab), grid(lab.length), 0, 1, 0.02, 2);
    expect(r.map((q) => q.label)).toEqual(["upper", "lower"]);
  });
});
