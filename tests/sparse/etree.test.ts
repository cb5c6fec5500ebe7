/**
 * Elimination tree and column counts (sparse/etree.ts) against their definitions, computed by a dense
 * symbolic elimination: parent(j) = min{ i > j : l_ij ≠ 0 } and Lnz[j] = #{ i > j : l_ij ≠ 0 }
 * (Liu, "The role of elimination trees in sparse factorization", SIAM J. Matrix Anal. Appl. 11(1), 1990).
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { eliminationTree, tripletsToUpperCsc } from "~/engine/sparse";
import { rng } from "./helpers";

function denseSymbolic(n: number, rows: Int32Array, cols: Int32Array) {
  const S = Array.from({ length: n }, () => new Uint8Array(n));
  for (let t = 0; t < rows.length; t++) S[rows[t]][cols[t]] = S[cols[t]][rows[t]] = 1;
  const parent = new Int32Array(n).fill(-1);
  const Lnz = new Int32Array(n);
  for (let k = 0; k < n; k++) {
    const below: number[] = [];
    for (let i = k + 1; i < n; i++) if (S[i][k]) below.push(i);
    Lnz[k] = below.length;
    if (below.length) parent[k] = below[0];
    for (const a of below) for (const b of below) S[a][b] = 1;
  }
  return { parent, Lnz };
}

describe("eliminationTree", () => {
  it("matches the dense symbolic factor on random patterns", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 50 }), fc.integer({ min: 0, max: 150 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), (n, m, seed) => {
        const r = rng(seed);
        const rows: number[] = [];
        const cols: number[] = [];
        if (n > 0) for (let t = 0; t < m; t++) rows.push(Math.floor(r() * n)), cols.push(Math.floor(r() * n));
        // keep one orientation per pair
        const R = Int32Array.from(rows.map((v, t) => Math.max(v, cols[t])));
        const C = Int32Array.from(rows.map((v, t) => Math.min(v, cols[t])));
        const { A } = tripletsToUpperCsc(n, R, C);
        const parent = new Int32Array(n);
        const Lnz = new Int32Array(n);
        const nnzL = eliminationTree(A, parent, Lnz, new Int32Array(n));
        const ref = denseSymbolic(n, R, C);
        expect(Array.from(parent)).toEqual(Array.from(ref.parent));
        expect(Array.from(Lnz)).toEqual(Array.from(ref.Lnz));
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
