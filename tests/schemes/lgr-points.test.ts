/**
 * LGR points, weights and differentiation matrix (app/engine/schemes/lgr-points.ts) against their
 * defining properties: Abramowitz and Stegun, Handbook of Mathematical Functions, 1964, 25.4.31
 * (Radau quadrature: exact for degree ≤ 2K − 2, w_0 = 2/K², weights sum to 2) and closed forms for
 * K = 3 (points −1, (1 ∓ √6)/5; weights 2/9, (16 + √6)/18, (16 − √6)/18, same reference, table 25.5).
 */
import { describe, expect, it } from "vitest";
import { lgrRule, legendre } from "~/engine/schemes/lgr-points";

describe("LGR rule", () => {
  it("K = 3 matches the closed form (tolerance 1e-14)", () => {
    const r = lgrRule(3);
    const s6 = Math.sqrt(6);
    expect(Array.from(r.points)).toEqual([-1, expect.closeTo((1 - s6) / 5, 14), expect.closeTo((1 + s6) / 5, 14)]);
    expect(r.weights[0]).toBeCloseTo(2 / 9, 14);
    expect(r.weights[1]).toBeCloseTo((16 + s6) / 18, 14);
    expect(r.weights[2]).toBeCloseTo((16 - s6) / 18, 14);
  });

  for (const K of [1, 2, 4, 7, 12, 20]) {
    it(`K = ${K}: points are roots of P_{K-1} + P_K, weights sum to 2, exact to degree 2K − 2 (1e-13)`, () => {
      const r = lgrRule(K);
      for (const x of r.points) expect(Math.abs(legendre(K - 1, x).p + legendre(K, x).p)).toBeLessThan(1e-12);
      expect(r.weights.reduce((a, b) => a + b, 0)).toBeCloseTo(2, 13);
      for (let d = 0; d <= 2 * K - 2; d++) {
        const exact = d % 2 === 0 ? 2 / (d + 1) : 0; // ∫_{-1}^{1} x^d dx
        let q = 0;
        r.points.forEach((x, j) => (q += r.weights[j] * x ** d));
        expect(Math.abs(q - exact)).toBeLessThan(1e-13);
      }
      if (K >= 2) {
        // not exact at degree 2K − 1 (K nodes, one fixed): the error term is ∝ f^(2K−1), small but nonzero
        let q = 0;
        r.points.forEach((x, j) => (q += r.weights[j] * x ** (2 * K - 1)));
        expect(Math.abs(q)).toBeGreaterThan(1e-12); // well above the 1e-13 exactness tolerance
      }
    });
  }

  for (const K of [3, 6, 10]) {
    it(`K = ${K}: D differentiates polynomials of degree ≤ K exactly (1e-10 · K²)`, () => {
      const r = lgrRule(K);
      for (let d = 0; d <= K; d++) {
        for (let j = 0; j < K; j++) {
          let v = 0;
          for (let l = 0; l <= K; l++) v += r.D[j * (K + 1) + l] * r.support[l] ** d;
          const exact = d === 0 ? 0 : d * r.support[j] ** (d - 1);
          expect(Math.abs(v - exact)).toBeLessThan(1e-10 * K * K);
        }
      }
    });
  }

  it("rejects a bad degree with a clear error", () => {
    expect(() => lgrRule(0)).toThrow(/LGR degree/);
    expect(() => lgrRule(2.5)).toThrow(/LGR degree/);
  });
});
