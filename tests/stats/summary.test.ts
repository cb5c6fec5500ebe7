import { describe, expect, it } from "vitest";
import { mad, mean, median, quantile, stddev, summarize } from "~/engine/stats/summary";

describe("summary statistics (hand-computed from the definitions)", () => {
  const x = [3, 1, 4, 1, 5, 9, 2, 6];
  it("mean, median, sample standard deviation", () => {
    // Σ = 31, n = 8 → 3.875. Sorted 1 1 2 3 4 5 6 9 → median (3 + 4)/2 = 3.5.
    expect(mean(x)).toBe(3.875);
    expect(median(x)).toBe(3.5);
    // Σ(x − 3.875)² = 8.265625·... computed: Σx² = 173, 173 − 8·3.875² = 52.875 → s² = 52.875/7.
    expect(stddev(x)).toBeCloseTo(Math.sqrt(52.875 / 7), 14);
  });
  it("type-7 quantiles", () => {
    // h = 7·0.25 = 1.75 → x(2) + 0.75·(x(3) − x(2)) = 1 + 0.75·1 = 1.75 (0-based indices 1, 2).
    expect(quantile(x, 0.25)).toBe(1.75);
    // h = 7·0.75 = 5.25 → 5 + 0.25·(6 − 5) = 5.25.
    expect(quantile(x, 0.75)).toBe(5.25);
    expect(quantile(x, 0)).toBe(1);
    expect(quantile(x, 1)).toBe(9);
  });
  it("median absolute deviation", () => {
    // |x − 3.5| = 0.5 2.5 0.5 2.5 1.5 5.5 1.5 2.5 → sorted .5 .5 1.5 1.5 2.5 2.5 2.5 5.5 → median 2.
    expect(mad(x)).toBe(2);
  });
  it("summarize gathers them and rejects bad input with its position", () => {
    const s = summarize(x);
    expect(s).toMatchObject({ n: 8, min: 1, max: 9, median: 3.5, q1: 1.75, q3: 5.25, mad: 2 });
    expect(s.relativeIqr).toBeCloseTo(3.5 / 3.5, 14);
    expect(() => summarize([1, Number.NaN])).toThrow(/position 1/);
    expect(() => mean([])).toThrow(/empty/);
  });
});
