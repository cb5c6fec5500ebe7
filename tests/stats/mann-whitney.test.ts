import { describe, expect, it } from "vitest";
import { exactUCdf, exactUDistribution, mannWhitneyU, midRanks } from "~/engine/stats/mann-whitney";
import { createPrng } from "~/engine/stats/prng";

/** All C(n1+n2, n1) splits of n1+n2 distinct ranks: the null distribution by brute force. */
function bruteForceDistribution(n1: number, n2: number): Float64Array {
  const n = n1 + n2;
  const counts = new Float64Array(n1 * n2 + 1);
  let total = 0;
  for (let mask = 0; mask < 1 << n; mask++) {
    let bits = 0;
    for (let k = 0; k < n; k++) if (mask & (1 << k)) bits++;
    if (bits !== n1) continue;
    // U1 = Σ over x-members of the number of y-members below it.
    let u = 0;
    let ysBelow = 0;
    for (let k = 0; k < n; k++) {
      if (mask & (1 << k)) u += ysBelow;
      else ysBelow++;
    }
    counts[u]++;
    total++;
  }
  return counts.map((c) => c / total);
}

describe("Mann–Whitney U", () => {
  it("reproduces the worked example of the SciPy documentation (R. Shier, 'Statistics: 2.3 The Mann-Whitney U Test', Mathematics Learning Support Centre, 2004)", () => {
    // scipy.stats.mannwhitneyu docs: males = [19, 22, 16, 29, 24], females = [20, 11, 17, 12];
    // exact two-sided: U1 = 17, p = 0.1111111111111111; normal with continuity: p = 0.11134688653314041;
    // without continuity: 0.0864107329737; females vs males, "less", exact: U = 3, p = 0.05555555555555555.
    const males = [19, 22, 16, 29, 24];
    const females = [20, 11, 17, 12];
    const exact = mannWhitneyU(males, females);
    expect(exact.method).toBe("exact");
    expect(exact.u1).toBe(17);
    expect(exact.u2).toBe(3);
    expect(exact.pValue).toBeCloseTo(0.1111111111111111, 14);
    const normal = mannWhitneyU(males, females, { method: "normal" });
    expect(normal.pValue).toBeCloseTo(0.11134688653314041, 12);
    const noCc = mannWhitneyU(males, females, { method: "normal", continuity: false });
    expect(noCc.pValue).toBeCloseTo(0.0864107329737, 11);
    const less = mannWhitneyU(females, males, { alternative: "less" });
    expect(less.u1).toBe(3);
    expect(less.pValue).toBeCloseTo(0.05555555555555555, 14);
  });

  it("hand example: x = [1, 2, 3] all below y = [4, 5, 6] gives U1 = 0 and exact two-sided p = 2/C(6,3) = 0.1", () => {
    const r = mannWhitneyU([1, 2, 3], [4, 5, 6]);
    expect(r.u1).toBe(0);
    expect(r.pValue).toBeCloseTo(0.1, 15);
    expect(mannWhitneyU([1, 2, 3], [4, 5, 6], { alternative: "less" }).pValue).toBeCloseTo(1 / 20, 15);
    expect(mannWhitneyU([1, 2, 3], [4, 5, 6], { alternative: "greater" }).pValue).toBeCloseTo(1, 15);
  });

  it("exact distribution equals brute-force enumeration of all rank splits", () => {
    for (const [n1, n2] of [[1, 1], [2, 3], [4, 4], [3, 7], [6, 5]] as const) {
      const a = exactUDistribution(n1, n2);
      const b = bruteForceDistribution(n1, n2);
      expect(a.length).toBe(b.length);
      for (let u = 0; u < a.length; u++) expect(a[u]).toBeCloseTo(b[u], 14);
    }
  });

  it("agrees with published two-sided α = 0.05 critical values (recalled from memory: n1 = n2 = 5 → 2, 8 → 13, 10 → 23, 20 → 127)", () => {
    // Critical value c: reject when min(U1, U2) ≤ c, i.e. P(U ≤ c) ≤ 0.025 < P(U ≤ c + 1).
    for (const [n, c] of [[5, 2], [8, 13], [10, 23], [20, 127]] as const) {
      expect(exactUCdf(c, n, n)).toBeLessThanOrEqual(0.025);
      expect(exactUCdf(c + 1, n, n)).toBeGreaterThan(0.025);
    }
  });

  it("normal approximation with ties, hand-computed from the definition", () => {
    // x = [1, 2, 2, 3], y = [2, 3, 4, 4, 5]. Pooled sorted: 1 2 2 2 3 3 4 4 5, mid-ranks
    // 1 | 3 3 3 | 5.5 5.5 | 7.5 7.5 | 9. R1 = 1 + 3 + 3 + 5.5 = 12.5 → U1 = 12.5 − 10 = 2.5.
    // Ties: t = 3, 2, 2 → Σ(t³ − t) = 24 + 6 + 6 = 36. μ = 10, σ² = (20/12)·(10 − 36/72) = 15.8333…
    // Two-sided z = (|2.5 − 10| − 0.5)/√15.8333 = 7/3.979112 = 1.759186; p = 2·Φ̄(1.759186).
    const x = [1, 2, 2, 3];
    const y = [2, 3, 4, 4, 5];
    const { ranks, tieTerm } = midRanks([...x, ...y]);
    expect(Array.from(ranks)).toEqual([1, 3, 3, 5.5, 3, 5.5, 7.5, 7.5, 9]);
    expect(tieTerm).toBe(36);
    const r = mannWhitneyU(x, y);
    expect(r.method).toBe("normal");
    expect(r.ties).toBe(true);
    expect(r.u1).toBe(2.5);
    const sigma = Math.sqrt((20 / 12) * (10 - 36 / 72));
    expect(r.z).toBeCloseTo(7 / sigma, 13);
    expect(7 / sigma).toBeCloseTo(1.759186, 5);
    // Standard normal table (recalled from memory): Φ(1.76) = 0.96080, Φ(1.75) = 0.95994; linear
    // interpolation gives Φ(1.759186) ≈ 0.96073 → p = 2·(1 − 0.96073) = 0.0785; tolerance 5e-4.
    expect(r.pValue).toBeCloseTo(0.0785, 3);
    expect(() => mannWhitneyU(x, y, { method: "exact" })).toThrow(/ties/);
  });

  it("is calibrated: under H0 the exact test rejects at most α of the time (seeded, 4000 trials)", () => {
    const rng = createPrng(42);
    let rejects = 0;
    const trials = 4000;
    for (let k = 0; k < trials; k++) {
      const a = Array.from({ length: 8 }, () => rng.next());
      const b = Array.from({ length: 8 }, () => rng.next());
      if (mannWhitneyU(a, b).pValue < 0.05) rejects++;
    }
    // Exact size for n = 8 at nominal 0.05 is P(U ≤ 13)·2 = 0.0499 (from the critical value above);
    // binomial 4σ band around it: ±4·√(0.05·0.95/4000) = ±0.0138.
    expect(rejects / trials).toBeLessThan(0.05 + 0.0138);
    expect(rejects / trials).toBeGreaterThan(0.05 - 0.0138 - 0.01);
  });

  it("names the bad sample and position", () => {
    expect(() => mannWhitneyU([1, Number.NaN], [2])).toThrow(/sample x .*position 1/);
    expect(() => mannWhitneyU([1], [])).toThrow(/sample y is empty/);
  });
});
