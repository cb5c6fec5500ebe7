/**
 * Interpolants used to evaluate a discrete solution between its grid points, as each scheme implies.
 * All work on one component series at a time and locate the interval by bisection.
 */

/** Index k with t[k] ≤ s < t[k+1] (clamped to 0 … t.length − 2). */
export function locate(t: ArrayLike<number>, s: number): number {
  const n = t.length;
  if (n < 2 || s <= t[0]) return 0;
  if (s >= t[n - 1]) return n - 2;
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= s) lo = mid;
    else hi = mid;
  }
  return lo;
}

/** Piecewise linear through (t_k, y_k). */
export function linearAt(t: ArrayLike<number>, y: ArrayLike<number>, s: number): number {
  if (t.length === 1) return y[0];
  const k = locate(t, s);
  const h = t[k + 1] - t[k];
  const th = h > 0 ? (s - t[k]) / h : 0;
  return y[k] + th * (y[k + 1] - y[k]);
}

/** Piecewise constant: y_k held on [t_k, t_{k+1}) (the last value held to the end). */
export function heldAt(t: ArrayLike<number>, y: ArrayLike<number>, s: number): number {
  if (t.length === 1 || s <= t[0]) return y[0];
  let k = locate(t, s);
  if (s >= t[k + 1]) k++;
  return y[Math.min(k, y.length - 1)];
}

/**
 * Cubic Hermite on [a, b] with values ya, yb and slopes (dy/dt) fa, fb:
 * the interpolant Hermite–Simpson collocation assumes for the state (Hargraves and Paris,
 * J. Guidance 10(4), 1987).
 */
export function hermiteCubic(a: number, b: number, ya: number, yb: number, fa: number, fb: number, s: number): number {
  const h = b - a;
  const th = (s - a) / h;
  const h00 = (1 + 2 * th) * (1 - th) * (1 - th);
  const h10 = th * (1 - th) * (1 - th);
  const h01 = th * th * (3 - 2 * th);
  const h11 = th * th * (th - 1);
  return h00 * ya + h10 * h * fa + h01 * yb + h11 * h * fb;
}

/** Quadratic through (a, ya), ((a+b)/2, ym), (b, yb). */
export function quadratic3(a: number, b: number, ya: number, ym: number, yb: number, s: number): number {
  const th = (s - a) / (b - a);
  return ya * 2 * (th - 0.5) * (th - 1) - ym * 4 * th * (th - 1) + yb * 2 * th * (th - 0.5);
}

/**
 * Barycentric weights for Lagrange interpolation on nodes x_0..x_K:
 * w_j = 1 / Π_{k≠j} (x_j − x_k) (Berrut and Trefethen, SIAM Review 46(3), 2004, eq. (3.2)).
 */
export function barycentricWeights(x: ArrayLike<number>): Float64Array {
  const n = x.length;
  const w = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    let p = 1;
    for (let k = 0; k < n; k++) if (k !== j) p *= x[j] - x[k];
    w[j] = 1 / p;
  }
  return w;
}

/** Barycentric (second form) Lagrange interpolation (Berrut and Trefethen 2004, eq. (4.2)). */
export function barycentricAt(x: ArrayLike<number>, w: ArrayLike<number>, y: ArrayLike<number>, s: number): number {
  let num = 0, den = 0;
  for (let j = 0; j < x.length; j++) {
    const d = s - x[j];
    if (d === 0) return y[j];
    const c = w[j] / d;
    num += c * y[j];
    den += c;
  }
  return num / den;
}
