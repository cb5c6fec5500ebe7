/**
 * Point values from interval averages (app/engine/schemes/interval-averages.ts) on p(t) = sin(3t) + t²
 * over a non-uniform mesh of [0, 2], with exact averages (closed-form antiderivative
 * −cos(3t)/3 + t³/3): the reconstruction error falls at fourth order (fitted order 3.6–4.6 over
 * N = 8 … 64) and is below 1e-5 at N = 64 (h ≈ 0.04, |p⁽⁵⁾| ≤ 243). At the nodes themselves, the two
 * ends included (one-sided stencils, and the interval search's ties), the error is 2.0e-5 at N = 64
 * and 3.6e-12 at N = 4,096 (measured 2026-12-04); the bounds below leave a factor 5 and 25.
 */
import { describe, expect, it } from "vitest";
import { valuesFromAverages } from "~/engine/schemes/interval-averages";
import { fittedOrder } from "./helpers/fixtures";

const p = (t: number) => Math.sin(3 * t) + t * t;
const P = (t: number) => -Math.cos(3 * t) / 3 + (t * t * t) / 3;

describe("values from interval averages", () => {
  it("fourth order on a non-uniform mesh", () => {
    const Ns = [8, 16, 32, 64];
    const err = Ns.map((N) => {
      const t = Array.from({ length: N + 1 }, (_, k) => 2 * (k / N) ** 1.3);
      const a = Array.from({ length: N }, (_, k) => (P(t[k + 1]) - P(t[k])) / (t[k + 1] - t[k]));
      const mids = Array.from({ length: N }, (_, k) => 0.5 * (t[k] + t[k + 1]));
      const v = valuesFromAverages(t, a, mids);
      return Math.max(...mids.map((m, k) => Math.abs(v[k] - p(m))));
    });
    const order = fittedOrder(Ns, err);
    expect(order).toBeGreaterThan(3.6);
    expect(order).toBeLessThan(4.6);
    expect(err[3]).toBeLessThan(1e-5);
  });

  it("accurate at the nodes and both ends, whatever the order of the points", () => {
    for (const [N, bound] of [[64, 1e-4], [4096, 1e-10]] as const) {
      const t = Array.from({ length: N + 1 }, (_, k) => 2 * (k / N) ** 1.3);
      const a = Array.from({ length: N }, (_, k) => (P(t[k + 1]) - P(t[k])) / (t[k + 1] - t[k]));
      const v = valuesFromAverages(t, a, t);
      expect(Math.max(...t.map((s, k) => Math.abs(v[k] - p(s))))).toBeLessThan(bound);
      const backwards = valuesFromAverages(t, a, [...t].reverse());
      expect(Array.from(backwards).reverse()).toEqual(Array.from(v));
    }
  });
});
