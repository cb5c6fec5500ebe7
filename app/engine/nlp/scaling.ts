/**
 * Gradient-based problem scaling, W&B 2006 §3.8:
 *
 *   d_f   = min(1, g_max / ‖∇f(x₀)‖∞)
 *   d_c,j = min(1, g_max / ‖∇c_j(x₀)‖∞)          j = 1..m
 *
 * so that no gradient of the scaled problem exceeds g_max (= 100 by default) at the start.
 * A lower limit d_min = 1e-8 keeps a huge gradient from wiping a function out
 * (common practice, no source).
 *
 * Arrays: grad (n), jacRows/jacCols/jacValues (nnzJ), posFree (n; −1 for a fixed variable, whose
 * entries do not count); writes dc (m). Returns d_f.
 */
export const SCALING_MIN = 1e-8;

export function gradientScaling(
  gMax: number,
  grad: Float64Array,
  jacRows: Int32Array,
  jacCols: Int32Array,
  jacValues: Float64Array,
  posFree: Int32Array,
  dc: Float64Array,
): number {
  let gmaxF = 0;
  for (let i = 0; i < grad.length; i++) if (posFree[i] >= 0) gmaxF = Math.max(gmaxF, Math.abs(grad[i]));
  const df = gmaxF > 0 ? Math.max(SCALING_MIN, Math.min(1, gMax / gmaxF)) : 1;
  dc.fill(0);
  for (let k = 0; k < jacRows.length; k++) {
    if (posFree[jacCols[k]] < 0) continue;
    const r = jacRows[k];
    const a = Math.abs(jacValues[k]);
    if (a > dc[r]) dc[r] = a;
  }
  for (let j = 0; j < dc.length; j++) {
    const a = dc[j];
    dc[j] = a > 0 ? Math.max(SCALING_MIN, Math.min(1, gMax / a)) : 1;
  }
  return df;
}
