/**
 * Bound multipliers z_L, z_U (N each; 0 where a bound is absent).
 *
 * Step, W&B 2006 eq. (11) (third row solved for d_z):
 *   d_zL = μ / s_L − z_L − (z_L / s_L) d_w,     d_zU = μ / s_U − z_U + (z_U / s_U) d_w
 *
 * Safeguard after each step, eq. (16):
 *   z_L ← max( min( z_L, κ_Σ μ / s_L ), μ / (κ_Σ s_L) ),  κ_Σ = 1e10
 * which keeps Σ = Z/S within a factor κ_Σ of the primal Hessian μ S⁻².
 */
import { CONSTANTS as C } from "./options";

export function boundMultiplierStep(
  mu: number, dw: Float64Array, sL: Float64Array, sU: Float64Array, hasL: Uint8Array, hasU: Uint8Array,
  zL: Float64Array, zU: Float64Array, dzL: Float64Array, dzU: Float64Array,
): void {
  for (let i = 0; i < dw.length; i++) {
    dzL[i] = hasL[i] ? mu / sL[i] - zL[i] - (zL[i] / sL[i]) * dw[i] : 0;
    dzU[i] = hasU[i] ? mu / sU[i] - zU[i] + (zU[i] / sU[i]) * dw[i] : 0;
  }
}

/** eq. (16), in place. */
export function resetBoundMultipliers(mu: number, sL: Float64Array, sU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, zL: Float64Array, zU: Float64Array): void {
  const k = C.kappaSigma;
  for (let i = 0; i < zL.length; i++) {
    if (hasL[i]) zL[i] = Math.max(Math.min(zL[i], (k * mu) / sL[i]), mu / (k * sL[i]));
    if (hasU[i]) zU[i] = Math.max(Math.min(zU[i], (k * mu) / sU[i]), mu / (k * sU[i]));
  }
}

/**
 * The dual step of a final step (μ_f near 0; see gap.ts). There the Newton update sends the
 * multiplier of every inactive bound to about μ_f / s ≈ 0, and where the slack grows in the same
 * step the linearised update crosses zero, by a little: z + d_z = −(z / s) d_w. Under one common
 * fraction-to-the-boundary step such a multiplier of 1e-11 held every other multiplier to 70 % of
 * its step, step after step (COPS Goddard, trapezoidal, N = 1,600: α_z = 0.85, 0.70, 0.74, 0.67, 0.88…).
 * A component whose full update crosses zero by at most `clip` is left out of α_z and is instead
 * cut at the fraction (1 − τ) of itself: the dual residual this leaves is at most `clip` in that
 * component (clip = 1e-3 · tol, so a thousand times below what the KKT test checks), and the gap
 * term s z only shrinks. Every other component takes the common step α_z, as in eq. (15) of W&B
 * 2006. Returns α_z; `applyFinalDualStep` applies it.
 */
export function finalDualStepLength(tau: number, clip: number, z: Float64Array, dz: Float64Array, has: Uint8Array, alpha: number): number {
  for (let i = 0; i < z.length; i++) {
    if (!has[i] || !(dz[i] < 0)) continue;
    const full = z[i] + dz[i];
    if (full >= (1 - tau) * z[i] || -full <= clip) continue;
    const a = (-tau * z[i]) / dz[i];
    if (a < alpha) alpha = a;
  }
  return alpha;
}

/** z ← max(z + α d_z, (1 − τ) z) per component: the step of `finalDualStepLength`, in place. */
export function applyFinalDualStep(alpha: number, tau: number, z: Float64Array, dz: Float64Array, has: Uint8Array): void {
  for (let i = 0; i < z.length; i++) {
    if (!has[i]) continue;
    const v = z[i] + alpha * dz[i];
    const floor = (1 - tau) * z[i];
    z[i] = v < floor ? floor : v; // a NaN step stays NaN
  }
}
