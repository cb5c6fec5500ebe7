/**
 * SymmetricSolver (LDLᵀ with AMD, inertia, refinement) against dense ml-matrix references.
 * Reference solves: ml-matrix LU `solve`; reference inertia: signs of the eigenvalues from
 * ml-matrix EigenvalueDecomposition (Sylvester's law of inertia: the pivots of A = L D Lᵀ have the
 * signs of the eigenvalues of A).
 */
import fc from "fast-check";
import { Matrix, solve as denseSolve } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { SymmetricSolver, kktSigns } from "~/engine/sparse";
import { eigenInertia, fromEntries, maxAbs, randomDominant, randomQuasiDefinite, rng, trolleyKkt, type SymTriplets } from "./helpers";

function denseReference(M: SymTriplets, b: Float64Array): Float64Array {
  return Float64Array.from(denseSolve(M.dense, Matrix.columnVector(Array.from(b))).to1DArray());
}

function relErr(x: Float64Array, ref: Float64Array): number {
  let num = 0;
  for (let i = 0; i < x.length; i++) num = Math.max(num, Math.abs(x[i] - ref[i]));
  return num / Math.max(maxAbs(ref), 1e-300);
}

function randomRhs(n: number, seed: number): Float64Array {
  const r = rng(seed);
  return Float64Array.from({ length: n }, () => 2 * r() - 1);
}

describe("SymmetricSolver against dense ml-matrix", () => {
  it("solves random sparse symmetric indefinite (diagonally dominant) systems; inertia = eigenvalue signs", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 70 }),
        fc.integer({ min: 0, max: 4 }),
        fc.integer({ min: 0, max: 2 ** 31 - 1 }),
        fc.constantFrom("amd" as const, "natural" as const),
        (n, perRow, seed, ordering) => {
          const M = randomDominant(n, perRow, seed);
          const s = new SymmetricSolver(n, M.rows, M.cols, { ordering });
          const inertia = s.factor(M.values);
          // eigenvalues of a strictly dominant matrix are ≥ 0.5 in modulus (Gershgorin), so 1e-8 separates signs
          const ref = eigenInertia(M.dense, 1e-8);
          expect(inertia).toEqual({ ok: true, ...ref });
          const b = randomRhs(n, seed + 1);
          const x = new Float64Array(n);
          s.solve(b, x);
          // tolerance 1e-10 relative: κ ≤ (max row sum)/(0.5) is modest for these matrices
          expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-10);
        },
      ),
      { numRuns: 150, seed: 20261201 },
    );
  });

  it("solves random quasi-definite KKT-like systems [[H, Bᵀ], [B, −G]] with inertia (n1, n2, 0)", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 50 }),
        fc.integer({ min: 1, max: 30 }),
        fc.integer({ min: 0, max: 2 ** 31 - 1 }),
        (n1, n2, seed) => {
          const M = randomQuasiDefinite(n1, n2, seed);
          const s = new SymmetricSolver(n1 + n2, M.rows, M.cols);
          const inertia = s.factor(M.values);
          expect(inertia).toEqual({ ok: true, positive: n1, negative: n2, zero: 0 });
          expect(eigenInertia(M.dense, 1e-10)).toEqual({ positive: n1, negative: n2, zero: 0 });
          const b = randomRhs(n1 + n2, seed ^ 0x5555);
          const x = new Float64Array(n1 + n2);
          s.solve(b, x, 2);
          expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-9);
        },
      ),
      { numRuns: 100, seed: 7 },
    );
  });

  it("refactors new values on the same pattern and allows b and x to be the same array", () => {
    const M = randomDominant(40, 3, 99);
    const s = new SymmetricSolver(40, M.rows, M.cols);
    for (const scale of [1, -2, 0.5]) {
      const values = M.values.map((v) => v * scale);
      const inertia = s.factor(values);
      const ref = eigenInertia(M.dense.clone().mul(scale), 1e-8);
      expect(inertia).toEqual({ ok: true, ...ref });
      const b = randomRhs(40, 3);
      const expected = denseReference({ ...M, dense: M.dense.clone().mul(scale) }, b);
      const xb = Float64Array.from(b);
      s.solve(xb, xb);
      expect(relErr(xb, expected)).toBeLessThan(1e-10);
    }
  });
});

describe("KKT matrix of a small NLP", () => {
  /**
   * NLP: minimise x₀² + 2x₁² + x₂² + x₀x₁ − x₃  s.t.  c₁ = x₀ + x₁ + x₂ − 1 = 0,  c₂ = x₀x₂ + x₃² − 2 = 0.
   * At x = (0.5, 0.2, 0.3, 1.2), λ = (0.4, λ₂) with λ₂ = −0.25 unless stated:
   *   ∇²L = ∇²f + λ₂ ∇²c₂ = [[2, 1, λ₂, 0], [1, 4, 0, 0], [λ₂, 0, 0, 0], [0, 0, 0, 2λ₂]]
   *   J = [[1, 1, 1, 0], [x₂, 0, x₀, 2x₃]].
   * Inertia of K = [[H, Jᵀ], [J, −δc I]] for δc = 0 equals inertia(ZᵀHZ) + (m, m, 0), Z a null-space
   * basis of J (Gould, "On practical conditions for the existence and uniqueness of solutions to the
   * general equality quadratic programming problem", Math. Program. 32, 1985; recalled from memory).
   */
  const x = [0.5, 0.2, 0.3, 1.2];
  function kkt(deltaW: number, deltaC: number, l2 = -0.25): SymTriplets {
    const e: Array<[number, number, number]> = [
      [0, 0, 2 + deltaW], [1, 0, 1], [1, 1, 4 + deltaW], [2, 0, l2], [2, 2, 0 + deltaW], [3, 3, 2 * l2 + deltaW],
      [4, 0, 1], [4, 1, 1], [4, 2, 1],
      [5, 0, x[2]], [5, 2, x[0]], [5, 3, 2 * x[3]],
    ];
    if (deltaC !== 0) e.push([4, 4, -deltaC], [5, 5, -deltaC]);
    return fromEntries(6, e);
  }

  it("reports inertia (n, m, 0) once δw makes the reduced Hessian positive definite", () => {
    // δw = 1: H + I = [[3,1,−.25,0],[1,5,0,0],[−.25,0,1,0],[0,0,0,0.5]] is positive definite
    // (Gershgorin), so ZᵀHZ ≻ 0 and the inertia is (4, 2, 0).
    const M = kkt(1, 0);
    expect(eigenInertia(M.dense, 1e-10)).toEqual({ positive: 4, negative: 2, zero: 0 });
    for (const ordering of ["amd", "natural"] as const) {
      const s = new SymmetricSolver(6, M.rows, M.cols, { ordering });
      expect(s.factor(M.values)).toEqual({ ok: true, positive: 4, negative: 2, zero: 0 });
      const b = Float64Array.from([1, -2, 0.5, 3, -1, 0.25]);
      const sol = new Float64Array(6);
      s.solve(b, sol);
      expect(relErr(sol, denseReference(M, b))).toBeLessThan(1e-12);
    }
  });

  it("reports the wrong inertia that calls for inertia correction when the reduced Hessian is indefinite", () => {
    // δw = 0 and λ₂ = −10: H₃₃ = 2λ₂ = −20 dominates, ZᵀHZ is indefinite and K has more than m
    // negative eigenvalues (the eigenvalues of the dense matrix decide, not this comment).
    const M = kkt(0, 1e-8, -10);
    const ref = eigenInertia(M.dense, 1e-10);
    expect(ref.negative).toBeGreaterThan(2); // more than m negative eigenvalues
    const s = new SymmetricSolver(6, M.rows, M.cols, { ordering: "natural" });
    expect(s.factor(M.values)).toEqual({ ok: true, ...ref });
  });

  it("quasi-definite regularised form (δc > 0) keeps inertia (n, m, 0) in AMD order", () => {
    const M = kkt(1, 1e-8);
    const s = new SymmetricSolver(6, M.rows, M.cols);
    expect(s.factor(M.values)).toEqual({ ok: true, positive: 4, negative: 2, zero: 0 });
  });
});

describe("failure cases are results", () => {
  it("detects an exact zero pivot: diag(1, 0, 2) and the constraint-first KKT with δc = 0", () => {
    const D = fromEntries(3, [[0, 0, 1], [1, 1, 0], [2, 2, 2]]);
    const s = new SymmetricSolver(3, D.rows, D.cols, { ordering: "natural" });
    expect(s.factor(D.values)).toEqual({ ok: false, positive: 2, negative: 0, zero: 1 });
    // [[0, 1], [1, 1]] eliminated from the zero diagonal: first pivot is exactly 0
    const K = fromEntries(2, [[1, 0, 1], [1, 1, 1]]);
    const s2 = new SymmetricSolver(2, K.rows, K.cols, { ordering: "natural" });
    const inertia = s2.factor(K.values);
    expect(inertia.ok).toBe(false);
    expect(inertia.zero).toBeGreaterThanOrEqual(1);
  });

  it("counts |d| ≤ pivotTolerance as zero", () => {
    const D = fromEntries(2, [[0, 0, 1e-9], [1, 1, 3]]);
    expect(new SymmetricSolver(2, D.rows, D.cols, { pivotTolerance: 1e-8 }).factor(D.values)).toEqual({ ok: false, positive: 1, negative: 0, zero: 1 });
    expect(new SymmetricSolver(2, D.rows, D.cols, { pivotTolerance: 1e-10 }).factor(D.values)).toEqual({ ok: true, positive: 2, negative: 0, zero: 0 });
  });

  it("a NaN or infinite value gives ok = false, not an exception", () => {
    for (const bad of [NaN, Infinity, -Infinity]) {
      const D = fromEntries(3, [[0, 0, 1], [1, 0, bad], [1, 1, 2], [2, 2, 1]]);
      const s = new SymmetricSolver(3, D.rows, D.cols);
      expect(s.factor(D.values).ok).toBe(false);
      const E = fromEntries(2, [[0, 0, bad], [1, 1, 1]]);
      expect(new SymmetricSolver(2, E.rows, E.cols).factor(E.values).ok).toBe(false);
    }
  });

  it("rank-deficient PSD matrix B Bᵀ (rank r): r positive pivots and n − r zero pivots", () => {
    const r = rng(5);
    const n = 30;
    const rank = 12;
    const B = Matrix.zeros(n, rank);
    for (let i = 0; i < n; i++) for (let c = 0; c < 2; c++) B.set(i, Math.floor(r() * rank), 2 * r() - 1);
    for (let c = 0; c < rank; c++) B.set(c, c, 1 + r()); // full column rank
    const A = B.mmul(B.transpose());
    const entries: Array<[number, number, number]> = [];
    for (let j = 0; j < n; j++) for (let i = j; i < n; i++) if (A.get(i, j) !== 0 || i === j) entries.push([i, j, A.get(i, j)]);
    const M = fromEntries(n, entries);
    expect(eigenInertia(M.dense, 1e-9)).toEqual({ positive: rank, negative: 0, zero: n - rank });
    for (const ordering of ["amd", "natural"] as const) {
      const s = new SymmetricSolver(n, M.rows, M.cols, { ordering, pivotTolerance: 1e-9 });
      expect(s.factor(M.values)).toEqual({ ok: false, positive: rank, negative: 0, zero: n - rank });
    }
  });

  it("KKT with linearly dependent constraint rows and δc = 0 is singular", () => {
    // H = I₃, J = [[1, 2, 0], [2, 4, 0]] (row 2 = 2·row 1): K has one zero eigenvalue.
    const M = fromEntries(5, [[0, 0, 1], [1, 1, 1], [2, 2, 1], [3, 0, 1], [3, 1, 2], [4, 0, 2], [4, 1, 4]]);
    expect(eigenInertia(M.dense, 1e-10)).toEqual({ positive: 3, negative: 1, zero: 1 });
    const s = new SymmetricSolver(5, M.rows, M.cols, { ordering: "natural", pivotTolerance: 1e-10 });
    expect(s.factor(M.values)).toEqual({ ok: false, positive: 3, negative: 1, zero: 1 });
  });

  it("solve before factor is a clear error", () => {
    const s = new SymmetricSolver(2, Int32Array.from([0, 1]), Int32Array.from([0, 1]));
    expect(() => s.solve(new Float64Array(2), new Float64Array(2))).toThrow(/factor/);
  });
});

describe("iterative refinement", () => {
  it("improves the residual of an ill-conditioned factorisation (tiny pivots without pivoting)", () => {
    // Blocks [[ε, 1], [1, 1]] eliminated in natural order: the pivot ε = 1e-10 makes the second pivot
    // 1 − 1/ε, element growth ~1/ε, and a backward error far above machine precision, which
    // refinement in working precision removes (Skeel, "Iterative refinement implies numerical
    // stability for Gaussian elimination", Math. Comp. 35, 1980).
    const eps = 1e-10;
    const nb = 20;
    const e: Array<[number, number, number]> = [];
    const r = rng(11);
    for (let k = 0; k < nb; k++) {
      e.push([2 * k, 2 * k, eps * (1 + r())], [2 * k + 1, 2 * k, 1], [2 * k + 1, 2 * k + 1, 1 + r()]);
      if (k > 0) e.push([2 * k, 2 * k - 1, 0.3 * r()]);
    }
    const M = fromEntries(2 * nb, e);
    const s = new SymmetricSolver(2 * nb, M.rows, M.cols, { ordering: "natural" });
    expect(s.factor(M.values).ok).toBe(true);
    const b = randomRhs(2 * nb, 12);
    const x = new Float64Array(2 * nb);
    s.solve(b, x, 0);
    const r0 = s.lastResidual;
    s.solve(b, x, 3);
    const r3 = s.lastResidual;
    expect(s.lastRefinementSteps).toBeGreaterThanOrEqual(1);
    expect(r3).toBeLessThan(r0 / 100); // at least two orders of magnitude
    // and the refined solution matches the dense solve (tolerance: κ·ε with κ ~ 1e2 here, generous 1e-9)
    expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-9);
  });
});

describe("expected signs: constrained ordering and signed dynamic regularisation", () => {
  /**
   * Saddle-point matrix K = [[H, Jᵀ], [J, 0]] with H = diag(h) (h ≥ 0, some zeros allowed) and J
   * sparse random with full row rank (an identity block is included). Its inertia is taken from the
   * dense eigenvalues.
   */
  function saddle(n1: number, n2: number, seed: number, zeroDiagFraction: number): SymTriplets {
    const r = rng(seed);
    const e: Array<[number, number, number]> = [];
    for (let i = 0; i < n1; i++) e.push([i, i, r() < zeroDiagFraction ? 0 : 0.5 + r()]);
    for (let k = 0; k < n2; k++) {
      e.push([n1 + k, k % n1, 1 + r()]);
      for (let c = 0; c < 2; c++) e.push([n1 + k, Math.floor(r() * n1), r() - 0.5]);
      e.push([n1 + k, n1 + k, 0]); // δc = 0 stored explicitly
    }
    return fromEntries(n1 + n2, e);
  }

  it("with H ≻ 0 and δc = 0: plain AMD meets zero pivots, the constrained order meets none", () => {
    let plainZero = 0;
    for (let seed = 1; seed <= 200; seed++) {
      const n1 = 10 + (seed % 30);
      const n2 = 1 + (seed % 8); // n2 < n1: J (with its entry at column k mod n1) has full row rank
      const M = saddle(n1, n2, seed, 0);
      const ref = eigenInertia(M.dense, 1e-10);
      const plain = new SymmetricSolver(n1 + n2, M.rows, M.cols).factor(M.values);
      plainZero += plain.zero;
      const s = new SymmetricSolver(n1 + n2, M.rows, M.cols, { signs: kktSigns(n1, n2) });
      const inertia = s.factor(M.values);
      expect(inertia).toEqual({ ok: true, ...ref, regularized: 0, regularizedNegative: 0 });
      // H ≻ 0 and J of full row rank: inertia (n1, n2, 0) (Gould 1985, as above)
      expect(ref).toEqual({ positive: n1, negative: n2, zero: 0 });
      const b = randomRhs(n1 + n2, seed);
      const x = new Float64Array(n1 + n2);
      s.solve(b, x, 3);
      expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-9);
    }
    expect(plainZero).toBeGreaterThan(0); // the unconstrained order does take constraint rows first
  });

  it("with random zero rows in H: correct inertia, solve matches the dense one", () => {
    let regularizedTotal = 0;
    for (let seed = 1; seed <= 40; seed++) {
      const n1 = 40;
      const n2 = 15;
      const M = saddle(n1, n2, 100 + seed, 0.3);
      const ref = eigenInertia(M.dense, 1e-9);
      if (ref.zero > 0) continue; // a singular draw has no unique solution to compare
      const s = new SymmetricSolver(n1 + n2, M.rows, M.cols, { signs: kktSigns(n1, n2) });
      const inertia = s.factor(M.values);
      expect(inertia.ok).toBe(true);
      expect({ positive: inertia.positive, negative: inertia.negative, zero: inertia.zero }).toEqual(ref);
      regularizedTotal += inertia.regularized ?? 0;
      // only primal (+1) pivots need regularising: the constraint rows follow their matched variables
      expect(inertia.regularizedNegative).toBe(0);
      const b = randomRhs(n1 + n2, seed);
      const x = new Float64Array(n1 + n2);
      s.solve(b, x, 10);
      // the regularisation δ = 1e-8 perturbs the factor, not the answer: 1e-9 relative to the dense solve
      expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-9);
      expect(s.lastRelativeResidual).toBeLessThan(1e-14);
    }
    expect(regularizedTotal).toBe(0); // here the ordering finds nonzero pivots for the zero rows too
  });

  it("trapezoidal KKT with zero W rows and δw = δc = 0: regularised primal pivots, exact answer after refinement", () => {
    // 20 intervals of the benchmark's swing trolley (bench/ldl.bench.ts): W is zero in the ω and c
    // rows, so eliminating such a variable first gives an exact zero pivot.
    const M = trolleyKkt(20);
    const ref = eigenInertia(M.dense, 1e-10);
    expect(ref).toEqual({ positive: M.nVar, negative: M.nCon, zero: 0 });
    const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs: kktSigns(M.nVar, M.nCon) });
    const inertia = s.factor(M.values);
    expect({ ok: inertia.ok, positive: inertia.positive, negative: inertia.negative, zero: inertia.zero }).toEqual({ ok: true, ...ref });
    expect(inertia.regularized).toBeGreaterThan(0);
    expect(inertia.regularizedNegative).toBe(0);
    const b = randomRhs(M.n, 4);
    const x = new Float64Array(M.n);
    s.solve(b, x, 0);
    const before = s.lastRelativeResidual;
    s.solve(b, x, 5);
    expect(s.lastRelativeResidual).toBeLessThan(1e-14);
    expect(s.lastRelativeResidual).toBeLessThan(before);
    expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-9);
    // without signs the same matrix meets exact zero pivots
    expect(new SymmetricSolver(M.n, M.rows, M.cols).factor(M.values).ok).toBe(false);
  });

  it("lastRelativeResidual is ‖b − A x‖∞ / (‖A‖∞‖x‖∞ + ‖b‖∞) of the dense matrix, and NaN once the matrix is factored again", () => {
    // The normwise backward error (Higham, "Accuracy and Stability of Numerical Algorithms", 2nd ed.,
    // 2002, eq. (7.23) with E = |A|, f = |b| in the ∞-norm), from ml-matrix's dense product.
    const denseBackward = (M: SymTriplets, b: Float64Array, x: Float64Array): number => {
      const Ax = M.dense.mmul(Matrix.columnVector(Array.from(x))).to1DArray();
      let res = 0, normA = 0;
      for (let i = 0; i < M.n; i++) {
        res = Math.max(res, Math.abs(b[i] - Ax[i]));
        normA = Math.max(normA, M.dense.getRow(i).reduce((t, v) => t + Math.abs(v), 0));
      }
      return res / (normA * maxAbs(x) + maxAbs(b));
    };
    // The trolley's regularised pivots leave a first solve 1e-9 off: the exact ‖A‖∞ decides the refinement.
    const M = trolleyKkt(20);
    const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs: kktSigns(M.nVar, M.nCon) });
    s.factor(M.values);
    const b = randomRhs(M.n, 9);
    const x = new Float64Array(M.n);
    s.solve(b, x, 0);
    const unrefined = s.lastRelativeResidual;
    expect(unrefined).toBeGreaterThan(1e-12);
    expect(Math.abs(unrefined / denseBackward(M, b, x) - 1)).toBeLessThan(1e-6);
    s.solve(b, x, 3);
    expect(s.lastRefinementSteps).toBeGreaterThan(0);
    expect(s.lastRelativeResidual).toBeLessThan(1e-14);
    // the residual is summed in another order than the dense product: compare to its rounding
    expect(Math.abs(s.lastRelativeResidual - denseBackward(M, b, x))).toBeLessThan(1e-16);
    // A well-conditioned matrix: the first solve passes the test with the bound, ‖A‖∞ waits for the reader.
    const D = randomDominant(60, 5, 21);
    const sd = new SymmetricSolver(60, D.rows, D.cols);
    sd.factor(D.values);
    const bd = randomRhs(60, 10), xd = new Float64Array(60);
    sd.solve(bd, xd);
    expect(sd.lastRefinementSteps).toBe(0);
    const first = sd.lastRelativeResidual;
    expect(first).toBeLessThan(4 * Number.EPSILON);
    expect(Math.abs(first - denseBackward(D, bd, xd))).toBeLessThan(1e-17);
    expect(sd.lastRelativeResidual).toBe(first); // read twice: the same value
    sd.solve(bd, xd);
    expect(sd.lastRelativeResidual).toBe(first); // this factor's ‖A‖∞ is known now: no pass, the same value
    sd.factor(D.values);
    sd.solve(bd, xd);
    sd.factor(D.values.map((v) => 2 * v));
    expect(sd.lastRelativeResidual).toBeNaN(); // not read in time: the matrix it was solved with is gone
    sd.solve(bd, xd);
    expect(Math.abs(sd.lastRelativeResidual - denseBackward({ ...D, dense: D.dense.mul(2) }, bd, xd))).toBeLessThan(1e-17);
  });

  it("a NaN stays a zero pivot (ok = false) even with signs", () => {
    const M = fromEntries(3, [[0, 0, 1], [2, 0, NaN], [1, 1, 1], [2, 2, 0]]);
    const inertia = new SymmetricSolver(3, M.rows, M.cols, { signs: Int8Array.from([1, 1, -1]) }).factor(M.values);
    expect(inertia.ok).toBe(false);
    expect(inertia.zero).toBeGreaterThanOrEqual(1);
  });

  it("rejects malformed signs with the position named", () => {
    const rows = Int32Array.from([0, 1]);
    expect(() => new SymmetricSolver(2, rows, rows, { signs: Int8Array.from([1]) })).toThrow(/signs has length 1/);
    expect(() => new SymmetricSolver(2, rows, rows, { signs: Int8Array.from([1, 0]) })).toThrow(/signs\[1\] = 0/);
  });
});

describe("2×2 pivot pairs (options.pairs)", () => {
  it("trapezoidal KKT with zero W rows and δw = δc = 0: exact inertia with no regularisation", () => {
    for (const N of [5, 20, 40]) {
      const M = trolleyKkt(N);
      const ref = eigenInertia(M.dense, 1e-10);
      const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs: kktSigns(M.nVar, M.nCon), pairs: true });
      expect(s.factor(M.values)).toEqual({ ok: true, ...ref, regularized: 0, regularizedNegative: 0 });
      const b = randomRhs(M.n, N);
      const x = new Float64Array(M.n);
      s.solve(b, x, 0);
      // no regularisation, so no refinement is needed for accuracy (tolerance 1e-10 relative)
      expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-10);
      s.solve(b, x, 3);
      expect(s.lastRelativeResidual).toBeLessThan(1e-15);
    }
  });

  it("random saddle-point and diagonally dominant matrices: inertia = eigenvalue signs, solves = dense", () => {
    fc.assert(
      fc.property(fc.integer({ min: 2, max: 45 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), fc.boolean(), (n, seed, dominant) => {
        const r = rng(seed);
        let M: SymTriplets;
        let signs: Int8Array;
        if (dominant) {
          M = randomDominant(n, 3, seed);
          signs = Int8Array.from({ length: n }, () => (r() < 0.4 ? -1 : 1));
        } else {
          const n2 = Math.max(1, Math.floor(n / 3));
          const n1 = n;
          const e: Array<[number, number, number]> = [];
          for (let i = 0; i < n1; i++) e.push([i, i, r() < 0.4 ? 0 : 0.5 + r()]);
          for (let k = 0; k < n2; k++) {
            e.push([n1 + k, k, 1 + r()], [n1 + k, Math.floor(r() * n1), r() - 0.5], [n1 + k, n1 + k, 0]);
          }
          M = fromEntries(n1 + n2, e);
          signs = kktSigns(n1, n2);
        }
        const ref = eigenInertia(M.dense, 1e-9);
        if (ref.zero > 0) return; // singular draws have no unique solution
        const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs, pairs: true });
        const inertia = s.factor(M.values);
        const b = randomRhs(M.n, seed + 3);
        const x = new Float64Array(M.n);
        s.solve(b, x, 5);
        if (inertia.regularized === 0) {
          expect({ positive: inertia.positive, negative: inertia.negative, zero: inertia.zero }).toEqual(ref);
        }
        expect(inertia.ok).toBe(true);
        expect(relErr(x, denseReference(M, b))).toBeLessThan(1e-8);
      }),
      { numRuns: 300, seed: 2024 },
    );
  });

  it("runs the analysis in the first factor call (it uses the values), then reuses it", () => {
    const M = trolleyKkt(6);
    const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs: kktSigns(M.nVar, M.nCon), pairs: true });
    expect(s.nnzL).toBe(0);
    s.factor(M.values);
    const nnzL = s.nnzL;
    const perm = s.perm;
    expect(nnzL).toBeGreaterThan(0);
    s.factor(M.values.map((v) => 2 * v));
    expect(s.nnzL).toBe(nnzL);
    expect(s.perm).toBe(perm);
  });

  it("rejects pairs without signs", () => {
    const rows = Int32Array.from([0, 1]);
    expect(() => new SymmetricSolver(2, rows, rows, { pairs: true })).toThrow(/pairs needs options.signs/);
  });
});
