/**
 * Combining per-control arc sequences into one shooting sequence (app/engine/shooting/structure.ts):
 * expected results follow from the rule stated there (only junctions of different controls into or
 * out of the same boundary arc, closer than the merge gap, become one).
 */
import { describe, expect, it } from "vitest";
import { combineStructure, combinedSignature } from "~/engine/shooting/structure";
import type { ArcStructure } from "~/engine/arcs/types";
import { sampledSolution, toyProblem } from "../arcs/helpers";

const problem = toyProblem({
  states: [{ name: "x", upper: 1 }],
  controls: [{ name: "a", lower: 0, upper: 1 }, { name: "b" }],
  dynamics: (z, out) => (out[0] = z[2] + z[3]),
  running: (z) => z[3] * z[3],
  runningHess: [[3, 3]],
});
const t = Float64Array.from({ length: 11 }, (_, k) => k / 10);
const sol = sampledSolution(t, [t.map((v) => (v > 0.3 && v < 0.7 ? 1 : 0.5))], [t.map(() => 0.5), t.map(() => 0)]);

const structure = (controls: ArcStructure["controls"]): ArcStructure => ({
  controls, signature: "", usedSwitchingFunction: false, costateSign: 0, notes: [],
});

describe("combineStructure", () => {
  it("keeps close junctions of different controls apart", () => {
    const s = structure([
      { control: "a", arcs: [{ kind: "lower", t0: 0, t1: 0.33 }, { kind: "upper", t0: 0.33, t1: 1 }], junctions: [0.33] },
      { control: "b", arcs: [{ kind: "interior", t0: 0, t1: 0.335 }, { kind: "interior", t0: 0.335, t1: 1 }], junctions: [0.335] },
    ]);
    const c = combineStructure(problem, sol, s, 0.01);
    // b's two interior arcs are one kind, so only a's junction remains.
    expect(c.junctions).toEqual([0.33]);
    expect(c.arcs.map((a) => a.kinds)).toEqual([["lower", "interior"], ["upper", "interior"]]);
  });

  it("merges the junctions of a boundary arc seen by both controls", () => {
    const s = structure([
      { control: "a", arcs: [{ kind: "lower", t0: 0, t1: 0.3 }, { kind: "boundary", constraint: "x", t0: 0.3, t1: 0.7 }, { kind: "lower", t0: 0.7, t1: 1 }], junctions: [0.3, 0.7] },
      { control: "b", arcs: [{ kind: "interior", t0: 0, t1: 0.305 }, { kind: "boundary", constraint: "x", t0: 0.305, t1: 0.702 }, { kind: "interior", t0: 0.702, t1: 1 }], junctions: [0.305, 0.702] },
    ]);
    const c = combineStructure(problem, sol, s, 0.01);
    expect(c.junctions.length).toBe(2);
    expect(Math.abs(c.junctions[0] - 0.3025)).toBeLessThan(1e-12);
    expect(Math.abs(c.junctions[1] - 0.701)).toBeLessThan(1e-12);
    // The first control carries the constraint; the second solves ∂H̃/∂u = 0 but is reported as boundary.
    expect(c.arcs[1].kinds).toEqual(["boundary", "interior"]);
    expect(c.arcs[1].constraint).toMatchObject({ name: "x", side: 1, bound: 1 });
    expect(combinedSignature(problem, c.arcs)).toBe("a=lower|boundary:x|lower;b=interior|boundary:x|interior");
  });
});
