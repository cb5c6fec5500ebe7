import { describe, expect, it } from "vitest";
import { bootstrapMedianRatio, bootstrapMedianRatioReplicates } from "~/engine/stats/bootstrap";
import { createPrng } from "~/engine/stats/prng";
import { normalQuantile } from "~/engine/stats/normal-quantile";

const binom = (n: number, k: number) => {
  let c = 1;
  for (let i = 1; i <= k; i++) c = (c * (n - k + i)) / i;
  return c;
};
/**
 * Exact bootstrap distribution of the median of a resample of n = 2m + 1 distinct values:
 * median(x*) ≤ x_(k) ⇔ at least m + 1 draws fall in {x_(1)…x_(k)}, so
 * P(median* ≤ x_(k)) = P(Bin(n, k/n) ≥ m + 1) (Efron & Tibshirani 1993, problem 2.x style; elementary).
 */
function exactMedianCdf(n: number, k: number): number {
  const p = k / n;
  let s = 0;
  for (let j = (n + 1) / 2; j <= n; j++) s += binom(n, j) * p ** j * (1 - p) ** (n - j);
  return s;
}

describe("bootstrap interval of the median ratio", () => {
  // x = 1..11, y ≡ 1: the ratio is median(x*), whose bootstrap distribution is known exactly.
  const x = Array.from({ length: 11 }, (_, i) => i + 1);
  const y = [1, 1, 1];

  it("replicate frequencies match the exact binomial law within 5σ (B = 20000)", () => {
    const B = 20000;
    const theta = bootstrapMedianRatioReplicates(x, y, B, 2024);
    for (let k = 1; k <= 11; k++) {
      const F = exactMedianCdf(11, k);
      let c = 0;
      for (const t of theta) if (t <= k) c++;
      const sd = Math.sqrt((F * (1 - F)) / B);
      expect(Math.abs(c / B - F)).toBeLessThanOrEqual(5 * sd + 1e-12);
    }
  });

  it("percentile interval equals the analytically determined order statistics", () => {
    // Exact CDF: F(2) = 0.00721, F(3) = 0.05125, F(7) = 0.82725, F(8) = 0.94875, F(9) = 0.99279.
    // 95 %: lower = smallest k with F(k) ≥ 0.025 → 3; upper = smallest k with F(k) ≥ 0.975 → 9.
    // 80 %: 0.10 → 4 (F(3) = 0.051 < 0.1 ≤ F(4) = 0.173); 0.90 → 8. Margins ≥ 20 Monte Carlo σ.
    expect(exactMedianCdf(11, 2)).toBeLessThan(0.025);
    expect(exactMedianCdf(11, 3)).toBeGreaterThan(0.025);
    const ci95 = bootstrapMedianRatio(x, y, { replicates: 20000, seed: 5 });
    expect([ci95.low, ci95.high]).toEqual([3, 9]);
    expect(ci95.estimate).toBe(6);
    expect(ci95.excludesOne).toBe(true);
    const ci80 = bootstrapMedianRatio(x, y, { replicates: 20000, seed: 6, confidence: 0.8 });
    expect([ci80.low, ci80.high]).toEqual([4, 8]);
  });

  it("covers a known median ratio at close to the nominal rate (lognormal, 300 seeded data sets)", () => {
    // x ~ 1.25·exp(0.15 Z), y ~ exp(0.15 Z): the true median ratio is exactly 1.25.
    const rng = createPrng(99);
    const gauss = () => normalQuantile(Math.min(Math.max(rng.next(), 1e-12), 1 - 1e-12));
    let coveredP = 0;
    let coveredB = 0;
    const sets = 300;
    for (let s = 0; s < sets; s++) {
      const a = Array.from({ length: 15 }, () => 1.25 * Math.exp(0.15 * gauss()));
      const b = Array.from({ length: 15 }, () => Math.exp(0.15 * gauss()));
      const p = bootstrapMedianRatio(a, b, { replicates: 800, seed: s });
      const q = bootstrapMedianRatio(a, b, { replicates: 800, seed: s, method: "bca" });
      if (p.low <= 1.25 && 1.25 <= p.high) coveredP++;
      if (q.low <= 1.25 && 1.25 <= q.high) coveredB++;
    }
    // Nominal 0.95; the percentile interval of a median is known to be somewhat liberal in small
    // samples (common practice, no source), and 300 sets give a binomial σ ≈ 0.013: accept [0.88, 0.99].
    expect(coveredP / sets).toBeGreaterThan(0.88);
    expect(coveredP / sets).toBeLessThan(0.99);
    expect(coveredB / sets).toBeGreaterThan(0.88);
    expect(coveredB / sets).toBeLessThan(0.99);
  });

  it("is reproducible from its seed and rejects non-positive times", () => {
    const a = bootstrapMedianRatio([1, 2, 3, 4], [2, 3, 4], { seed: 11 });
    const b = bootstrapMedianRatio([1, 2, 3, 4], [2, 3, 4], { seed: 11 });
    expect(a).toEqual(b);
    expect(() => bootstrapMedianRatio([1, 0], [1])).toThrow(/sample x value at position 1/);
  });
});
