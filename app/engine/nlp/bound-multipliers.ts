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
