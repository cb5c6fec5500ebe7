/**
 * Starting point, W&B 2006 §3.6.
 *
 * Bound push, eq. (30)–(31) (κ_1 = κ_2 = 1e-2):
 *   p_L = min(κ_1 max(1, |w_L|), κ_2 (w_U − w_L)),  p_U = min(κ_1 max(1, |w_U|), κ_2 (w_U − w_L))
 *   w₀ ← max(w₀, w_L + p_L),  w₀ ← min(w₀, w_U − p_U)      (κ_2 term only with two bounds)
 *
 * Constraint multipliers, least-squares estimate, eq. (36):
 *   [ I  Jᵀ ] [ v ]     [ ∇f − z_L + z_U ]
 *   [ J  0  ] [ λ ] = − [ 0              ]      λ₀ = 0 when ‖λ‖∞ > λ_max = 1e3.
 * The system reuses the KKT pattern of kkt.ts with W = 0 and diagonal 1.
 */
import { CONSTANTS as C } from "./options";
import type { KktSystem } from "./kkt";

export function pushInsideBounds(w: Float64Array, wL: Float64Array, wU: Float64Array, kappa1: number = C.kappa1, kappa2: number = C.kappa2): void {
  for (let i = 0; i < w.length; i++) {
    const lo = wL[i], hi = wU[i];
    const fl = Number.isFinite(lo), fu = Number.isFinite(hi);
    if (fl && fu) {
      const pL = Math.min(kappa1 * Math.max(1, Math.abs(lo)), kappa2 * (hi - lo));
      const pU = Math.min(kappa1 * Math.max(1, Math.abs(hi)), kappa2 * (hi - lo));
      if (w[i] < lo + pL) w[i] = lo + pL;
      if (w[i] > hi - pU) w[i] = hi - pU;
      if (!(w[i] > lo && w[i] < hi)) w[i] = 0.5 * (lo + hi);
    } else if (fl) {
      const pL = kappa1 * Math.max(1, Math.abs(lo));
      if (w[i] < lo + pL) w[i] = lo + pL;
    } else if (fu) {
      const pU = kappa1 * Math.max(1, Math.abs(hi));
      if (w[i] > hi - pU) w[i] = hi - pU;
    }
  }
}

/**
 * eq. (36). grad, zL, zU (N); jv (nnzJ); writes lambda (m). Workspaces: ones (N, all 1),
 * rhs and sol (N + m). Returns false (λ = 0) when the system could not be factorised or the
 * estimate is too large.
 */
export function leastSquaresMultipliers(
  kkt: KktSystem, grad: Float64Array, zL: Float64Array, zU: Float64Array, jv: Float64Array,
  lambda: Float64Array, ones: Float64Array, rhs: Float64Array, sol: Float64Array,
): boolean {
  const N = kkt.N, m = kkt.m;
  lambda.fill(0);
  if (m === 0) return true;
  if (!factorLeastSquares(kkt, ones, jv)) return false;
  for (let i = 0; i < N; i++) rhs[i] = -(grad[i] - zL[i] + zU[i]);
  rhs.fill(0, N, N + m);
  kkt.solve(rhs, sol);
  let big = 0;
  for (let j = 0; j < m; j++) big = Math.max(big, Math.abs(sol[N + j]));
  if (!(big <= C.lambdaMax)) return false;
  for (let j = 0; j < m; j++) lambda[j] = sol[N + j];
  return true;
}

/**
 * Factors the least-squares matrix [I Jᵀ; J 0] of eq. (36) in the KKT system: δ_c = 0 first (with
 * the KKT pivot signs the ordering keeps the (2,2) block factorisable), then δ̄_c when the Jacobian
 * is rank deficient (the regularised estimate differs by O(δ̄_c)). False when neither has the
 * inertia (N, m, 0).
 */
export function factorLeastSquares(kkt: KktSystem, ones: Float64Array, jv: Float64Array): boolean {
  const N = kkt.N, m = kkt.m;
  const good = (r: { ok: boolean; zero: number; regularized?: number; positive: number; negative: number }) =>
    r.ok && r.zero === 0 && !r.regularized && r.positive === N && r.negative === m;
  return good(kkt.factor(null, ones, 0, jv, 0)) || good(kkt.factor(null, ones, 0, jv, C.deltaCBar));
}
