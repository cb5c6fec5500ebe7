/**
 * Change points in the mean of a series (a case's history of times or errors over commits)
 * by PELT, "Pruned Exact Linear Time": R. Killick, P. Fearnhead, I. A. Eckley, "Optimal
 * detection of changepoints with a linear computational cost", J. Amer. Statist. Assoc. 107(500),
 * 1590–1598, 2012.
 *
 * PELT minimises, over segmentations 0 = τ₀ < τ₁ < … < τ_{m+1} = n of y_1..y_n,
 *     Σ_{i=0}^{m} [ C(y_{τ_i+1 : τ_{i+1}}) + β ]
 * by the recursion F(t) = min_{τ ∈ R_t} [F(τ) + C(y_{τ+1:t}) + β], F(0) = −β, pruning every τ
 * with F(τ) + C(y_{τ+1:t}) + K > F(t) (their Theorem 3.1; K = 0 for this cost, which never grows
 * when a segment is split). The result equals exhaustive optimal partitioning.
 *
 * Cost: twice the negative Gaussian log-likelihood of a mean change with known σ, up to a constant,
 *     C(y_{a+1:b}) = Σ_{i=a+1}^{b} (y_i − ȳ_{a+1:b})² / σ²,
 * from prefix sums S₁, S₂: C = (S₂ − S₁²/(b − a)) / σ².
 * σ, when not given, is estimated robustly from first differences, σ̂ = 1.4826·MAD(Δy)/√2
 * (the estimator used by P. Fryzlewicz, "Wild binary segmentation for multiple change-point
 * detection", Ann. Statist. 42(6), 2014), floored at `sigmaFloor`.
 * Default penalty β = 3·ln n: the leading term of the modified BIC of N. Zhang, D. Siegmund
 * (Biometrics 63, 2007), the default penalty of the changepoint R package (R. Killick,
 * I. A. Eckley, J. Stat. Software 58(3), 2014) — recalled from memory.
 */
import { MAD_TO_SIGMA, median } from "./summary";

export interface PeltOptions {
  /** Penalty β per change point (default 3·ln n). */
  penalty?: number;
  /** Noise level σ (default: robust estimate from first differences). */
  sigma?: number;
  /** Lower bound for the estimated σ (default 1e-12), e.g. a relative noise floor. */
  sigmaFloor?: number;
  /** Minimum number of points per segment (default 2). */
  minSegment?: number;
}

export interface Segment {
  /** First index (0-based, inclusive) and one past the last index. */
  start: number;
  end: number;
  mean: number;
}

export interface PeltResult {
  /** 0-based indices where a new segment starts (each τ_i for i ≥ 1). */
  changePoints: number[];
  segments: Segment[];
  sigma: number;
  penalty: number;
  /** Minimised penalised cost F(n) (includes β per change point). */
  cost: number;
}

/** Robust σ from first differences: 1.4826 · MAD(Δy) / √2 (0 for fewer than 2 differences). */
export function differenceSigma(y: ArrayLike<number>): number {
  if (y.length < 3) return 0;
  const d = new Float64Array(y.length - 1);
  for (let i = 0; i < d.length; i++) d[i] = y[i + 1] - y[i];
  const m = median(d);
  for (let i = 0; i < d.length; i++) d[i] = Math.abs(d[i] - m);
  return (MAD_TO_SIGMA * median(d)) / Math.SQRT2;
}

/** Segment cost C(y_{a+1:b}) · σ² from prefix sums s1, s2 (length n + 1). */
function segmentSse(s1: Float64Array, s2: Float64Array, a: number, b: number): number {
  const len = b - a;
  const sum = s1[b] - s1[a];
  const sse = s2[b] - s2[a] - (sum * sum) / len;
  return sse > 0 ? sse : 0;
}

export function pelt(y: ArrayLike<number>, options: PeltOptions = {}): PeltResult {
  const n = y.length;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(y[i])) throw new Error(`pelt: series value at position ${i} is not finite (${y[i]})`);
  }
  const minSeg = options.minSegment ?? 2;
  if (!Number.isInteger(minSeg) || minSeg < 1) throw new Error(`pelt: minSegment must be a positive integer, got ${minSeg}`);
  const penalty = options.penalty ?? 3 * Math.log(Math.max(n, 2));
  const sigma = Math.max(options.sigma ?? differenceSigma(y), options.sigmaFloor ?? 1e-12);
  const meanOf = (a: number, b: number) => {
    let s = 0;
    for (let i = a; i < b; i++) s += y[i];
    return s / (b - a);
  };
  if (n < 2 * minSeg) {
    return { changePoints: [], segments: n > 0 ? [{ start: 0, end: n, mean: meanOf(0, n) }] : [], sigma, penalty, cost: 0 };
  }
  const s1 = new Float64Array(n + 1);
  const s2 = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) {
    s1[i + 1] = s1[i] + y[i];
    s2[i + 1] = s2[i] + y[i] * y[i];
  }
  const inv = 1 / (sigma * sigma);
  const F = new Float64Array(n + 1).fill(Infinity);
  const last = new Int32Array(n + 1).fill(-1);
  F[0] = -penalty;
  let R: number[] = [0];
  for (let t = minSeg; t <= n; t++) {
    const fresh = t - minSeg; // newest admissible last change point
    if (fresh >= minSeg) R.push(fresh);
    let best = Infinity;
    let arg = -1;
    const vals = new Float64Array(R.length);
    for (let k = 0; k < R.length; k++) {
      const tau = R[k];
      vals[k] = F[tau] + segmentSse(s1, s2, tau, t) * inv;
      if (vals[k] + penalty < best) {
        best = vals[k] + penalty;
        arg = tau;
      }
    }
    F[t] = best;
    last[t] = arg;
    // PELT pruning with K = 0: drop τ when F(τ) + C(τ+1:t) > F(t).
    const kept: number[] = [];
    for (let k = 0; k < R.length; k++) if (vals[k] <= best) kept.push(R[k]);
    R = kept;
  }
  const changePoints: number[] = [];
  for (let t = n; last[t] > 0; t = last[t]) changePoints.push(last[t]);
  changePoints.reverse();
  const bounds = [0, ...changePoints, n];
  const segments: Segment[] = [];
  for (let i = 0; i + 1 < bounds.length; i++) segments.push({ start: bounds[i], end: bounds[i + 1], mean: meanOf(bounds[i], bounds[i + 1]) });
  return { changePoints, segments, sigma, penalty, cost: F[n] };
}

export interface StepChange {
  /** Index where the latest segment starts. */
  index: number;
  before: number;
  after: number;
  /** after − before. */
  shift: number;
  sigma: number;
}

/**
 * The most recent change point of a history, if PELT finds one and the mean moved by at least
 * `minShift` (in the series' units). Used for drift: y = ln(time ratio) or ln(error) per commit.
 */
export function latestStepChange(y: ArrayLike<number>, options: PeltOptions & { minShift?: number } = {}): StepChange | null {
  const res = pelt(y, options);
  if (res.changePoints.length === 0) return null;
  const segs = res.segments;
  const a = segs[segs.length - 2];
  const b = segs[segs.length - 1];
  const shift = b.mean - a.mean;
  if (Math.abs(shift) < (options.minShift ?? 0)) return null;
  return { index: b.start, before: a.mean, after: b.mean, shift, sigma: res.sigma };
}
