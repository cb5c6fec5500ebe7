/**
 * Loop kernels taken out of the interior-point iteration (app/engine/nlp/vectors.ts) so that V8
 * optimises each on its own: the iterate-size check (max |x|, NaN kept as the Math.max fold keeps
 * it), the final steps' step length (each slack keeps floorUlps · max(1, |bound|) of its bound) and
 * the shrinking of the bound relaxation when the final steps begin. Reference values are computed
 * by hand from the rules they implement (the fraction-to-the-boundary rule with a floor instead of
 * (1 − τ) s, Wächter and Biegler, Math. Program. 106, 2006, eq. (15), and the relaxation of §3.5
 * shrunk by a factor), not by the kernels.
 */
import { describe, expect, it } from "vitest";
import { finalStepLength, maxAbs, shrinkRelaxation } from "~/engine/nlp/vectors";

describe("maxAbs", () => {
  it("is the largest magnitude, over the first n entries only", () => {
    expect(maxAbs(3, Float64Array.of(0.5, -3, 2, 1e9))).toBe(3);
    expect(maxAbs(4, Float64Array.of(0.5, -3, 2, 1e9))).toBe(1e9);
    expect(maxAbs(0, Float64Array.of(7))).toBe(0);
  });
  it("is NaN when an entry is NaN, wherever it sits (as Math.max over the entries)", () => {
    expect(maxAbs(3, Float64Array.of(NaN, 1, 2))).toBeNaN();
    expect(maxAbs(3, Float64Array.of(5, NaN, 2))).toBeNaN();
    expect(maxAbs(3, Float64Array.of(1, 2, NaN))).toBeNaN();
    expect(maxAbs(3, Float64Array.of(1, -Infinity, 2))).toBe(Infinity);
  });
});

describe("finalStepLength", () => {
  const has = Uint8Array.of(1, 1);
  it("keeps the full step when no slack comes near its floor", () => {
    // lower slacks 1 and 2, steps −0.1 and +0.5 (the second moves away from its lower bound)
    const a = finalStepLength(2, 1, Float64Array.of(-0.1, 0.5), Float64Array.of(1, 2), Float64Array.of(1, 1), Float64Array.of(0, 0), Float64Array.of(10, 10), has, Uint8Array.of(0, 0), 1e-14);
    expect(a).toBe(1);
  });
  it("stops a lower slack at floorUlps · max(1, |w_L|)", () => {
    // s_L = 1e-3, d = −2e-3, w_L = −50: floor = 1e-14 · 50 = 5e-13; α = (5e-13 − 1e-3) / (−2e-3)
    const a = finalStepLength(1, 1, Float64Array.of(-2e-3), Float64Array.of(1e-3), Float64Array.of(1), Float64Array.of(-50), Float64Array.of(0), Uint8Array.of(1), Uint8Array.of(0), 1e-14);
    expect(a).toBeCloseTo((5e-13 - 1e-3) / -2e-3, 15);
    expect(1e-3 + a * -2e-3).toBeCloseTo(5e-13, 17); // within an ulp of 1e-3
  });
  it("stops an upper slack likewise, and |w_U| < 1 counts as 1", () => {
    // s_U = 4e-3, d = +1e-2, w_U = 0.25: floor = 1e-14; α = (4e-3 − 1e-14) / 1e-2
    const a = finalStepLength(1, 1, Float64Array.of(1e-2), Float64Array.of(1), Float64Array.of(4e-3), Float64Array.of(0), Float64Array.of(0.25), Uint8Array.of(0), Uint8Array.of(1), 1e-14);
    expect(a).toBeCloseTo((4e-3 - 1e-14) / 1e-2, 15);
  });
  it("takes the smallest limit over all bounds, and never a negative length", () => {
    // variable 0 limited at 0.5 by its lower bound, variable 1 already at its floor: α = 0
    const a = finalStepLength(2, 1, Float64Array.of(-2, -1), Float64Array.of(1, 1e-20), Float64Array.of(1, 1), Float64Array.of(0, 0), Float64Array.of(0, 0), has, Uint8Array.of(0, 0), 1e-14);
    expect(a).toBe(0);
    const b = finalStepLength(1, 1, Float64Array.of(-2), Float64Array.of(1), Float64Array.of(1), Float64Array.of(0), Float64Array.of(0), Uint8Array.of(1), Uint8Array.of(0), 1e-14);
    expect(b).toBeCloseTo((1e-14 - 1) / -2, 15);
  });
});

describe("shrinkRelaxation", () => {
  it("moves each relaxed bound back by keep · r and keeps 1 % of the old slack inside it", () => {
    // lower: w = 0 sits 1e-8 inside w_L = −1e-8 (relaxation r_L = 1e-8 of a bound at 0);
    // keep = 1 − 1e-5 moves w_L to −1e-13 and leaves r_L = 1e-13; the slack left, 1e-13, is below
    // 1 % of the old one (1e-10), so w moves to w_L + 1e-10
    const w = Float64Array.of(0, 5);
    const wL = Float64Array.of(-1e-8, -Infinity), wU = Float64Array.of(Infinity, 5 + 2e-8);
    const rL = Float64Array.of(1e-8, 0), rU = Float64Array.of(0, 2e-8);
    const keep = 1 - 1e-5;
    shrinkRelaxation(2, keep, w, wL, wU, rL, rU, Uint8Array.of(1, 0), Uint8Array.of(0, 1));
    expect(wL[0]).toBeCloseTo(-1e-8 + 1e-8 * keep, 22);
    expect(rL[0]).toBeCloseTo(1e-8 - 1e-8 * keep, 22);
    expect(w[0]).toBeCloseTo(wL[0] + 1e-2 * 1e-8, 22); // pushed to 1 % of its old slack 1e-8
    // upper: w = 5 sat 2e-8 below w_U; the bound comes down to 5 + 2e-13, w to w_U − 2e-10
    expect(wU[1]).toBeCloseTo(5 + 2e-8 - 2e-8 * keep, 14);
    expect(rU[1]).toBeCloseTo(2e-8 - 2e-8 * keep, 22);
    expect(w[1]).toBeCloseTo(wU[1] - 2e-10, 14);
    expect(w[1]).toBeLessThan(wU[1]);
  });
  it("leaves bounds without relaxation, and variables far inside, where they are", () => {
    const w = Float64Array.of(3), wL = Float64Array.of(1), wU = Float64Array.of(9);
    const rL = Float64Array.of(1e-8), rU = Float64Array.of(0);
    shrinkRelaxation(1, 0.5, w, wL, wU, rL, rU, Uint8Array.of(1), Uint8Array.of(1));
    expect(wL[0]).toBe(1 + 0.5e-8);
    expect(rL[0]).toBe(0.5e-8);
    expect(wU[0]).toBe(9); // no relaxation on the upper bound
    expect(w[0]).toBe(3); // slack 2 − 5e-9 ≥ 1 % of 2
  });
});
