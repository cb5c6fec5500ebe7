import { describe, expect, it } from "vitest";
import { erfc, normalCdf, normalSf } from "~/engine/stats/normal";
import { normalQuantile } from "~/engine/stats/normal-quantile";

/** Composite Simpson rule for (2/√π) ∫_x^{x+12} e^{−t²} dt with 80 000 panels: an independent path. */
function erfcBySimpson(x: number): number {
  const n = 80000;
  const b = x + 12;
  const h = (b - x) / n;
  let s = Math.exp(-x * x) + Math.exp(-b * b);
  for (let k = 1; k < n; k++) s += (k % 2 ? 4 : 2) * Math.exp(-((x + k * h) ** 2));
  return ((2 / Math.sqrt(Math.PI)) * s * h) / 3;
}

describe("erfc and the normal tail", () => {
  it("matches Simpson quadrature of the definition to 1e-12 relative", () => {
    for (const x of [-1.5, -0.3, 0, 0.25, 0.9, 1.7, 1.999, 2.0, 2.5, 3.3, 4.5]) {
      const q = erfcBySimpson(x);
      expect(Math.abs(erfc(x) - q) / q).toBeLessThan(1e-12);
    }
  });

  it("matches tabulated values (recalled from memory; also A&S Table 7.1 / 26.1)", () => {
    // erfc(1) = 0.157299207050285, Φ(1.96) = 0.975002104851780, Φ(−3) = 0.00134989803163009.
    expect(erfc(1)).toBeCloseTo(0.157299207050285, 14);
    expect(normalCdf(1.96)).toBeCloseTo(0.97500210485178, 13);
    expect(normalSf(3) / 0.00134989803163009 - 1).toBeLessThan(1e-11);
  });

  it("keeps relative accuracy far in the tail", () => {
    // Mills-ratio asymptotics: Φ̄(z) ≈ φ(z)/z · (1 − 1/z² + 3/z⁴ − 15/z⁶) (A&S 26.2.12), error < 105/z⁸ relative.
    const z = 12;
    const phi = Math.exp(-z * z / 2) / Math.sqrt(2 * Math.PI);
    const asym = (phi / z) * (1 - 1 / z ** 2 + 3 / z ** 4 - 15 / z ** 6);
    expect(Math.abs(normalSf(z) / asym - 1)).toBeLessThan(105 / z ** 8);
  });
});

describe("normalQuantile", () => {
  it("inverts Φ to 1e-13 over the whole range", () => {
    for (const p of [1e-12, 1e-6, 0.001, 0.02, 0.025, 0.1, 0.5, 0.8, 0.975, 0.999, 1 - 1e-9]) {
      const z = normalQuantile(p);
      const back = p < 0.5 ? normalCdf(z) : normalSf(z);
      const target = p < 0.5 ? p : 1 - p;
      expect(Math.abs(back - target) / target).toBeLessThan(1e-9);
    }
    // z_{0.975} = 1.959963984540054 (recalled from memory).
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963984540054, 12);
  });
});
