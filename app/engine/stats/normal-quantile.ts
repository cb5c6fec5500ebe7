/**
 * Inverse of the standard normal CDF, Φ⁻¹(p), by P. J. Acklam's rational approximation
 * (relative error below 1.15·10⁻⁹ over (0, 1); published on the author's web page, 2003,
 * coefficients recalled from memory — the round trip Φ(Φ⁻¹(p)) = p is checked in
 * tests/stats/normal.test.ts), refined with one step of Halley's method on Φ(z) − p using
 * ./normal.ts, which brings it to about machine precision.
 */
import { normalCdf, normalSf } from "./normal";

const a = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
const b = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
const c = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const d = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
const P_LOW = 0.02425; // break-point between the tail and central approximations (Acklam)

export function normalQuantile(p: number): number {
  if (!(p > 0 && p < 1)) {
    if (p === 0) return -Infinity;
    if (p === 1) return Infinity;
    throw new Error(`normalQuantile: probability ${p} is outside [0, 1]`);
  }
  let z: number;
  if (p < P_LOW) {
    const q = Math.sqrt(-2 * Math.log(p));
    z = (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) / ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  } else if (p <= 1 - P_LOW) {
    const q = p - 0.5;
    const r = q * q;
    z = ((((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q) / (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
  } else {
    const q = Math.sqrt(-2 * Math.log(1 - p));
    z = -(((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) / ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  }
  // Halley refinement: e = Φ(z) − p, u = e·√(2π)·exp(z²/2), z ← z − u/(1 + z·u/2).
  // Above ½ the residual is formed from the upper tail so that 1 − p keeps its relative accuracy.
  const e = p > 0.5 ? (1 - p) - normalSf(z) : normalCdf(z) - p;
  const u = e * Math.sqrt(2 * Math.PI) * Math.exp((z * z) / 2);
  return z - u / (1 + (z * u) / 2);
}
