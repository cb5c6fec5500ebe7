import { describe, expect, it } from "vitest";
import { performanceProfile, profileAt } from "~/engine/stats/performance-profile";

describe("performance profiles (Dolan & Moré, Math. Programming 91, 2002)", () => {
  it("hand-computed example with failures", () => {
    // Costs (problems × solvers A, B, C); null = failed.
    //   p1: 1, 2, 4      → r = 1, 2, 4
    //   p2: 3, 3, fail   → r = 1, 1, ∞
    //   p3: fail, 10, 5  → r = ∞, 2, 1
    //   p4: 2, 1, 8      → r = 2, 1, 8
    // ρ_A: τ=1 → {p1,p2} = 2/4; τ=2 → +p4 = 3/4 (p3 never).
    // ρ_B: τ=1 → {p2,p4} = 2/4; τ=2 → +p1,p3 = 4/4.
    // ρ_C: τ=1 → {p3} = 1/4; τ=4 → +p1 = 2/4; τ=8 → +p4 = 3/4.
    const pp = performanceProfile([
      [1, 2, 4],
      [3, 3, null],
      [null, 10, 5],
      [2, 1, 8],
    ]);
    expect(pp.ratio).toEqual([
      [1, 2, 4],
      [1, 1, Infinity],
      [Infinity, 2, 1],
      [2, 1, 8],
    ]);
    expect(pp.curves[0]).toEqual({ tau: [1, 2], rho: [0.5, 0.75] });
    expect(pp.curves[1]).toEqual({ tau: [1, 2], rho: [0.5, 1] });
    expect(pp.curves[2]).toEqual({ tau: [1, 4, 8], rho: [0.25, 0.5, 0.75] });
    expect(pp.wins).toEqual([0.5, 0.5, 0.25]);
    expect(pp.robustness).toEqual([0.75, 1, 0.75]);
    expect(pp.rM).toBe(16);
    expect(profileAt(pp, 2, 3.99)).toBe(0.25);
    expect(profileAt(pp, 2, 4)).toBe(0.5);
    expect(profileAt(pp, 0, 0.5)).toBe(0);
  });

  it("a problem nobody solves is a failure for all; rows are validated", () => {
    const pp = performanceProfile([
      [1, 1],
      [null, Number.NaN],
    ]);
    expect(pp.robustness).toEqual([0.5, 0.5]);
    expect(pp.wins).toEqual([0.5, 0.5]);
    expect(() => performanceProfile([[1, 2], [1]])).toThrow(/row 1 has 1 entries, expected 2/);
  });
});
