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
import { LOOP_BLOCK } from "./vectors";

export function barrierValue(f: number, w: Float64Array, wL: Float64Array, wU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, mu: number): number {
  // Σ ln s as ln of running products: a logarithm only when the product leaves [2⁻⁵¹², 2⁵¹²] (it is
  // then folded into the sum and restarted) and for a slack outside [2⁻¹²⁸, 2¹²⁸], instead of one per
  // slack (the line search evaluates φ at every trial point, ~10k slacks at trapezoidal N = 1,600).
  // No product can overflow or underflow, and the result differs from the sum of logarithms only by
  // rounding (tests/nlp/barrier-value.test.ts: within 1e-13 of Σ|ln s|).
  // In blocks (LOOP_BLOCK in vectors.ts), the running values passed from block to block.
  const run = RUN;
  run[0] = 0; // Σ ln of the folded products and of the slacks taken one by one
  run[1] = 0; // Σ of the one-sided slacks
  run[2] = 1; // running product
  run[3] = 0; // 1 once a slack is not positive
  const n = hasL.length;
  for (let i0 = 0; i0 < n; i0 += LOOP_BLOCK) barrierBlock(i0, Math.min(n, i0 + LOOP_BLOCK), w, wL, wU, hasL, hasU, run);
  let logs = run[0];
  const lin = run[1];
  if (run[3] !== 0) logs = -Infinity;
  else logs += Math.log(run[2]);
  return f - mu * logs + C.kappaD * mu * lin;
}

/** barrierValue's running values: Σ ln, Σ one-sided slacks, product, a non-positive slack seen. */
const RUN = new Float64Array(4);

function barrierBlock(
  i0: number, i1: number, w: Float64Array, wL: Float64Array, wU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, run: Float64Array,
): void {
  let logs = run[0], lin = run[1], prod = run[2];
  let negative = false;
  for (let i = i0; i < i1; i++) {
    if (hasL[i]) {
      const s = w[i] - wL[i];
      if (!(s > 0)) negative = true;
      else if (s < SMALL || s > LARGE) logs += Math.log(s);
      else {
        prod *= s;
        if (prod < FOLD_BELOW || prod > FOLD_ABOVE) { logs += Math.log(prod); prod = 1; }
      }
      if (!hasU[i]) lin += s;
    }
    if (hasU[i]) {
      const s = wU[i] - w[i];
      if (!(s > 0)) negative = true;
      else if (s < SMALL || s > LARGE) logs += Math.log(s);
      else {
        prod *= s;
        if (prod < FOLD_BELOW || prod > FOLD_ABOVE) { logs += Math.log(prod); prod = 1; }
      }
      if (!hasL[i]) lin += s;
    }
  }
  run[0] = logs; run[1] = lin; run[2] = prod;
  if (negative) run[3] = 1;
}

/** Slacks taken one by one (2⁻¹²⁸, 2¹²⁸) and the range a running product is kept in (2^∓512). */
const SMALL = 2 ** -128, LARGE = 2 ** 128, FOLD_BELOW = 2 ** -512, FOLD_ABOVE = 2 ** 512;

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
