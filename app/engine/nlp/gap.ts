/**
 * Solver error estimate: how far the objective of an interior-point iterate can be above the
 * optimum because of the barrier, in the iteration's (scaled) objective units.
 *
 * For the Lagrangian L(w, λ, z) = f(w) + λᵀc(w) − z_Lᵀ(w − w_L) − z_Uᵀ(w_U − w), weak duality
 * of a convex problem gives, at a point where ∇_w L = 0,
 *
 *   f(w) − f*  ≤  f(w) − L(w, λ, z)  =  Σ s_L z_L + Σ s_U z_U − λᵀc(w),
 *
 * the total duality gap (Nocedal and Wright, Numerical Optimization, 2nd ed., 2006, §14.1 (14.7)
 * for the linear case and §19.1 for the barrier path, where Σ s z = n_z μ on the central path).
 * Near a nondegenerate local solution of a nonconvex problem the same sum is the first-order
 * offset (Wächter and Biegler, Math. Programming 106, 2006, §2: the barrier solution x*(μ)
 * differs from x* by O(μ), the objective by Σ s_i z_i = n_z μ). With one bounded control per
 * mesh point n_z grows with the mesh, which is why a fixed ε_tol on the scaled complementarity
 * leaves an objective floor that grows with N; ipm.ts therefore also requires
 * gap ≤ gapTol (1 + |f|) at "optimal", the relative duality-gap test of primal–dual
 * interior-point codes (S. J. Wright, Primal–Dual Interior-Point Methods, SIAM 1997, ch. 6).
 */
import { LOOP_BLOCK, dotRange } from "./vectors";

export interface SolverGap {
  /** Σ s z over the finite bounds (≥ 0 in the interior). */
  complementarity: number;
  /** λᵀ c(w). */
  constraintTerm: number;
  /**
   * Σ z δ over bounds relaxed by δ (reformulation.ts): the first-order objective offset of the
   * relaxed problem from the problem's own (z is the sensitivity of the optimum to the bound).
   */
  relaxation: number;
  /** |Σ s z| + |λᵀc| + Σ z δ: the estimate of |f(w) − f*| (scaled units). */
  total: number;
  /** Number of finite bounds n_z. */
  nz: number;
}

export function solverGap(
  N: number, sL: Float64Array, sU: Float64Array, hasL: Uint8Array, hasU: Uint8Array,
  zL: Float64Array, zU: Float64Array, m: number, lambda: Float64Array, c: Float64Array,
  relaxL?: Float64Array, relaxU?: Float64Array,
): SolverGap {
  // In blocks (LOOP_BLOCK in vectors.ts), the running sums passed from block to block.
  const run = RUN;
  run.fill(0);
  for (let i0 = 0; i0 < N; i0 += LOOP_BLOCK) gapBlock(i0, Math.min(N, i0 + LOOP_BLOCK), sL, sU, hasL, hasU, zL, zU, relaxL, relaxU, run);
  for (let j0 = 0; j0 < m; j0 += LOOP_BLOCK) run[3] = dotRange(j0, Math.min(m, j0 + LOOP_BLOCK), lambda, c, run[3]);
  const comp = run[0], nz = run[1], rel = run[2], lc = run[3];
  return { complementarity: comp, constraintTerm: lc, relaxation: rel, total: Math.abs(comp) + Math.abs(lc) + Math.abs(rel), nz };
}

/** solverGap's running values: Σ s z, n_z, Σ z δ, λᵀc. */
const RUN = new Float64Array(4);

function gapBlock(
  i0: number, i1: number, sL: Float64Array, sU: Float64Array, hasL: Uint8Array, hasU: Uint8Array,
  zL: Float64Array, zU: Float64Array, relaxL: Float64Array | undefined, relaxU: Float64Array | undefined, run: Float64Array,
): void {
  let comp = run[0], nz = run[1], rel = run[2];
  for (let i = i0; i < i1; i++) {
    if (hasL[i]) { comp += sL[i] * zL[i]; nz++; if (relaxL) rel += zL[i] * relaxL[i]; }
    if (hasU[i]) { comp += sU[i] * zU[i]; nz++; if (relaxU) rel += zU[i] * relaxU[i]; }
  }
  run[0] = comp; run[1] = nz; run[2] = rel;
}
