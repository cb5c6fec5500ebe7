/**
 * Descriptive statistics of one sample (timing samples, error series).
 *
 * All functions take a plain array (or Float64Array) x of length n ≥ 1 and never mutate it.
 * Quantiles use the linear interpolation between order statistics that Hyndman & Fan call
 * "type 7" (R. J. Hyndman, Y. Fan, "Sample quantiles in statistical packages",
 * The American Statistician 50(4), 1996, definition 7): with sorted x_(1) ≤ … ≤ x_(n) and
 * h = (n − 1)·p + 1, Q(p) = x_(⌊h⌋) + (h − ⌊h⌋)·(x_(⌊h⌋+1) − x_(⌊h⌋)).
 */

export type Sample = ArrayLike<number>;

function requireSample(x: Sample, what: string): void {
  if (x.length === 0) throw new Error(`${what}: the sample is empty`);
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i])) throw new Error(`${what}: sample value at position ${i} is not finite (${x[i]})`);
  }
}

/** Sorted copy (ascending) as a Float64Array. */
export function sorted(x: Sample): Float64Array {
  const s = Float64Array.from(x as ArrayLike<number>);
  s.sort();
  return s;
}

/** Arithmetic mean x̄ = (1/n) Σ x_i. */
export function mean(x: Sample): number {
  requireSample(x, "mean");
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i];
  return s / x.length;
}

/**
 * Sample standard deviation s = √( Σ (x_i − x̄)² / (n − 1) ) (Bessel's correction);
 * 0 for n = 1. Two-pass algorithm for accuracy.
 */
export function stddev(x: Sample): number {
  requireSample(x, "stddev");
  const n = x.length;
  if (n < 2) return 0;
  const m = mean(x);
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (x[i] - m) * (x[i] - m);
  return Math.sqrt(ss / (n - 1));
}

/** Type-7 quantile of an already SORTED array at probability p ∈ [0, 1]. */
export function quantileSorted(s: ArrayLike<number>, p: number): number {
  if (s.length === 0) throw new Error("quantile: the sample is empty");
  if (!(p >= 0 && p <= 1)) throw new Error(`quantile: probability ${p} is outside [0, 1]`);
  const h = (s.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, s.length - 1);
  return s[lo] + (h - lo) * (s[hi] - s[lo]);
}

/** Type-7 quantile at probability p. */
export function quantile(x: Sample, p: number): number {
  requireSample(x, "quantile");
  return quantileSorted(sorted(x), p);
}

/** Median: the mean of the two middle order statistics for even n (type-7 Q(0.5)). */
export function median(x: Sample): number {
  return quantile(x, 0.5);
}

/** Median of an already SORTED array, without copying. */
export function medianSorted(s: ArrayLike<number>): number {
  return quantileSorted(s, 0.5);
}

/**
 * Median absolute deviation MAD = median |x_i − median(x)|, unscaled.
 * Multiply by 1.4826 (= 1/Φ⁻¹(3/4)) for a consistent estimate of σ under normality.
 */
export function mad(x: Sample): number {
  const m = median(x);
  const d = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) d[i] = Math.abs(x[i] - m);
  return median(d);
}

/** 1/Φ⁻¹(3/4): scales the MAD to estimate σ of a normal sample. Φ⁻¹(0.75) = 0.6744897501960817. */
export const MAD_TO_SIGMA = 1 / 0.6744897501960817;

export interface SampleSummary {
  n: number;
  mean: number;
  median: number;
  stddev: number;
  min: number;
  max: number;
  /** Q(0.25), Q(0.75), type 7. */
  q1: number;
  q3: number;
  /** Unscaled median absolute deviation. */
  mad: number;
  /** Relative spread: (q3 − q1) / median (0 when the median is 0). */
  relativeIqr: number;
}

/** All the figures the runner stores for a timing sample, in one pass over a sorted copy. */
export function summarize(x: Sample): SampleSummary {
  requireSample(x, "summarize");
  const s = sorted(x);
  const med = quantileSorted(s, 0.5);
  const q1 = quantileSorted(s, 0.25);
  const q3 = quantileSorted(s, 0.75);
  return {
    n: s.length,
    mean: mean(s),
    median: med,
    stddev: stddev(s),
    min: s[0],
    max: s[s.length - 1],
    q1,
    q3,
    mad: mad(s),
    relativeIqr: med === 0 ? 0 : (q3 - q1) / Math.abs(med),
  };
}
