/**
 * Piecewise-linear interpolation on an increasing grid, clamped to the end values outside it.
 * t and y have the same length N ≥ 1. Cost O(log N) per query (bisection).
 */
export function interpLinear(t: ArrayLike<number>, y: ArrayLike<number>, tq: number): number {
  const n = t.length;
  if (n === 0) return NaN;
  if (n === 1 || tq <= t[0]) return y[0];
  if (tq >= t[n - 1]) return y[n - 1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= tq) lo = mid;
    else hi = mid;
  }
  const h = t[hi] - t[lo];
  if (h <= 0) return y[hi];
  const s = (tq - t[lo]) / h;
  return (1 - s) * y[lo] + s * y[hi];
}

/**
 * Time where the linear interpolant of d between (ta, da) and (tb, db) equals `level`;
 * the midpoint when d does not cross the level on [ta, tb].
 */
export function crossing(ta: number, da: number, tb: number, db: number, level: number): number {
  const fa = da - level;
  const fb = db - level;
  if (fa === fb || fa * fb > 0) return 0.5 * (ta + tb);
  return ta + (tb - ta) * (fa / (fa - fb));
}
