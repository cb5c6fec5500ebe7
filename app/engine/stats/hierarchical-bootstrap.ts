/**
 * Pooled shift of a group of cases with a two-stage (hierarchical) bootstrap interval.
 *
 * Data: cases c = 1..C, each with current timings x_c (n_c values) and baseline timings y_c
 * (m_c values). The group's shift is the geometric mean of the cases' ratios of medians,
 *     θ̂ = exp( (1/C) Σ_c ln( median(x_c) / median(y_c) ) ),
 * so every case weighs the same whatever its size in seconds (a ×1.3 on a 2 ms case and on a
 * 200 ms case count alike).
 *
 * Interval: two-stage resampling of hierarchical data (A. C. Davison, D. V. Hinkley, "Bootstrap
 * Methods and their Application", Cambridge University Press, 1997, §3.8 "Hierarchical data";
 * S. Ren, H. Lai, W. Tong, M. Aminzadeh, X. Hou, S. Lai, "Nonparametric bootstrapping for
 * hierarchical data", Journal of Applied Statistics 37(9), 2010, 1487–1498): stage 1 draws C
 * cases with replacement; stage 2 redraws each drawn case's x and y with replacement, so that
 * both the spread between cases and the timing noise within a case reach the interval (with as
 * few as three to five cases per group the first stage alone would be too coarse). Percentile
 * interval [θ*_(α/2), θ*_(1−α/2)] of B replicates (B. Efron, R. J. Tibshirani, "An Introduction to
 * the Bootstrap", 1993, eq. (13.5)). Section numbers recalled from memory.
 * Resampling uses the seeded xoshiro128** stream (./prng.ts), so an interval is reproducible.
 */
import { createPrng } from "./prng";
import { medianSorted } from "./summary";

export interface PooledCase {
  /** Current timings (seconds). */
  x: readonly number[];
  /** Baseline timings (seconds). */
  y: readonly number[];
}

export interface PooledShift {
  /** θ̂: geometric mean of the cases' median ratios. */
  ratio: number;
  low: number;
  high: number;
  /** Cases used (with at least one positive value on each side). */
  cases: number;
  /** Per case, median(x_c) / median(y_c), in input order (NaN for a case left out). */
  caseRatios: number[];
}

export interface PooledOptions {
  /** Bootstrap replicates B (default 2000). */
  replicates?: number;
  /** Two-sided level 1 − α (default 0.99). */
  confidence?: number;
  /** PRNG seed (default 1). */
  seed?: number;
}

function medianOf(values: readonly number[]): number {
  return medianSorted(Float64Array.from(values).sort());
}

/** Pooled shift of the cases' timings; throws when fewer than one usable case remains. */
export function pooledShift(cases: readonly PooledCase[], options: PooledOptions = {}): PooledShift {
  const B = options.replicates ?? 2000;
  const conf = options.confidence ?? 0.99;
  const caseRatios = cases.map((c) => {
    if (c.x.length === 0 || c.y.length === 0) return NaN;
    const r = medianOf(c.x) / medianOf(c.y);
    return Number.isFinite(r) && r > 0 ? r : NaN;
  });
  const used = cases.filter((_, i) => Number.isFinite(caseRatios[i]!));
  const C = used.length;
  if (C === 0) throw new Error("pooledShift: no case with timings on both sides");
  const lnMean = caseRatios.filter(Number.isFinite).reduce((a, r) => a + Math.log(r), 0) / C;
  const rng = createPrng(options.seed ?? 1);
  const draw = (n: number) => Math.min(n - 1, Math.floor(rng.next() * n));
  const bx = new Float64Array(Math.max(...used.map((c) => c.x.length)));
  const by = new Float64Array(Math.max(...used.map((c) => c.y.length)));
  const reps = new Float64Array(B);
  for (let b = 0; b < B; b++) {
    let sum = 0;
    for (let k = 0; k < C; k++) {
      const c = used[draw(C)]!;
      const nx = c.x.length;
      const ny = c.y.length;
      for (let i = 0; i < nx; i++) bx[i] = c.x[draw(nx)]!;
      for (let i = 0; i < ny; i++) by[i] = c.y[draw(ny)]!;
      const mx = medianSorted(bx.subarray(0, nx).sort());
      const my = medianSorted(by.subarray(0, ny).sort());
      sum += Math.log(mx / my);
    }
    reps[b] = sum / C;
  }
  reps.sort();
  const alpha = 1 - conf;
  const at = (p: number) => reps[Math.min(B - 1, Math.max(0, Math.floor(p * (B - 1) + 0.5)))]!;
  return { ratio: Math.exp(lnMean), low: Math.exp(at(alpha / 2)), high: Math.exp(at(1 - alpha / 2)), cases: C, caseRatios };
}
