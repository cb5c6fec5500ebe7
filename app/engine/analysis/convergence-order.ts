/**
 * Observed order of convergence from errors on a sequence of meshes.
 *
 * Model: e(N) ≈ C · N^(−p) for N mesh intervals (e.g. Betts, Practical Methods for Optimal Control
 * Using Nonlinear Programming, 2nd ed., SIAM 2010, §4.7: discretisation error of order p in the
 * step h ∝ 1/N). Taking logarithms, log e = log C − p · log N, a straight line; p̂ is minus the
 * least-squares slope over the points (x_k, y_k) = (log N_k, log e_k):
 *     slope = Σ (x_k − x̄)(y_k − ȳ) / Σ (x_k − x̄)²,   log Ĉ = ȳ − slope · x̄.
 * Points with a non-finite or non-positive error or N are left out (log undefined); at least two
 * distinct N are needed.
 */
export interface OrderFit {
  /** Observed order p̂ (positive when the error falls with N). */
  order: number;
  /** Ĉ of e ≈ Ĉ N^(−p̂). */
  constant: number;
  /** Points used. */
  points: number;
}

export function fitConvergenceOrder(intervals: readonly number[], errors: readonly number[]): OrderFit | null {
  if (intervals.length !== errors.length) throw new Error(`fitConvergenceOrder: ${intervals.length} intervals but ${errors.length} errors`);
  const xs: number[] = [];
  const ys: number[] = [];
  for (let k = 0; k < intervals.length; k++) {
    const n = intervals[k]!;
    const e = errors[k]!;
    if (!(n > 0) || !Number.isFinite(n) || !(e > 0) || !Number.isFinite(e)) continue;
    xs.push(Math.log(n));
    ys.push(Math.log(e));
  }
  if (new Set(xs).size < 2) return null;
  const m = xs.length;
  const xBar = xs.reduce((a, b) => a + b, 0) / m;
  const yBar = ys.reduce((a, b) => a + b, 0) / m;
  let sxy = 0;
  let sxx = 0;
  for (let k = 0; k < m; k++) {
    sxy += (xs[k]! - xBar) * (ys[k]! - yBar);
    sxx += (xs[k]! - xBar) ** 2;
  }
  const slope = sxy / sxx;
  return { order: -slope, constant: Math.exp(yBar - slope * xBar), points: m };
}
