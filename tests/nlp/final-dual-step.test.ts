/**
 * The dual step of the final steps (app/engine/nlp/bound-multipliers.ts): a multiplier whose full
 * Newton update crosses zero by at most `clip` is cut alone at (1 − τ) of itself and leaves the
 * common step length to the others. Reference values are the fraction-to-the-boundary rule itself,
 * α = τ z / (−d_z) (Wächter and Biegler, "On the implementation of an interior-point filter
 * line-search algorithm for large-scale nonlinear programming", Math. Program. 106, 2006, eq. 15),
 * computed here by hand.
 */
import { describe, expect, it } from "vitest";
import { applyFinalDualStep, finalDualStepLength } from "~/engine/nlp/bound-multipliers";
import { fractionToBoundary } from "~/engine/nlp/line-search";

const tau = 1 - 1e-6;
const clip = 1e-11;

describe("final dual step", () => {
  it("a tiny multiplier that barely crosses zero is cut alone; the others take the full step", () => {
    // [tiny inactive-bound multiplier, crossing by 4e-13; a real multiplier; an increasing one]
    const z = Float64Array.of(1e-12, 0.5, 2e-3);
    const dz = Float64Array.of(-1.4e-12, -0.2, 1e-3);
    const has = Uint8Array.of(1, 1, 1);
    // The common rule is held to τ · 1e-12 / 1.4e-12 = 0.714… by the tiny one.
    expect(fractionToBoundary(tau, z, dz, 1, has, 1)).toBeCloseTo((tau * 1e-12) / 1.4e-12, 12);
    const alpha = finalDualStepLength(tau, clip, z, dz, has, 1);
    expect(alpha).toBe(1);
    applyFinalDualStep(alpha, tau, z, dz, has);
    expect(Math.abs(z[0] / 1e-18 - 1)).toBeLessThan(1e-9); // (1 − τ) z: positive, and its gap term s z only shrinks
    expect(z[0]).toBeGreaterThan(0);
    expect(z[1]).toBeCloseTo(0.3, 15);
    expect(z[2]).toBeCloseTo(3e-3, 15);
  });

  it("a multiplier crossing zero by more than clip still limits the common step, as the fraction-to-the-boundary rule", () => {
    const z = Float64Array.of(1e-12, 0.5, 1e-3);
    const dz = Float64Array.of(-1.4e-12, -0.2, -1.5e-3); // the last crosses by 5e-4 ≫ clip
    const has = Uint8Array.of(1, 1, 1);
    const alpha = finalDualStepLength(tau, clip, z, dz, has, 1);
    expect(alpha).toBeCloseTo((tau * 1e-3) / 1.5e-3, 14);
    applyFinalDualStep(alpha, tau, z, dz, has);
    expect(z[2]).toBeCloseTo(1e-3 - alpha * 1.5e-3, 18); // (1 − τ) · 1e-3 = 1e-9
    expect(z[1]).toBeCloseTo(0.5 - alpha * 0.2, 15);
    expect(z[0]).toBeGreaterThan(0);
  });

  it("absent bounds are untouched and a NaN step stays NaN (the caller's check sees it)", () => {
    const z = Float64Array.of(0, 0.5);
    const dz = Float64Array.of(-1, Number.NaN);
    const has = Uint8Array.of(0, 1);
    const alpha = finalDualStepLength(tau, clip, z, dz, has, 1);
    expect(alpha).toBe(1);
    applyFinalDualStep(alpha, tau, z, dz, has);
    expect(z[0]).toBe(0);
    expect(Number.isNaN(z[1])).toBe(true);
  });
});
