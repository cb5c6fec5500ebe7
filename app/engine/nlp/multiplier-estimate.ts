/**
 * Multipliers for a given primal point, for the final steps (ipm.ts).
 *
 * The KKT conditions are a property of the point w and of some multipliers (λ, z_L, z_U ≥ 0); the
 * iteration's own multipliers are only one candidate. Near a degenerate active bound (slack and
 * multiplier going to zero together, the coast arc of COPS Goddard at Hermite–Simpson N ≥ 250)
 * the final steps reach primal points whose objective is right to 1e-8 while the iteration's λ
 * lags: dual infeasibility 2e-5, so the point did not count as converged and the solve went back
 * to an earlier converged point with a duality gap 1,000 times larger (DEVELOPERS.md, 2026-12-04).
 *
 * The estimate keeps the primal point and z, and
 *  1. takes λ by least squares, as for the starting point (W&B 2006 eq. (36)):
 *       [ I  Jᵀ ] [ v ]     [ ∇f − z_L + z_U ]
 *       [ J  0  ] [ λ ] = − [ 0              ];
 *  2. lets z take up what is left of the stationarity residual r = ∇f + Jᵀλ − z_L + z_U where it
 *     exceeds `absorbAbove`: by lowering the opposite bound's multiplier while it stays ≥ 0 (which
 *     lowers s·z), else by raising this side's (z_L += r for r > 0, z_U −= r for r < 0) while its
 *     s·z stays within `complCap`. Raising adds s·|r| to the complementarity, so only the
 *     components that keep the point from the tolerance are moved: absorbing every component put
 *     Σ s z at 1.6e-6 (N = 1,600), absorbing those above tol/2 at 5e-9; without the cap on s·z the
 *     N = 250 points ended with a complementarity of 1.4e-8 … 1.6e-8, just above tol.
 * The caller judges the result with the same KKT error and duality gap as any other point.
 *
 * A final-step point can also be a little infeasible: at Hermite–Simpson N = 1,200 the steps
 * reach h within 3e-8 of the reference's answer while ‖c‖∞ stalls at 1.05e-8 … 1.5e-8 (tol 1e-8),
 * shrinking by a fraction of itself a step, since α_primal halves each step. `feasibilityCorrection`
 * is the Gauss–Newton step of least norm onto the linearised constraints, d = −Jᵀ(JJᵀ)⁻¹c (the
 * normal step of trust-region SQP without its radius; Nocedal and Wright 2006, ch. 18, chapter
 * recalled from memory), in augmented form with the matrix of eq. (36):
 *       [ I  Jᵀ ] [ d ]     [ 0 ]
 *       [ J  0  ] [ y ] = − [ c ],
 * shortened to the fraction τ of the distance to each bound; the caller evaluates the model at
 * w + α d and estimates multipliers there.
 */
import type { KktSystem } from "./kkt";
import { factorLeastSquares } from "./initial-point";
import { jacTransposeTimes, lagrangianGradient } from "./vectors";

export interface MultiplierEstimateWork {
  /** N entries, all 1. */
  ones: Float64Array;
  /** N + m each. */
  rhs: Float64Array;
  sol: Float64Array;
  /** N: Jᵀλ, then the stationarity residual. */
  jtl: Float64Array;
  gradL: Float64Array;
}

/**
 * The least-norm step d (N) onto the linearised constraints J d = −c and the largest α ≤ 1 that
 * keeps every slack above (1 − τ) of itself; returns α, or 0 when the system could not be
 * factorised with the right inertia or d is not finite. `rhs` and `sol` have N + m entries.
 */
export function feasibilityCorrection(
  kkt: KktSystem, ones: Float64Array, jv: Float64Array, c: Float64Array,
  hasL: Uint8Array, hasU: Uint8Array, sL: Float64Array, sU: Float64Array, tau: number,
  rhs: Float64Array, sol: Float64Array, d: Float64Array,
): number {
  const N = kkt.N, m = kkt.m;
  if (m === 0 || !factorLeastSquares(kkt, ones, jv)) return 0;
  rhs.fill(0, 0, N);
  for (let j = 0; j < m; j++) rhs[N + j] = -c[j];
  kkt.solve(rhs, sol);
  let alpha = 1;
  for (let i = 0; i < N; i++) {
    const di = sol[i];
    if (!Number.isFinite(di)) return 0;
    d[i] = di;
    if (hasL[i] && di < 0) alpha = Math.min(alpha, (-tau * sL[i]) / di);
    if (hasU[i] && di > 0) alpha = Math.min(alpha, (tau * sU[i]) / di);
  }
  return alpha;
}

/**
 * Writes λ (m), z_L, z_U (N) for the point whose gradient is `grad` and Jacobian values `jv`;
 * gradL (in `work`) is the stationarity residual of the result. Returns false when the system
 * could not be factorised with the right inertia or the estimate is not finite.
 */
export function estimateMultipliers(
  kkt: KktSystem, grad: Float64Array, jv: Float64Array, jRows: Int32Array, jCols: Int32Array,
  hasL: Uint8Array, hasU: Uint8Array, sL: Float64Array, sU: Float64Array, zLIn: Float64Array, zUIn: Float64Array, absorbAbove: number, complCap: number,
  lambda: Float64Array, zL: Float64Array, zU: Float64Array, work: MultiplierEstimateWork,
): boolean {
  const N = kkt.N, m = kkt.m;
  const { ones, rhs, sol, jtl, gradL } = work;
  if (m > 0) {
    if (!factorLeastSquares(kkt, ones, jv)) return false;
    for (let i = 0; i < N; i++) rhs[i] = -(grad[i] - zLIn[i] + zUIn[i]);
    rhs.fill(0, N, N + m);
    kkt.solve(rhs, sol);
    for (let j = 0; j < m; j++) {
      const v = sol[N + j];
      if (!Number.isFinite(v)) return false;
      lambda[j] = v;
    }
  }
  jacTransposeTimes(jRows.length, jRows, jCols, jv, lambda, jtl);
  zL.set(zLIn);
  zU.set(zUIn);
  lagrangianGradient(N, grad, jtl, zL, zU, gradL);
  for (let i = 0; i < N; i++) {
    const r = gradL[i];
    if (!(Math.abs(r) > absorbAbove)) continue;
    // Lowering the opposite multiplier first (it lowers s·z), else raising this side's while its
    // s·z stays within complCap.
    if (r > 0) {
      if (hasU[i] && zU[i] >= r) zU[i] -= r;
      else if (hasL[i] && sL[i] * (zL[i] + r) <= complCap) zL[i] += r;
    } else {
      if (hasL[i] && zL[i] >= -r) zL[i] += r;
      else if (hasU[i] && sU[i] * (zU[i] - r) <= complCap) zU[i] -= r;
    }
  }
  lagrangianGradient(N, grad, jtl, zL, zU, gradL);
  return true;
}
