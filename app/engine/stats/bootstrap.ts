/**
 * Bootstrap confidence interval of the ratio of medians θ = median(F_x) / median(F_y)
 * of two independent samples (x: current timings, y: baseline timings).
 *
 * B. Efron, R. J. Tibshirani, "An Introduction to the Bootstrap", Chapman & Hall, 1993:
 *  - two-sample bootstrap (ch. 8): each replicate resamples x (size n₁) and y (size n₂)
 *    independently with replacement and computes θ* = median(x*) / median(y*);
 *  - percentile interval (ch. 13, eq. (13.5)): [θ*_(α/2), θ*_(1−α/2)], the empirical quantiles
 *    of the B replicates;
 *  - BCa interval (ch. 14, eqs. (14.9)–(14.15)): percentiles α₁ = Φ(ẑ₀ + (ẑ₀ + z_{α/2})/(1 − â(ẑ₀ + z_{α/2})))
 *    and α₂ likewise with z_{1−α/2}; bias correction ẑ₀ = Φ⁻¹(#{θ* < θ̂}/B); acceleration â from
 *    the jackknife, â = Σ(θ̄₍.₎ − θ₍ᵢ₎)³ / (6 [Σ(θ̄₍.₎ − θ₍ᵢ₎)²]^{3/2}), leaving out one value of
 *    either sample at a time.
 * Resampling uses a seeded xoshiro128** stream (./prng.ts), so an interval is reproducible.
 */
import { createPrng } from "./prng";
import { normalCdf } from "./normal";
import { medianSorted, quantileSorted, sorted, type Sample } from "./summary";
import { normalQuantile } from "./normal-quantile";

export interface BootstrapOptions {
  /** Number of bootstrap replicates B (default 2000). */
  replicates?: number;
  /** Two-sided level 1 − α (default 0.95). */
  confidence?: number;
  /** PRNG seed (default 1). */
  seed?: number;
  /** "percentile" (default) or "bca". */
  method?: "percentile" | "bca";
}

export interface BootstrapInterval {
  /** Point estimate θ̂ = median(x) / median(y). */
  estimate: number;
  low: number;
  high: number;
  confidence: number;
  replicates: number;
  method: "percentile" | "bca";
  seed: number;
  /** True when the interval lies entirely above or entirely below 1. */
  excludesOne: boolean;
}

function check(s: Sample, name: string): void {
  if (s.length === 0) throw new Error(`bootstrapMedianRatio: sample ${name} is empty`);
  for (let i = 0; i < s.length; i++) {
    if (!(Number.isFinite(s[i]) && s[i] > 0)) {
      throw new Error(`bootstrapMedianRatio: sample ${name} value at position ${i} must be a positive finite number, got ${s[i]}`);
    }
  }
}

/**
 * Median of a resample of `src` (length n) drawn with replacement into `work` (length n,
 * caller-owned), then sorted in place.
 */
function resampleMedian(src: Float64Array, work: Float64Array, nextInt: (n: number) => number): number {
  const n = src.length;
  for (let i = 0; i < n; i++) work[i] = src[nextInt(n)];
  work.sort();
  return medianSorted(work);
}

/** The B replicates θ*_b of the median ratio, sorted ascending. */
export function bootstrapMedianRatioReplicates(x: Sample, y: Sample, replicates: number, seed: number): Float64Array {
  check(x, "x");
  check(y, "y");
  if (!Number.isInteger(replicates) || replicates < 10) throw new Error(`bootstrapMedianRatio: replicates must be an integer ≥ 10, got ${replicates}`);
  const rng = createPrng(seed);
  const xs = Float64Array.from(x as ArrayLike<number>);
  const ys = Float64Array.from(y as ArrayLike<number>);
  const wx = new Float64Array(xs.length);
  const wy = new Float64Array(ys.length);
  const theta = new Float64Array(replicates);
  for (let b = 0; b < replicates; b++) {
    theta[b] = resampleMedian(xs, wx, rng.nextInt) / resampleMedian(ys, wy, rng.nextInt);
  }
  theta.sort();
  return theta;
}

/** Jackknife acceleration â of the median ratio (leave one value of x or of y out). */
function jackknifeAcceleration(x: Float64Array, y: Float64Array): number {
  const values: number[] = [];
  const my = medianSorted(sorted(y));
  const mx = medianSorted(sorted(x));
  const drop = (s: Float64Array, i: number) => {
    const out = new Float64Array(s.length - 1);
    for (let k = 0, m = 0; k < s.length; k++) if (k !== i) out[m++] = s[k];
    out.sort();
    return medianSorted(out);
  };
  if (x.length > 1) for (let i = 0; i < x.length; i++) values.push(drop(x, i) / my);
  if (y.length > 1) for (let j = 0; j < y.length; j++) values.push(mx / drop(y, j));
  if (values.length < 2) return 0;
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  let num = 0;
  let den = 0;
  for (const v of values) {
    const d = mean - v;
    num += d * d * d;
    den += d * d;
  }
  return den > 0 ? num / (6 * Math.pow(den, 1.5)) : 0;
}

/** Confidence interval of median(x)/median(y). Samples must be positive (times). */
export function bootstrapMedianRatio(x: Sample, y: Sample, options: BootstrapOptions = {}): BootstrapInterval {
  const replicates = options.replicates ?? 2000;
  const confidence = options.confidence ?? 0.95;
  const seed = options.seed ?? 1;
  const method = options.method ?? "percentile";
  if (!(confidence > 0 && confidence < 1)) throw new Error(`bootstrapMedianRatio: confidence must be in (0, 1), got ${confidence}`);
  const theta = bootstrapMedianRatioReplicates(x, y, replicates, seed);
  const xs = Float64Array.from(x as ArrayLike<number>);
  const ys = Float64Array.from(y as ArrayLike<number>);
  const estimate = medianSorted(sorted(xs)) / medianSorted(sorted(ys));
  const alpha = 1 - confidence;
  let pLow = alpha / 2;
  let pHigh = 1 - alpha / 2;
  if (method === "bca") {
    let below = 0;
    for (let b = 0; b < theta.length; b++) if (theta[b] < estimate) below++;
    // Guard the proportion away from 0 and 1 so that Φ⁻¹ stays finite.
    const prop = Math.min(Math.max(below / theta.length, 0.5 / theta.length), 1 - 0.5 / theta.length);
    const z0 = normalQuantile(prop);
    const a = jackknifeAcceleration(xs, ys);
    const adj = (zq: number) => {
      const w = z0 + zq;
      return normalCdf(z0 + w / (1 - a * w));
    };
    pLow = adj(normalQuantile(alpha / 2));
    pHigh = adj(normalQuantile(1 - alpha / 2));
  }
  const low = quantileSorted(theta, pLow);
  const high = quantileSorted(theta, pHigh);
  return { estimate, low, high, confidence, replicates, method, seed, excludesOne: low > 1 || high < 1 };
}
