/**
 * The RK4 tableau (app/engine/schemes/butcher.ts) satisfies its own invariants: row sums c_i = Σ_j a_ij
 * and the eight order conditions up to order 4 (Butcher, Numerical Methods for Ordinary Differential
 * Equations, 3rd ed., Wiley 2016, §31, table 312(I)); checked to 1e-15.
 */
import { describe, expect, it } from "vitest";
import { RK4_CLASSICAL } from "~/engine/schemes/butcher";

describe("classical RK4 tableau", () => {
  const { a, b, c } = RK4_CLASSICAL;
  const A = (i: number, j: number) => (j < i ? (a[i][j] ?? 0) : 0);
  const s = b.length;
  const sum = (f: (i: number) => number) => Array.from({ length: s }, (_, i) => f(i)).reduce((x, y) => x + y, 0);
  it("row sums equal the abscissae", () => {
    for (let i = 0; i < s; i++) expect(sum((j) => A(i, j))).toBeCloseTo(c[i], 15);
  });
  it("order conditions 1–4", () => {
    const Ac = (i: number) => sum((j) => A(i, j) * c[j]);
    const Ac2 = (i: number) => sum((j) => A(i, j) * c[j] * c[j]);
    const AAc = (i: number) => sum((j) => A(i, j) * Ac(j));
    expect(sum((i) => b[i])).toBeCloseTo(1, 15);
    expect(sum((i) => b[i] * c[i])).toBeCloseTo(1 / 2, 15);
    expect(sum((i) => b[i] * c[i] ** 2)).toBeCloseTo(1 / 3, 15);
    expect(sum((i) => b[i] * Ac(i))).toBeCloseTo(1 / 6, 15);
    expect(sum((i) => b[i] * c[i] ** 3)).toBeCloseTo(1 / 4, 15);
    expect(sum((i) => b[i] * c[i] * Ac(i))).toBeCloseTo(1 / 8, 15);
    expect(sum((i) => b[i] * Ac2(i))).toBeCloseTo(1 / 12, 15);
    expect(sum((i) => b[i] * AAc(i))).toBeCloseTo(1 / 24, 15);
  });
});
