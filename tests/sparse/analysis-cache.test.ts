/**
 * Reuse of the symbolic analysis between solvers (app/engine/sparse/analysis-cache.ts): a second
 * solver of the same inputs takes the stored analysis, and its factors and solves are those of a
 * solver that analysed afresh, bit for bit; different inputs (values that change the 2×2 pairing,
 * other signs, another pattern) are never served another pattern's analysis. The reused path is
 * also checked against the dense ml-matrix reference (solve by LU, inertia by the signs of the
 * eigenvalues: Sylvester's law of inertia).
 */
import { Matrix, solve as denseSolve } from "ml-matrix";
import { beforeEach, describe, expect, it } from "vitest";
import { SymmetricSolver, analysisCacheStats, clearAnalysisCache, kktSigns } from "~/engine/sparse";
import { eigenInertia, fromEntries, maxAbs, randomDominant, rng, trolleyKkt, type SymTriplets } from "./helpers";

function solveWith(s: SymmetricSolver, M: SymTriplets, seed: number) {
  const inertia = s.factor(M.values);
  const r = rng(seed);
  const b = Float64Array.from({ length: M.n }, () => 2 * r() - 1);
  const x = new Float64Array(M.n);
  s.solve(b, x);
  return { inertia, b, x };
}

function denseError(M: SymTriplets, b: Float64Array, x: Float64Array): number {
  const ref = denseSolve(M.dense, Matrix.columnVector(Array.from(b))).to1DArray();
  let e = 0;
  for (let i = 0; i < x.length; i++) e = Math.max(e, Math.abs(x[i] - ref[i]));
  return e / Math.max(maxAbs(ref), 1e-300);
}

beforeEach(() => clearAnalysisCache());

describe("reused symbolic analysis", () => {
  it("a second solver of the same KKT pattern reuses the analysis; factors and solves are bit-identical to a fresh one", () => {
    for (const N of [4, 25]) {
      const M = trolleyKkt(N);
      const signs = kktSigns(M.nVar, M.nCon);
      const first = new SymmetricSolver(M.n, M.rows, M.cols, { signs, pairs: true });
      const a = solveWith(first, M, N);
      expect(first.symbolicStats.reused).toBe(false);
      const second = new SymmetricSolver(M.n, M.rows.slice(), M.cols.slice(), { signs: signs.slice(), pairs: true });
      const b = solveWith(second, M, N);
      expect(second.symbolicStats.reused).toBe(true);
      expect(second.perm).toBe(first.perm); // the stored arrays themselves
      clearAnalysisCache();
      const fresh = new SymmetricSolver(M.n, M.rows, M.cols, { signs, pairs: true });
      const c = solveWith(fresh, M, N);
      expect(fresh.symbolicStats.reused).toBe(false);
      expect(Array.from(b.x)).toEqual(Array.from(c.x));
      expect(b.inertia).toEqual(c.inertia);
      expect(Array.from(a.x)).toEqual(Array.from(c.x));
      // and both agree with the dense reference, inertia included
      expect(b.inertia).toEqual({ ok: true, ...eigenInertia(M.dense, 1e-10), regularized: 0, regularizedNegative: 0 });
      expect(denseError(M, b.b, b.x)).toBeLessThan(1e-10);
    }
  });

  it("keeps a private copy of the pattern unless the caller says it never changes it", () => {
    const M = trolleyKkt(6);
    const signs = kktSigns(M.nVar, M.nCon);
    // default: the caller may reuse its arrays; changing them must not change what the cache matches
    const rows = M.rows.slice(), cols = M.cols.slice();
    solveWith(new SymmetricSolver(M.n, rows, cols, { signs, pairs: true }), M, 3);
    rows.fill(0);
    cols.fill(0);
    const again = new SymmetricSolver(M.n, M.rows.slice(), M.cols.slice(), { signs, pairs: true });
    solveWith(again, M, 3);
    expect(again.symbolicStats.reused).toBe(true);
    // patternUnchanging: stored as given, and still found by an equal pattern
    clearAnalysisCache();
    const owned = new SymmetricSolver(M.n, M.rows.slice(), M.cols.slice(), { signs, pairs: true, patternUnchanging: true });
    const a = solveWith(owned, M, 4);
    const next = new SymmetricSolver(M.n, M.rows.slice(), M.cols.slice(), { signs, pairs: true });
    const b = solveWith(next, M, 4);
    expect(next.symbolicStats.reused).toBe(true);
    expect(Array.from(b.x)).toEqual(Array.from(a.x));
  });

  it("the reused factor of the first solver is not disturbed by the second one's values", () => {
    const M = trolleyKkt(10);
    const signs = kktSigns(M.nVar, M.nCon);
    const s1 = new SymmetricSolver(M.n, M.rows, M.cols, { signs, pairs: true });
    const before = solveWith(s1, M, 1);
    const s2 = new SymmetricSolver(M.n, M.rows, M.cols, { signs, pairs: true });
    const scaled = { ...M, values: M.values.map((v) => 3 * v), dense: M.dense.clone().mul(3) };
    solveWith(s2, scaled, 2);
    expect(s2.symbolicStats.reused).toBe(true);
    const x = new Float64Array(M.n);
    s1.solve(before.b, x); // s1's factor is still that of M
    expect(Array.from(x)).toEqual(Array.from(before.x));
  });

  it("values that change the pairing, other signs or another pattern get an analysis of their own", () => {
    // Pairing preference: a constraint row prefers the variable with the smaller |diagonal| / |coupling|.
    // Row 2 couples to variables 0 and 1; swapping which diagonal is zero swaps the pair.
    const e = (d0: number, d1: number): Array<[number, number, number]> => [
      [0, 0, d0], [1, 1, d1], [2, 0, 1], [2, 1, 1], [2, 2, 0],
    ];
    const A = fromEntries(3, e(0, 1));
    const B = fromEntries(3, e(1, 0));
    const signs = kktSigns(2, 1);
    const sa = new SymmetricSolver(3, A.rows, A.cols, { signs, pairs: true });
    solveWith(sa, A, 1);
    const sb = new SymmetricSolver(3, B.rows, B.cols, { signs, pairs: true });
    const rb = solveWith(sb, B, 1);
    expect(sb.symbolicStats.reused).toBe(false);
    expect(Array.from(sb.perm)).not.toEqual(Array.from(sa.perm));
    expect(rb.inertia).toEqual({ ok: true, ...eigenInertia(B.dense, 1e-12), regularized: 0, regularizedNegative: 0 });
    expect(denseError(B, rb.b, rb.x)).toBeLessThan(1e-12);

    const D = randomDominant(30, 3, 7);
    const s1 = new SymmetricSolver(D.n, D.rows, D.cols, { signs: Int8Array.from({ length: 30 }, (_, i) => (i % 3 === 0 ? -1 : 1)) });
    const s2 = new SymmetricSolver(D.n, D.rows, D.cols, { signs: Int8Array.from({ length: 30 }, (_, i) => (i % 4 === 0 ? -1 : 1)) });
    const s3 = new SymmetricSolver(D.n, D.rows, D.cols);
    expect([s1, s2, s3].map((s) => s.symbolicStats.reused)).toEqual([false, false, false]);
    const D2 = randomDominant(30, 3, 8);
    const s4 = new SymmetricSolver(D2.n, D2.rows, D2.cols);
    expect(s4.symbolicStats.reused).toBe(false);
    const s5 = new SymmetricSolver(D2.n, D2.rows, D2.cols);
    expect(s5.symbolicStats.reused).toBe(true);
    const r5 = solveWith(s5, D2, 3);
    expect({ positive: r5.inertia.positive, negative: r5.inertia.negative, zero: r5.inertia.zero }).toEqual(eigenInertia(D2.dense, 1e-10));
    expect(denseError(D2, r5.b, r5.x)).toBeLessThan(1e-10);
    expect(analysisCacheStats().hits).toBe(1);
  });
});
