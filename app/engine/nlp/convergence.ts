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
import { LOOP_BLOCK } from "./vectors";

export interface KktError {
  dual: number;
  primal: number;
  /** ‖S z − μ e‖∞ for the μ given. */
  compl: number;
  sd: number;
  sc: number;
  /** E_μ of eq. (5). */
  E: number;
  /** E at the second μ given (`muAlso`), from the same pass; NaN when none was given. */
  EAlso: number;
}

export function kktError(
  gradL: Float64Array, c: Float64Array, sL: Float64Array, sU: Float64Array,
  hasL: Uint8Array, hasU: Uint8Array, lambda: Float64Array, zL: Float64Array, zU: Float64Array, mu: number,
  muAlso = NaN,
): KktError {
  // In blocks (LOOP_BLOCK in vectors.ts): the running values go from block to block through `run`,
  // so the operations are those of one loop, in the same order.
  const run = RUN;
  run.fill(0);
  const N = gradL.length;
  const two = muAlso === muAlso;
  const mu2 = two ? muAlso : mu; // without a second μ the second maximum is the first's, unused
  for (let i0 = 0; i0 < N; i0 += LOOP_BLOCK) boundBlock(i0, Math.min(N, i0 + LOOP_BLOCK), gradL, sL, sU, hasL, hasU, zL, zU, mu, mu2, run);
  for (let j0 = 0; j0 < c.length; j0 += LOOP_BLOCK) rowBlock(j0, Math.min(c.length, j0 + LOOP_BLOCK), c, lambda, run);
  const dual = run[0], compl = run[1], zSum = run[2], nz = run[3], primal = run[4], lamSum = run[5];
  const cnt = c.length + nz;
  const sd = cnt > 0 ? Math.max(C.sMax, (lamSum + zSum) / cnt) / C.sMax : 1;
  const sc = nz > 0 ? Math.max(C.sMax, zSum / nz) / C.sMax : 1;
  const EAlso = two ? Math.max(dual / sd, primal, run[6] / sc) : NaN;
  return { dual, primal, compl, sd, sc, E: Math.max(dual / sd, primal, compl / sc), EAlso };
}

/** kktError's running values: max |∇L|, max |s z − μ|, Σ|z|, n_z, max |c|, Σ|λ|, max |s z − μ₂|. */
const RUN = new Float64Array(7);

/**
 * One block of the bound terms, with the complementarity at a second μ as well (run[6]): the
 * interior-point method wants E₀ and E_μ of the same iterate, and s z is the same for both.
 */
function boundBlock(
  i0: number, i1: number, gradL: Float64Array, sL: Float64Array, sU: Float64Array, hasL: Uint8Array, hasU: Uint8Array,
  zL: Float64Array, zU: Float64Array, mu: number, mu2: number, run: Float64Array,
): void {
  let dual = run[0], compl = run[1], zSum = run[2], nz = run[3], compl2 = run[6];
  for (let i = i0; i < i1; i++) {
    const a = Math.abs(gradL[i]);
    if (a > dual) dual = a;
    if (hasL[i]) {
      nz++;
      zSum += Math.abs(zL[i]);
      const p = sL[i] * zL[i];
      const e = Math.abs(p - mu);
      if (e > compl) compl = e;
      const e2 = Math.abs(p - mu2);
      if (e2 > compl2) compl2 = e2;
    }
    if (hasU[i]) {
      nz++;
      zSum += Math.abs(zU[i]);
      const p = sU[i] * zU[i];
      const e = Math.abs(p - mu);
      if (e > compl) compl = e;
      const e2 = Math.abs(p - mu2);
      if (e2 > compl2) compl2 = e2;
    }
  }
  run[0] = dual; run[1] = compl; run[2] = zSum; run[3] = nz; run[6] = compl2;
}

function rowBlock(j0: number, j1: number, c: Float64Array, lambda: Float64Array, run: Float64Array): void {
  let primal = run[4], lamSum = run[5];
  for (let j = j0; j < j1; j++) {
    const a = Math.abs(c[j]);
    if (a > primal) primal = a;
    lamSum += Math.abs(lambda[j]);
  }
  run[4] = primal; run[5] = lamSum;
}
