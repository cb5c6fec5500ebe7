/**
 * The barrier function of W&B 2006 eq. (3), with the damping term of §3.7 for variables with a
 * single bound (κ_d = 1e-5):
 *
 *   φ_μ(w) = f(w) − μ Σ_{i∈L} ln s_L,i − μ Σ_{i∈U} ln s_U,i + κ_d μ ( Σ_{L∖U} s_L,i + Σ_{U∖L} s_U,i )
 *   ∇φ_μ   = ∇f − μ/s_L + μ/s_U + κ_d μ (e_{L∖U} − e_{U∖L})
 *
 * with s_L = w − w_L, s_U = w_U − w. Arrays of length N.
 */
import { CONSTANTS as C } from "./options";

export function barrierValue(f: number, w: Float64Array, wL: Float64Array, wU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, mu: number): number {
  let logs = 0, lin = 0;
  for (let i = 0; i < hasL.length; i++) {
    if (hasL[i]) {
      const s = w[i] - wL[i];
      logs += s > 0 ? Math.log(s) : -Infinity;
      if (!hasU[i]) lin += s;
    }
    if (hasU[i]) {
      const s = wU[i] - w[i];
      logs += s > 0 ? Math.log(s) : -Infinity;
      if (!hasL[i]) lin += s;
    }
  }
  return f - mu * logs + C.kappaD * mu * lin;
}

/** out = ∇φ_μ (N). */
export function barrierGradient(grad: Float64Array, sL: Float64Array, sU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, mu: number, out: Float64Array): void {
  const kd = C.kappaD * mu;
  for (let i = 0; i < grad.length; i++) {
    let v = grad[i];
    if (hasL[i]) { v -= mu / sL[i]; if (!hasU[i]) v += kd; }
    if (hasU[i]) { v += mu / sU[i]; if (!hasL[i]) v -= kd; }
    out[i] = v;
  }
}
