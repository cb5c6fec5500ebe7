/**
 * Arc detection on synthetic solutions with known structure. Each case builds the exact control
 * of a known structure, then perturbs it the way direct solutions are perturbed (mesh noise of
 * 1e-5, damped oscillations next to junctions as pseudospectral controls show), and checks that the
 * detected sequence and junctions match the construction. Junction tolerances are stated per case
 * in units of the grid spacing.
 */
import { describe, expect, it } from "vitest";
import { detectArcs } from "~/engine/arcs";
import { clusteredGrid, noise, sampledSolution, toyProblem } from "./helpers";

/** Damped ringing next to a junction tj: amplitude a, decaying over ~2 grid spacings h. */
function ringing(t: number, tj: number, a: number, h: number): number {
  const s = (t - tj) / h;
  return a * Math.exp(-Math.abs(s) / 1.5) * Math.cos(2.5 * s);
}

const clamp = (v: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, v));

describe("bang–singular–bang (H affine in u)", () => {
  // ẋ = u, 0 ≤ u ≤ 1, so σ = λ. Construction: upper on [0, 0.3), singular on [0.3, 0.7), lower after.
  const problem = toyProblem({
    states: [{ name: "x" }],
    controls: [{ name: "u", lower: 0, upper: 1 }],
    dynamics: (z, out) => (out[0] = z[2]),
  });
  const t = clusteredGrid(50, 4);
  const h = 1 / 50;
  const rnd = noise(7);
  const u = t.map((tk) => {
    let v = tk < 0.3 ? 1 : tk < 0.7 ? 0.4 + 0.1 * Math.sin(6 * tk) : 0;
    v += 1e-5 * rnd();
    if (Math.abs(tk - 0.3) < 3 * h) v += ringing(tk, 0.3, 0.25, h / 4);
    if (Math.abs(tk - 0.7) < 3 * h) v += ringing(tk, 0.7, 0.25, h / 4);
    return clamp(v, 0, 1);
  });
  const x = t.map((tk) => tk);
  const lam = t.map((tk) => (tk < 0.3 ? -(0.3 - tk) : tk < 0.7 ? 1e-4 * rnd() : tk - 0.7));

  it("finds upper|singular|lower from control values alone", () => {
    const s = detectArcs(problem, sampledSolution(t, [x], [u]));
    expect(s.signature).toBe("upper|singular|lower");
    // Without costates ringing on the bang side cannot be told from the singular arc's start:
    // junctions within two mesh intervals (h = 0.02) of the construction.
    expect(Math.abs(s.controls[0].junctions[0] - 0.3)).toBeLessThan(2 * h);
    expect(Math.abs(s.controls[0].junctions[1] - 0.7)).toBeLessThan(2 * h);
    expect(s.usedSwitchingFunction).toBe(false);
  });

  it("uses the switching function when costates exist", () => {
    const s = detectArcs(problem, sampledSolution(t, [x], [u], [lam]));
    expect(s.signature).toBe("upper|singular|lower");
    expect(s.usedSwitchingFunction).toBe(true);
    expect(s.costateSign).toBe(1);
    // σ is small next to the junctions (|σ| < 0.25 max|σ| there), so it does not relabel the
    // ringing: the same two-interval tolerance as without costates.
    expect(Math.abs(s.controls[0].junctions[0] - 0.3)).toBeLessThan(2 * h);
    expect(Math.abs(s.controls[0].junctions[1] - 0.7)).toBeLessThan(2 * h);
  });

  it("absorbs the opposite costate sign convention", () => {
    const s = detectArcs(problem, sampledSolution(t, [x], [u], [lam.map((v) => -v)]));
    expect(s.signature).toBe("upper|singular|lower");
    expect(s.notes.some((n) => n.includes("opposite sign"))).toBe(true);
  });
});

describe("bang–bang with ringing", () => {
  // ẋ = u, −1 ≤ u ≤ 1, switch at ts = 0.45; σ = λ = t − ts is linear, so its zero is exact.
  const problem = toyProblem({
    states: [{ name: "x" }],
    controls: [{ name: "u", lower: -1, upper: 1 }],
    dynamics: (z, out) => (out[0] = z[2]),
  });
  const t = clusteredGrid(40, 4);
  const h = 1 / 40;
  const u = t.map((tk) => clamp((tk < 0.45 ? 1 : -1) + ringing(tk, 0.45, 0.8, h / 4) * (Math.abs(tk - 0.45) < 2 * h ? 1 : 0), -1, 1));
  const x = t.map(() => 0);

  it("filters the ringing: upper|lower, junction within one interval without costates", () => {
    const s = detectArcs(problem, sampledSolution(t, [x], [u]));
    expect(s.signature).toBe("upper|lower");
    expect(Math.abs(s.controls[0].junctions[0] - 0.45)).toBeLessThan(h);
  });

  it("places the switch at the zero of σ to 1e-12 when costates exist", () => {
    const lam = t.map((tk) => tk - 0.45);
    const s = detectArcs(problem, sampledSolution(t, [x], [u], [lam]));
    expect(s.signature).toBe("upper|lower");
    // σ is linear in t, so linear interpolation finds its zero exactly (rounding only).
    expect(Math.abs(s.controls[0].junctions[0] - 0.45)).toBeLessThan(1e-12);
  });
});

describe("state-constrained arc (Bryson–Denham construction)", () => {
  // Bryson and Ho, Applied Optimal Control (1975), §3.11, case ℓ ≤ 1/6: x ≤ ℓ, ẋ = v, v̇ = u,
  // L = u²/2 (not affine in u). Exact solution: x = ℓ(1 − (1 − t/(3ℓ))³) on [0, 3ℓ],
  // x = ℓ on [3ℓ, 1 − 3ℓ], symmetric after; u = −(2/(3ℓ))(1 − t/(3ℓ)) on the first arc.
  const l = 1 / 9;
  const problem = toyProblem({
    states: [{ name: "x", upper: l }, { name: "v" }],
    controls: [{ name: "u" }],
    dynamics: (z, out) => {
      out[0] = z[2];
      out[1] = z[3];
    },
    running: (z) => 0.5 * z[3] * z[3],
    runningHess: [[3, 3]],
  });
  const t = clusteredGrid(50, 4);
  const xs = (tk: number) => {
    const s = Math.min(tk, 1 - tk);
    return s < 3 * l ? l * (1 - (1 - s / (3 * l)) ** 3) : l;
  };
  const us = (tk: number) => {
    const s = Math.min(tk, 1 - tk);
    return s < 3 * l ? (-2 / (3 * l)) * (1 - s / (3 * l)) : 0;
  };
  const x = t.map(xs);
  const v = t.map(() => 0);
  const u = t.map(us);

  it("finds interior|boundary:x|interior with junctions near 3ℓ and 1 − 3ℓ", () => {
    const s = detectArcs(problem, sampledSolution(t, [x, v], [u]));
    expect(s.signature).toBe("interior|boundary:x|interior");
    // The distance to the bound grows like (t − t1)³, so the activity threshold (1e-4 relative)
    // is reached within 3ℓ·(1e-4)^(1/3) ≈ 0.015 of the junction.
    expect(Math.abs(s.controls[0].junctions[0] - 3 * l)).toBeLessThan(0.02);
    expect(Math.abs(s.controls[0].junctions[1] - (1 - 3 * l))).toBeLessThan(0.02);
  });
});

describe("incidental constraint activity", () => {
  // Coast with the mass on its floor: ṁ = −u, u ∈ [0, 1], m ≥ 0.6. The control explains the arc.
  const problem = toyProblem({
    states: [{ name: "m", lower: 0.6 }],
    controls: [{ name: "T", lower: 0, upper: 1 }],
    dynamics: (z, out) => (out[0] = -z[2]),
  });
  const t = clusteredGrid(30, 3);
  const u = t.map((tk) => (tk < 0.4 ? 1 : 0));
  const m = t.map((tk) => 1 - Math.min(tk, 0.4));

  it("labels the coast 'lower', not a boundary arc", () => {
    const s = detectArcs(problem, sampledSolution(t, [m], [u]));
    expect(s.signature).toBe("upper|lower");
  });
});

describe("path constraint and two controls", () => {
  // Two controls: u1 ∈ [0, 1] bang–bang, u2 unbounded entering L quadratically, path constraint
  // q = x ≤ 0.5 riding on [0.5, 0.8] (q = x built to sit on the bound there).
  const problem = toyProblem({
    states: [{ name: "x" }],
    controls: [{ name: "u1", lower: 0, upper: 1 }, { name: "u2" }],
    dynamics: (z, out) => (out[0] = z[2] + z[3]),
    running: (z) => z[3] * z[3],
    runningHess: [[3, 3]],
    path: [{ name: "q", upper: 0.5, c: (z) => z[1] }],
  });
  const t = clusteredGrid(50, 3);
  const x = t.map((tk) => (tk < 0.5 ? 0.5 - (0.5 - tk) ** 2 : tk < 0.8 ? 0.5 : 0.5 - (tk - 0.8) ** 2));
  const u1 = t.map((tk) => (tk < 0.2 ? 1 : 0));
  const u2 = t.map((tk) => 0.3 + tk);

  it("gives one sequence per control and a combined signature", () => {
    const s = detectArcs(problem, sampledSolution(t, [x], [u1, u2]));
    expect(s.controls.map((c) => c.control)).toEqual(["u1", "u2"]);
    expect(s.signature).toBe("u1=upper|lower;u2=interior|boundary:q|interior");
    const j = s.controls[1].junctions;
    // Distance (t − t1)² reaches the threshold 1e-4·0.25 within 5e-3 of the junction; grid 1/150.
    expect(Math.abs(j[0] - 0.5)).toBeLessThan(0.01);
    expect(Math.abs(j[1] - 0.8)).toBeLessThan(0.01);
  });
});

describe("mixed constraint riding with a control on its bound", () => {
  // Unit thrust direction (ur, ut), ur² + ut² ≤ 1 active throughout; ur swings through +1 in the
  // middle (ut = 0 there). The whole flight is one boundary arc of the mixed constraint.
  const problem = toyProblem({
    states: [{ name: "x" }],
    controls: [{ name: "ur", lower: -1, upper: 1 }, { name: "ut", lower: -1, upper: 1 }],
    dynamics: (z, out) => (out[0] = z[2] + z[3]),
    path: [{ name: "direction", upper: 1, mixed: true, c: (z) => z[2] * z[2] + z[3] * z[3] }],
  });
  const t = clusteredGrid(40, 3);
  const ang = t.map((tk) => Math.PI * (tk - 0.5)); // direction angle from −π/2 to π/2
  const ur = ang.map((a) => Math.cos(a));
  const ut = ang.map((a) => Math.sin(a));

  it("labels both controls boundary:direction, also where ur = 1", () => {
    const s = detectArcs(problem, sampledSolution(t, [t.map(() => 0)], [ur, ut]));
    expect(s.signature).toBe("ur=boundary:direction;ut=boundary:direction");
  });
});
