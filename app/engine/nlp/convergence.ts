/**
 * Optimality error of the barrier problem, W&B 2006 eq. (5):
 *
 *   E_μ(w, λ, z) = max( ‖∇f + Jᵀλ − z_L + z_U‖∞ / s_d,  ‖c‖∞,  ‖S z − μ e‖∞ / s_c )
 *   s_d = max(s_max, (‖λ‖₁ + ‖z‖₁)/(m + n_z)) / s_max,   s_c = max(s_max, ‖z‖₁ / n_z) / s_max
 *
 * with s_max = 100 and n_z the number of finite bounds (the paper writes 2n for all-bounded
 * variables). Termination: E_0 ≤ ε_tol (eq. (6)).
 *
 * Inputs: gradL = ∇f + Jᵀλ − z_L + z_U (N), c (m), slacks s_L = w − w_L, s_U = w_U − w (N, only
 * meaningful where hasL/hasU), multipliers.
 */
import { CONSTANTS as C } from "./options";

export interface KktError {
  dual: number;
  primal: number;
  /** ‖S z − μ e‖∞ for the μ given. */
  compl: number;
  sd: number;
  sc: number;
  /** E_μ of eq. (5). */
  E: number;
}

export function kktError(
  gradL: Float64Array, c: Float64Array, sL: Float64Array, sU: Float64Array,
  hasL: Uint8Array, hasU: Uint8Array, lambda: Float64Array, zL: Float64Array, zU: Float64Array, mu: number,
): KktError {
  let dual = 0, primal = 0, compl = 0, zSum = 0, lamSum = 0, nz = 0;
  const N = gradL.length;
  for (let i = 0; i < N; i++) {
    const a = Math.abs(gradL[i]);
    if (a > dual) dual = a;
    if (hasL[i]) { nz++; zSum += Math.abs(zL[i]); const e = Math.abs(sL[i] * zL[i] - mu); if (e > compl) compl = e; }
    if (hasU[i]) { nz++; zSum += Math.abs(zU[i]); const e = Math.abs(sU[i] * zU[i] - mu); if (e > compl) compl = e; }
  }
  for (let j = 0; j < c.length; j++) {
    const a = Math.abs(c[j]);
    if (a > primal) primal = a;
    lamSum += Math.abs(lambda[j]);
  }
  const cnt = c.length + nz;
  const sd = cnt > 0 ? Math.max(C.sMax, (lamSum + zSum) / cnt) / C.sMax : 1;
  const sc = nz > 0 ? Math.max(C.sMax, zSum / nz) / C.sMax : 1;
  return { dual, primal, compl, sd, sc, E: Math.max(dual / sd, primal, compl / sc) };
}
