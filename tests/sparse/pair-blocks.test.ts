/**
 * The 2×2-pair blocks of the numeric LDLᵀ (a pair's two columns updated in one pass, ldl.ts) and
 * direct assembly into the factor's storage (SymmetricSolver.assembly / factorAssembled), on random
 * KKT matrices shaped like a local transcription: [[H, Jᵀ], [J, 0]] with J banded (each defect row
 * couples the variables of two neighbouring nodes) and H block diagonal per node, SPD or indefinite.
 *
 * References, all from outside the code under test (ml-matrix):
 *  - the factor itself: P A Pᵀ = L D Lᵀ, with D block diagonal (1×1 and 2×2 blocks), rebuilt densely
 *    with ml-matrix products and compared entry by entry (the definition of the factorisation);
 *  - the inertia: the signs of ml-matrix's eigenvalues (Sylvester's law of inertia: the congruent D
 *    has the eigenvalue signs of A; a 2×2 block counts by the signs of its own eigenvalues);
 *  - solves: ml-matrix's dense LU solve.
 */
import { Matrix, solve as denseSolve } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { kktSigns, SymmetricSolver } from "~/engine/sparse";
import { ldlSolveInPlace, type LdlFactor, type LdlSymbolic } from "~/engine/sparse/ldl";
import { eigenInertia, fromEntries, maxAbs, rng, type SymTriplets } from "./helpers";

/** Transcription-shaped KKT: nodes of nx states and nu controls, nx defects per interval. */
function bandedKkt(nodes: number, nx: number, nu: number, seed: number, indefinite: boolean): SymTriplets & { nVar: number; nCon: number } {
  const r = rng(seed);
  const w = nx + nu;
  const nVar = nodes * w;
  const nCon = (nodes - 1) * nx;
  const e: Array<[number, number, number]> = [];
  for (let k = 0; k < nodes; k++) {
    const b = k * w;
    for (let i = 0; i < w; i++) {
      // some zero Hessian rows of states (a state that enters linearly), as in Goddard's and the trolley's W
      const zeroRow = i < nx && r() < 0.3;
      e.push([b + i, b + i, zeroRow ? 0 : indefinite ? 2 * r() - 0.7 : 0.5 + r()]);
      for (let j = 0; j < i; j++) if (!zeroRow && r() < 0.4) e.push([b + i, b + j, 0.3 * (r() - 0.5)]);
    }
  }
  for (let k = 0; k + 1 < nodes; k++) {
    for (let s = 0; s < nx; s++) {
      const row = nVar + k * nx + s;
      e.push([row, k * w + s, -1 + 0.1 * (r() - 0.5)], [row, (k + 1) * w + s, 1 + 0.1 * (r() - 0.5)]);
      for (let j = 0; j < w; j++) if (r() < 0.35) e.push([row, k * w + j, 0.2 * (r() - 0.5)], [row, (k + 1) * w + j, 0.2 * (r() - 0.5)]);
    }
  }
  for (let c = 0; c < nCon; c++) e.push([nVar + c, nVar + c, 0]);
  return { ...fromEntries(nVar + nCon, e), nVar, nCon };
}

/** Dense L (unit lower) and block-diagonal D of the solver's factor, in pivot order. */
function denseFactor(s: SymmetricSolver): { L: Matrix; D: Matrix; kind: Uint8Array | null } {
  const inner = s as unknown as {
    sym: { n: number; Lp: Int32Array; Li: Int32Array; kind: Uint8Array | null };
    fac: { Lx: Float64Array; D: Float64Array; E: Float64Array };
  };
  const { n, Lp, Li, kind } = inner.sym;
  const { Lx, D: d, E } = inner.fac;
  const L = Matrix.eye(n);
  const D = Matrix.zeros(n, n);
  for (let j = 0; j < n; j++) {
    for (let p = Lp[j]; p < Lp[j + 1]; p++) L.set(Li[p], j, Lx[p]);
    D.set(j, j, d[j]);
    if (kind !== null && kind[j] === 1) {
      D.set(j, j + 1, E[j]);
      D.set(j + 1, j, E[j]);
    }
  }
  return { L, D, kind };
}

function permuted(A: Matrix, perm: Int32Array): Matrix {
  const n = perm.length;
  const P = Matrix.zeros(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) P.set(i, j, A.get(perm[i], perm[j]));
  return P;
}

function relErr(x: Float64Array, ref: Float64Array): number {
  let num = 0;
  for (let i = 0; i < x.length; i++) num = Math.max(num, Math.abs(x[i] - ref[i]));
  return num / Math.max(maxAbs(ref), 1e-300);
}

describe("2×2 pair blocks of the numeric LDLᵀ on transcription-shaped KKT matrices", () => {
  const cases: Array<[number, number, number, boolean]> = [];
  for (let seed = 1; seed <= 24; seed++) cases.push([3 + (seed % 9), 1 + (seed % 4), seed % 3, seed % 2 === 0]);

  it.each(cases)("nodes %i, nx %i, nu %i, indefinite H %s: P A Pᵀ = L D Lᵀ, inertia = eigenvalue signs, solve = dense LU", (nodes, nx, nu, indefinite) => {
    const seed = nodes * 1000 + nx * 100 + nu * 10 + (indefinite ? 1 : 0);
    const M = bandedKkt(nodes, nx, nu, seed, indefinite);
    const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs: kktSigns(M.nVar, M.nCon), pairs: true, pivotTolerance: 1e-20 });
    const inertia = s.factor(M.values);
    const ref = eigenInertia(M.dense, 1e-9);
    if (ref.zero > 0) return; // a singular draw has no unique factor to compare
    const { L, D, kind } = denseFactor(s);
    // the fused path is exercised: some pair's columns appear in a later row of L
    if (kind !== null && nodes >= 4) {
      let later = 0;
      for (let j = 0; j + 1 < M.n; j++) if (kind[j] === 1) for (let i = j + 2; i < M.n; i++) if (L.get(i, j) !== 0) later++;
      expect(later).toBeGreaterThan(0);
    }
    const PAPt = permuted(M.dense, s.perm);
    const LDLt = L.mmul(D).mmul(L.transpose());
    const scale = Math.max(1, maxAbs(PAPt.to1DArray()));
    // a stable factor reproduces A to a few ulps of its entries times the growth (1e-10 relative:
    // common practice, no source); regularised pivots change A by ≤ δ = 1e-8, so only unregularised draws
    if (inertia.regularized === 0) {
      expect(maxAbs(LDLt.sub(PAPt).to1DArray()) / scale).toBeLessThan(1e-10);
      expect({ positive: inertia.positive, negative: inertia.negative, zero: inertia.zero }).toEqual(ref);
    }
    expect(inertia.ok).toBe(true);
    const r = rng(seed + 7);
    const b = Float64Array.from({ length: M.n }, () => 2 * r() - 1);
    const x = new Float64Array(M.n);
    s.solve(b, x, 5);
    const xRef = Float64Array.from(denseSolve(M.dense, Matrix.columnVector(Array.from(b))).to1DArray());
    expect(relErr(x, xRef)).toBeLessThan(1e-8);
  });
});

describe("direct assembly into the factor's storage", () => {
  it("is null before a pairs analysis; afterwards summing through the slots factors exactly as factor(values)", () => {
    const M = bandedKkt(9, 3, 1, 77, false);
    const opts = { signs: kktSigns(M.nVar, M.nCon), pairs: true, pivotTolerance: 1e-20 };
    const viaTriplets = new SymmetricSolver(M.n, M.rows, M.cols, opts);
    const direct = new SymmetricSolver(M.n, M.rows, M.cols, opts);
    expect(direct.assembly()).toBeNull();
    expect(() => direct.factorAssembled()).toThrow(/no analysis yet/);
    direct.factor(M.values); // the pairs analysis uses the first values
    const second = M.values.map((v, t) => v * (1 + 0.01 * Math.sin(t)));
    const i1 = viaTriplets.factor(M.values);
    const i2 = viaTriplets.factor(second);
    const a = direct.assembly()!;
    a.values.fill(0);
    for (let t = 0; t < second.length; t++) a.values[a.slots[t]] += second[t];
    expect(direct.factorAssembled()).toEqual(i2);
    expect(i1.ok && i2.ok).toBe(true);
    const b = Float64Array.from({ length: M.n }, (_, i) => Math.cos(i));
    const x1 = new Float64Array(M.n);
    const x2 = new Float64Array(M.n);
    viaTriplets.solve(b, x1);
    direct.solve(b, x2);
    expect(Array.from(x2)).toEqual(Array.from(x1)); // the same sums in the same order: bit-identical
    // and both solve the second matrix (dense LU of it, ml-matrix)
    const dense = fromEntries(M.n, Array.from(M.rows, (row, t) => [row, M.cols[t], second[t]] as [number, number, number])).dense;
    const xRef = Float64Array.from(denseSolve(dense, Matrix.columnVector(Array.from(b))).to1DArray());
    expect(relErr(x2, xRef)).toBeLessThan(1e-8);
  });
});

/**
 * The triangular solves column at a time, in storage order, as the definition of L D Lᵀ x = b
 * gives them (forward L z = b, block-diagonal D, backward Lᵀ x = w); the solver's own solves
 * fuse a pair's two columns into one pass and must give the same numbers to the bit.
 */
function columnSolve(Lp: Int32Array, Li: Int32Array, Lx: Float64Array, Dinv: Float64Array, Einv: Float64Array, kind: Uint8Array | null, x: Float64Array): void {
  const n = x.length;
  for (let j = 0; j < n; j++) {
    const xj = x[j];
    if (xj !== 0) for (let p = Lp[j]; p < Lp[j + 1]; p++) x[Li[p]] -= Lx[p] * xj;
  }
  for (let j = 0; j < n; j++) {
    if (kind !== null && kind[j] === 1) {
      const x1 = x[j], x2 = x[j + 1];
      x[j] = Dinv[j] * x1 + Einv[j] * x2;
      x[j + 1] = Einv[j] * x1 + Dinv[j + 1] * x2;
      j++;
    } else x[j] *= Dinv[j];
  }
  for (let j = n - 1; j >= 0; j--) {
    let s = x[j];
    for (let p = Lp[j]; p < Lp[j + 1]; p++) s -= Lx[p] * x[Li[p]];
    x[j] = s;
  }
}

describe("the solves of a factor with 2×2 pairs", () => {
  it.each([11, 12, 13, 14])("seed %i: the fused forward and backward passes give the column-at-a-time numbers to the bit, zeros and NaN included", (seed) => {
    const M = bandedKkt(12, 3, 1, seed, seed % 2 === 0);
    const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs: kktSigns(M.nVar, M.nCon), pairs: true, pivotTolerance: 1e-20 });
    s.factor(M.values);
    const inner = s as unknown as { sym: LdlSymbolic; fac: LdlFactor };
    const { Lp, Li, kind } = inner.sym;
    const { Lx, Dinv, Einv } = inner.fac;
    expect(kind).not.toBeNull();
    const r = rng(seed);
    const rhs: Float64Array[] = [
      Float64Array.from({ length: M.n }, () => 2 * r() - 1),
      // mostly zeros, some −0: sums that stay zero take the column's own order (sign of zero)
      Float64Array.from({ length: M.n }, (_, i) => (i % 7 === 3 ? 2 * r() - 1 : i % 2 === 0 ? -0 : 0)),
      Float64Array.from({ length: M.n }, (_, i) => (i === M.n - 2 ? NaN : 2 * r() - 1)),
      new Float64Array(M.n).fill(-0),
      Float64Array.from({ length: M.n }, (_, i) => (i === M.n - 1 ? 1 : i % 3 === 0 ? -0 : 0)),
    ];
    // signed zeros with one or two nonzero entries: sums that end at ±0 in the backward pass
    for (let t = 0; t < 60; t++) {
      const b = Float64Array.from({ length: M.n }, () => (r() < 0.5 ? -0 : 0));
      b[Math.floor(r() * M.n)] = 2 * r() - 1;
      if (t % 2 === 0) b[Math.floor(r() * M.n)] = -(2 * r() - 1);
      rhs.push(b);
    }
    for (const b of rhs) {
      const ours = Float64Array.from(b);
      ldlSolveInPlace(inner.sym, inner.fac, ours);
      const ref = Float64Array.from(b);
      columnSolve(Lp, Li, Lx, Dinv, Einv, kind, ref);
      for (let i = 0; i < M.n; i++) if (!Object.is(ours[i], ref[i])) expect([i, ours[i]]).toEqual([i, ref[i]]);
    }
  });
});
