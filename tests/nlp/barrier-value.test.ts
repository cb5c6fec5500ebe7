/**
 * The barrier function φ_μ of Wächter and Biegler, "On the implementation of an interior-point
 * filter line-search algorithm for large-scale nonlinear programming", Math. Programming 106,
 * 2006, eq. (3) with the damping term of §3.7 (κ_d = 1e-5), against its definition evaluated here
 * one logarithm per slack: barrierValue sums the logarithms through running products, which must
 * agree to rounding for slacks from 1e-300 to 1e300 and keep +∞ outside the interior.
 */
import { describe, it, expect } from "vitest";
import { barrierValue } from "~/engine/nlp/barrier-function";
import { CONSTANTS } from "~/engine/nlp/options";

/** φ_μ term by term from the definition (eq. (3), §3.7). */
function phiByDefinition(f: number, w: Float64Array, wL: Float64Array, wU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, mu: number): number {
  let logs = 0, lin = 0;
  for (let i = 0; i < w.length; i++) {
    if (hasL[i]) { const s = w[i] - wL[i]; logs += Math.log(s); if (!hasU[i]) lin += s; }
    if (hasU[i]) { const s = wU[i] - w[i]; logs += Math.log(s); if (!hasL[i]) lin += s; }
  }
  return f - mu * logs + CONSTANTS.kappaD * mu * lin;
}

function rng(seed: number) {
  let s = seed >>> 0;
  return () => (s = (1664525 * s + 1013904223) >>> 0) / 2 ** 32;
}

/** n variables with slacks 10^e, e drawn from [eLo, eHi]; every kind of bound (lower, upper, both, none). */
function instance(n: number, eLo: number, eHi: number, seed: number) {
  const r = rng(seed);
  const w = new Float64Array(n), wL = new Float64Array(n), wU = new Float64Array(n);
  const hasL = new Uint8Array(n), hasU = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const kind = i % 4;
    w[i] = 0; // slacks of 1e-300 need a variable at 0 to be exact
    hasL[i] = kind === 0 || kind === 2 ? 1 : 0;
    hasU[i] = kind === 1 || kind === 2 ? 1 : 0;
    wL[i] = hasL[i] ? -(10 ** (eLo + (eHi - eLo) * r())) : -Infinity;
    wU[i] = hasU[i] ? 10 ** (eLo + (eHi - eLo) * r()) : Infinity;
  }
  return { w, wL, wU, hasL, hasU };
}

describe("barrier function φ_μ (W&B 2006 eq. (3), §3.7)", () => {
  const cases: Array<[string, number, number]> = [
    ["slacks near 1", -1, 1],
    ["tiny slacks, a product of 20 would underflow", -40, -20],
    ["large slacks, a product of 20 would overflow", 20, 40],
    ["slacks from 1e-300 to 1e300", -300, 300],
  ];
  for (const [name, eLo, eHi] of cases) {
    it(`${name}: the definition to rounding`, () => {
      for (const seed of [1, 2, 3]) {
        const { w, wL, wU, hasL, hasU } = instance(4000, eLo, eHi, seed);
        for (const mu of [1e-1, 1e-9]) {
          const ref = phiByDefinition(0.75, w, wL, wU, hasL, hasU, mu);
          const got = barrierValue(0.75, w, wL, wU, hasL, hasU, mu);
          // Each way rounds each of its ~4,000 terms once: a few ulps of the sum of |ln s| (rule of thumb).
          const scale = Math.abs(ref - 0.75) + mu * 4000 * Math.max(Math.abs(eLo), Math.abs(eHi)) * Math.LN10;
          expect(Number.isFinite(got)).toBe(true);
          expect(Math.abs(got - ref)).toBeLessThan(1e-13 * scale);
        }
      }
    });
  }

  it("a slack at or past its bound gives +∞ (outside the barrier's domain); a NaN slack, NaN", () => {
    const { w, wL, wU, hasL, hasU } = instance(100, -1, 1, 4);
    for (const [i, bad] of [[8, 0], [8, -1e-12], [10, 0], [10, -3]]) {
      const v = Float64Array.from(w);
      v[i] = i === 8 ? wL[i] + bad : wU[i] - bad; // variable 8: lower bound only (kind 0); 10: both (kind 2)
      expect(barrierValue(1, v, wL, wU, hasL, hasU, 1e-3)).toBe(Infinity);
    }
    const v = Float64Array.from(w);
    v[8] = NaN;
    expect(barrierValue(1, v, wL, wU, hasL, hasU, 1e-3)).toBeNaN();
    expect(phiByDefinition(1, v, wL, wU, hasL, hasU, 1e-3)).toBeNaN();
  });

  it("no bounds at all: φ = f", () => {
    const n = 10;
    const w = new Float64Array(n).fill(3);
    const none = new Uint8Array(n);
    expect(barrierValue(2.5, w, new Float64Array(n).fill(-Infinity), new Float64Array(n).fill(Infinity), none, none, 0.1)).toBe(2.5);
  });
});
