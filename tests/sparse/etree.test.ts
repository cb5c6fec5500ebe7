/**
 * Elimination tree and column counts (sparse/etree.ts) against their definitions, computed by a dense
 * symbolic elimination: parent(j) = min{ i > j : l_ij ≠ 0 } and Lnz[j] = #{ i > j : l_ij ≠ 0 }
 * (Liu, "The role of elimination trees in sparse factorization", SIAM J. Matrix Anal. Appl. 11(1), 1990).
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { eliminationTree, tripletsToUpperCsc } from "~/engine/sparse";
import { denseEliminationTree, randomLowerPattern, rng } from "./helpers";

describe("eliminationTree", () => {
  it("matches the dense symbolic factor on random patterns", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 50 }), fc.integer({ min: 0, max: 150 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), (n, m, seed) => {
        const { rows: R, cols: C } = randomLowerPattern(n, m, rng(seed));
        const { A } = tripletsToUpperCsc(n, R, C);
        const parent = new Int32Array(n);
        const Lnz = new Int32Array(n);
        const nnzL = eliminationTree(A, parent, Lnz, new Int32Array(n));
        const ref = denseEliminationTree(n, R, C);
        expect(parent).toEqual(ref.parent);
        expect(Lnz).toEqual(ref.Lnz);
        expect(nnzL).toBe(ref.Lnz.reduce((a, b) => a + b, 0));
      }),
      { numRuns: 200, seed: 11 },
    );
  });

  it("rejects a lower-stored matrix", () => {
    const A = { n: 2, colPtr: Int32Array.from([0, 2, 3]), rowIdx: Int32Array.from([0, 1, 1]) };
    expect(() => eliminationTree(A, new Int32Array(2), new Int32Array(2), new Int32Array(2))).toThrow(/upper-stored/);
  });
});
