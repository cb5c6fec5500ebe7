/**
 * Triplet → CSC conversion (sparse/triplet.ts) and CSC operations (sparse/csc.ts), checked against
 * dense ml-matrix copies of the same matrices.
 */
import fc from "fast-check";
import { Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { symmetricAdjacency, symmetricMatVec, symmetricPermute, symmetricInfNorm, symmetricResidual, symmetricResidualBounds, tripletsToUpperCsc } from "~/engine/sparse";
import type { CscPattern } from "~/engine/sparse/csc";
import { randomDominant, randomPermutation, rng } from "./helpers";

function toDense(A: CscPattern, values: Float64Array): Matrix {
  const M = Matrix.zeros(A.n, A.n);
  for (let j = 0; j < A.n; j++) {
    for (let p = A.colPtr[j]; p < A.colPtr[j + 1]; p++) {
      const i = A.rowIdx[p];
      M.set(i, j, M.get(i, j) + values[p]);
      if (i !== j) M.set(j, i, M.get(j, i) + values[p]);
    }
  }
  return M;
}

function assemble(slot: Int32Array, nnz: number, values: Float64Array): Float64Array {
  const Ax = new Float64Array(nnz);
  for (let t = 0; t < slot.length; t++) Ax[slot[t]] += values[t];
  return Ax;
}

describe("tripletsToUpperCsc", () => {
  it("reproduces the dense matrix (duplicates summed, mixed triangles), sorted upper rows, full diagonal", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 40 }), fc.integer({ min: 0, max: 5 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), (n, per, seed) => {
        const M = randomDominant(n, per, seed);
        const { A, slot } = tripletsToUpperCsc(n, M.rows, M.cols);
        const Ax = assemble(slot, A.colPtr[n], M.values);
        expect(toDense(A, Ax).sub(M.dense).abs().max()).toBeLessThan(1e-15);
        for (let j = 0; j < n; j++) {
          let diag = 0;
          for (let p = A.colPtr[j]; p < A.colPtr[j + 1]; p++) {
            expect(A.rowIdx[p]).toBeLessThanOrEqual(j);
            if (p > A.colPtr[j]) expect(A.rowIdx[p]).toBeGreaterThan(A.rowIdx[p - 1]); // sorted, no duplicates
            if (A.rowIdx[p] === j) diag++;
          }
          expect(diag).toBe(1);
        }
      }),
      { numRuns: 100, seed: 3 },
    );
  });

  it("adds structurally missing diagonal entries as zeros", () => {
    const { A, slot } = tripletsToUpperCsc(3, Int32Array.from([1]), Int32Array.from([0]));
    expect(Array.from(A.colPtr)).toEqual([0, 1, 3, 4]);
    expect(Array.from(A.rowIdx)).toEqual([0, 0, 1, 2]);
    expect(Array.from(slot)).toEqual([1]);
  });

  it("rejects bad input with the field and position named", () => {
    expect(() => tripletsToUpperCsc(3, Int32Array.from([0, 3]), Int32Array.from([0, 0]), "kkt")).toThrow("kkt: rows[1] = 3 is outside 0..2");
    expect(() => tripletsToUpperCsc(3, Int32Array.from([0]), Int32Array.from([-1]))).toThrow("cols[0] = -1");
    expect(() => tripletsToUpperCsc(3, Int32Array.from([0, 1]), Int32Array.from([0]))).toThrow("rows has 2 entries but cols has 1");
    // (2, 1) and its mirror (1, 2) both given
    expect(() => tripletsToUpperCsc(3, Int32Array.from([2, 0, 1]), Int32Array.from([1, 0, 2]))).toThrow(/triplet 2 .*mirror/);
    // a repeated entry in the same orientation is a duplicate, summed, not an error
    expect(() => tripletsToUpperCsc(3, Int32Array.from([2, 2]), Int32Array.from([1, 1]))).not.toThrow();
  });
});

describe("CSC operations", () => {
  it("symmetricMatVec and symmetricResidual agree with the dense product", () => {
    const M = randomDominant(50, 4, 17);
    const { A, slot } = tripletsToUpperCsc(50, M.rows, M.cols);
    const Ax = assemble(slot, A.colPtr[50], M.values);
    const r = rng(2);
    const x = Float64Array.from({ length: 50 }, () => r() - 0.5);
    const y = new Float64Array(50);
    symmetricMatVec(A, Ax, x, y);
    const ref = M.dense.mmul(Matrix.columnVector(Array.from(x))).to1DArray();
    for (let i = 0; i < 50; i++) expect(Math.abs(y[i] - ref[i])).toBeLessThan(1e-13);
    const b = Float64Array.from(ref, (v) => v + 1);
    const res = new Float64Array(50);
    expect(symmetricResidual(A, Ax, x, b, res)).toBeCloseTo(1, 12);
    // With the bounds: the same residual to the bit, the largest |a_ii| and ‖x‖∞; and ‖A‖∞ of the dense matrix.
    const res2 = new Float64Array(50), norms = new Float64Array(2);
    expect(symmetricResidualBounds(A, Ax, x, b, res2, norms)).toBe(symmetricResidual(A, Ax, x, b, res));
    expect(Array.from(res2)).toEqual(Array.from(res));
    let normA = 0;
    for (let i = 0; i < 50; i++) normA = Math.max(normA, M.dense.getRow(i).reduce((t, v) => t + Math.abs(v), 0));
    expect(Math.abs(symmetricInfNorm(A, Ax, new Float64Array(50)) - normA)).toBeLessThan(1e-12 * normA);
    expect(norms[0]).toBe(Math.max(...Array.from({ length: 50 }, (_, i) => Math.abs(M.dense.get(i, i)))));
    expect(norms[1]).toBe(Math.max(...Array.from(x, Math.abs)));
  });

  it("symmetricResidualBounds: the dense residual, a lower bound of ‖A‖∞, NaN kept in r and ignored in the bounds", () => {
    for (const seed of [3, 4, 5]) {
      const n = 60;
      const M = randomDominant(n, 5, seed);
      const { A, slot } = tripletsToUpperCsc(n, M.rows, M.cols);
      const Ax = assemble(slot, A.colPtr[n], M.values);
      const r = rng(seed);
      const x = Float64Array.from({ length: n }, (_, i) => (i % 9 === 4 ? -0 : r() - 0.5));
      const b = Float64Array.from({ length: n }, () => r() - 0.5);
      const ours = new Float64Array(n), norm = new Float64Array(2);
      const res = symmetricResidualBounds(A, Ax, x, b, ours, norm);
      // b − A x and ‖A‖∞ from ml-matrix's dense product and rows, to rounding
      const Adense = M.dense.mmul(Matrix.columnVector(Array.from(x))).to1DArray();
      let worst = 0, dense = 0;
      for (let i = 0; i < n; i++) {
        expect(Math.abs(ours[i] - (b[i] - Adense[i]))).toBeLessThan(1e-13);
        worst = Math.max(worst, Math.abs(b[i] - Adense[i]));
        dense = Math.max(dense, M.dense.getRow(i).reduce((t, v) => t + Math.abs(v), 0));
      }
      expect(Math.abs(res - worst)).toBeLessThan(1e-13);
      expect(norm[0]).toBeGreaterThan(0);
      expect(norm[0]).toBeLessThanOrEqual(dense);
      expect(Math.abs(symmetricInfNorm(A, Ax, new Float64Array(n)) - dense)).toBeLessThan(1e-12 * dense);
      x[7] = NaN;
      expect(symmetricResidualBounds(A, Ax, x, b, ours, norm)).toBeNaN();
      expect(norm[1]).toBe(x.reduce((m, v) => (Math.abs(v) > m ? Math.abs(v) : m), 0));
      // a NaN entry of A: its rows are left out of ‖A‖∞ (as Math.max would not), the others stay
      const Anan = Float64Array.from(Ax);
      Anan[A.colPtr[n] - 1] = NaN; // the last column's diagonal
      expect(symmetricInfNorm(A, Anan, new Float64Array(n))).toBeLessThanOrEqual(dense);
      expect(symmetricInfNorm(A, Anan, new Float64Array(n))).toBeGreaterThan(0);
    }
  });

  it("symmetricPermute gives P A Pᵀ (checked densely) with its slot map", () => {
    const n = 30;
    const M = randomDominant(n, 3, 8);
    const { A, slot } = tripletsToUpperCsc(n, M.rows, M.cols);
    const Ax = assemble(slot, A.colPtr[n], M.values);
    const perm = randomPermutation(n, rng(9));
    const pinv = new Int32Array(n);
    for (let k = 0; k < n; k++) pinv[perm[k]] = k;
    const { C, slotMap } = symmetricPermute(A, pinv);
    const Cx = new Float64Array(C.colPtr[n]);
    for (let p = 0; p < Ax.length; p++) Cx[slotMap[p]] = Ax[p];
    const Cd = toDense(C, Cx);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(Cd.get(i, j)).toBe(M.dense.get(perm[i], perm[j]));
    for (let j = 0; j < n; j++) for (let p = C.colPtr[j]; p < C.colPtr[j + 1]; p++) expect(C.rowIdx[p]).toBeLessThanOrEqual(j);
  });

  it("symmetricAdjacency lists both triangles without the diagonal", () => {
    const { A } = tripletsToUpperCsc(3, Int32Array.from([0, 2, 1]), Int32Array.from([0, 0, 1]));
    const G = symmetricAdjacency(A);
    const lists = [0, 1, 2].map((j) => Array.from(G.rowIdx.slice(G.colPtr[j], G.colPtr[j + 1])).sort());
    expect(lists).toEqual([[2], [], [0]]);
  });
});
