/**
 * Multipliers estimated for a given primal point (app/engine/nlp/multiplier-estimate.ts), against
 * outside references:
 *
 * - a problem solved by hand: min ½x₁² + 2x₂ s.t. x₁ − 1 = 0, x₂ ≥ 0. At x* = (1, 0),
 *   ∇f = (1, 2), J = [1 0]; stationarity ∇f + Jᵀλ − z_L = 0 gives λ = −1, z_L = (0, 2)
 *   (Nocedal and Wright, Numerical Optimization, 2nd ed., 2006, Theorem 12.1, the KKT conditions);
 * - random dense data: λ must be the least-squares solution of Jᵀλ = −(∇f − z_L + z_U), computed
 *   by ml-matrix's QR-based solve of the normal equations' equivalent, min ‖Jᵀλ + r‖₂;
 * - the feasibility correction on the same data: d must be the least-norm solution of J d = −c,
 *   d = −Jᵀ(JJᵀ)⁻¹c (Golub and Van Loan, Matrix Computations, 4th ed., 2013, §5.6, underdetermined
 *   systems; section recalled from memory), computed densely with ml-matrix, and α the largest step
 *   that keeps each slack above (1 − τ) of itself.
 */
import { describe, it, expect } from "vitest";
import { Matrix, solve as denseSolve } from "ml-matrix";
import { SymmetricSolver } from "~/engine/sparse";
import { KktSystem } from "~/engine/nlp/kkt";
import { estimateMultipliers, feasibilityCorrection } from "~/engine/nlp/multiplier-estimate";

// The solver's own factory (app/engine/nlp/index.ts): KKT pivot signs and 2×2 pairs, so the
// least-squares system factors without the δ̄_c regularisation (which would move λ by O(1e-8)).
const factory = (n: number, r: Int32Array, c: Int32Array, signs?: Int8Array) => new SymmetricSolver(n, r, c, { pivotTolerance: 1e-20, signs, pairs: signs !== undefined, patternUnchanging: true });
const work = (N: number, m: number) => ({ ones: new Float64Array(N).fill(1), rhs: new Float64Array(N + m), sol: new Float64Array(N + m), jtl: new Float64Array(N), gradL: new Float64Array(N) });

/**
 * A random 4 × 9 Jacobian (three entries a row, values in [0, 2)) in a KKT system with W = 0, its
 * dense copy, and the generator that made it (a linear congruential one, for the caller's data).
 */
function randomJacobian(seed: number) {
  let s = seed;
  const rnd = () => ((s = (1664525 * s + 1013904223) >>> 0) / 2 ** 32) * 2 - 1;
  const N2 = 9, m2 = 4;
  const rows: number[] = [], cols: number[] = [], vals: number[] = [];
  for (let j = 0; j < m2; j++) for (const c of [j, j + 3, (2 * j + 5) % N2]) { rows.push(j); cols.push(c); vals.push(1 + rnd()); }
  const jR = Int32Array.from(rows), jC = Int32Array.from(cols), jv = Float64Array.from(vals);
  const k2 = new KktSystem(N2, m2, new Int32Array(0), new Int32Array(0), jR, jC, factory);
  const J = Matrix.zeros(m2, N2);
  for (let k = 0; k < rows.length; k++) J.set(rows[k]!, cols[k]!, J.get(rows[k]!, cols[k]!) + vals[k]!);
  return { N2, m2, jR, jC, jv, k2, J, rnd };
}

describe("multipliers estimated for a primal point", () => {
  const N = 2, m = 1;
  const jR = Int32Array.from([0]), jC = Int32Array.from([0]), jv = Float64Array.from([1]);
  const kkt = new KktSystem(N, m, new Int32Array(0), new Int32Array(0), jR, jC, factory);
  const grad = Float64Array.from([1, 2]);
  const hasL = Uint8Array.from([0, 1]), hasU = Uint8Array.from([0, 0]);

  it("by hand: λ by least squares, and the lagging z_L takes up the residual above the threshold", () => {
    const lambda = new Float64Array(m), zL = new Float64Array(N), zU = new Float64Array(N), w = work(N, m);
    // The iteration's z_L₂ lags at 1.5: the residual 0.5 on x₂ is above 1e-3, so z_L₂ becomes 2.
    expect(estimateMultipliers(kkt, grad, jv, jR, jC, hasL, hasU, Float64Array.from([1, 0]), new Float64Array(N), Float64Array.from([0, 1.5]), new Float64Array(N), 1e-3, 1e-3, lambda, zL, zU, w)).toBe(true);
    expect(lambda[0]).toBeCloseTo(-1, 12);
    expect(zL[1]).toBeCloseTo(2, 12);
    expect(Math.max(...w.gradL.map(Math.abs))).toBeLessThan(1e-12);
    // Above the threshold only: with 1 the residual 0.5 stays, z_L₂ stays 1.5.
    expect(estimateMultipliers(kkt, grad, jv, jR, jC, hasL, hasU, Float64Array.from([1, 0]), new Float64Array(N), Float64Array.from([0, 1.5]), new Float64Array(N), 1, 1e-3, lambda, zL, zU, w)).toBe(true);
    expect(zL[1]).toBe(1.5);
    expect(w.gradL[1]).toBeCloseTo(0.5, 12);
    // Nor when raising z_L₂ would put s·z above the cap: at a slack of 1, 1 · 2 > 1e-3.
    expect(estimateMultipliers(kkt, grad, jv, jR, jC, hasL, hasU, Float64Array.from([1, 1]), new Float64Array(N), Float64Array.from([0, 1.5]), new Float64Array(N), 1e-3, 1e-3, lambda, zL, zU, w)).toBe(true);
    expect(zL[1]).toBe(1.5);
  });

  it("random dense data: λ is the least-squares solution of Jᵀλ = −(∇f − z_L + z_U)", () => {
    const { N2, m2, jR, jC, jv, k2, J, rnd } = randomJacobian(7);
    const g = Float64Array.from({ length: N2 }, rnd);
    const zLi = Float64Array.from({ length: N2 }, () => Math.abs(rnd()));
    const zUi = new Float64Array(N2);
    const bL = new Uint8Array(N2).fill(1), bU = new Uint8Array(N2);
    const lambda = new Float64Array(m2), zL = new Float64Array(N2), zU = new Float64Array(N2), w = work(N2, m2);
    // Threshold above every residual: z is kept, only λ is estimated.
    expect(estimateMultipliers(k2, g, jv, jR, jC, bL, bU, new Float64Array(N2).fill(1), new Float64Array(N2), zLi, zUi, 1e9, 1e-3, lambda, zL, zU, w)).toBe(true);
    const Jt = J.transpose();
    const rhs = Matrix.columnVector(Array.from(g, (gi, i) => -(gi - zLi[i]! + zUi[i]!)));
    const ref = denseSolve(Jt, rhs); // least squares for a tall matrix (QR)
    for (let j = 0; j < m2; j++) expect(lambda[j]).toBeCloseTo(ref.get(j, 0), 9);
    expect(Array.from(zL)).toEqual(Array.from(zLi));
  });

  it("random dense data: the correction is the least-norm solution of J d = −c, cut at the fraction τ of each slack", () => {
    const { N2, m2, jv, k2, J, rnd } = randomJacobian(11);
    const c = Float64Array.from({ length: m2 }, rnd);
    const ref = J.transpose().mmul(denseSolve(J.mmul(J.transpose()), Matrix.columnVector(Array.from(c, (v) => -v))));
    const ones = new Float64Array(N2).fill(1), rhs = new Float64Array(N2 + m2), sol = new Float64Array(N2 + m2), d = new Float64Array(N2);
    const bL = new Uint8Array(N2).fill(1), bU = new Uint8Array(N2).fill(1);
    // Slacks far larger than d: the full step.
    const big = new Float64Array(N2).fill(1e3);
    expect(feasibilityCorrection(k2, ones, jv, c, bL, bU, big, big, 0.99, rhs, sol, d)).toBe(1);
    for (let i = 0; i < N2; i++) expect(d[i]).toBeCloseTo(ref.get(i, 0), 10);
    // Each slack at |d_i|: the step stops at τ of the way to the nearer bound it moves toward.
    const sL = Float64Array.from(d, (v) => (v < 0 ? -v : 1e3)), sU = Float64Array.from(d, (v) => (v > 0 ? v : 1e3));
    expect(feasibilityCorrection(k2, ones, jv, c, bL, bU, sL, sU, 0.99, rhs, sol, d)).toBeCloseTo(0.99, 12);
    // No constraints: nothing to correct.
    const k0 = new KktSystem(2, 0, new Int32Array(0), new Int32Array(0), new Int32Array(0), new Int32Array(0), factory);
    expect(feasibilityCorrection(k0, new Float64Array(2).fill(1), new Float64Array(0), new Float64Array(0), new Uint8Array(2), new Uint8Array(2), new Float64Array(2), new Float64Array(2), 0.99, new Float64Array(2), new Float64Array(2), new Float64Array(2))).toBe(0);
  });
});
