/**
 * Singular arcs whose discrete control rings onto the bounds (app/engine/arcs/ringing.ts).
 *
 * Construction, the library's gannet-ballast-trim in closed form: ẋ = u, −0.4 ≤ u ≤ 0.4,
 * minimise ∫₀⁶ x² dt from x(0) = 1.2. Pontryagin's principle gives u = −0.4 until x = 0 at
 * t_s = 3, then the singular arc x ≡ 0, u = 0; with H = x² + λu, σ = λ, λ̇ = −2x and λ = 0 on the
 * singular arc, so λ = (1.2 − 0.4t)²/0.4 before t_s (analytic; Bryson and Ho 1975, §8.3). The trapezoidal rule leaves the
 * alternation u_k = −u_{k+1} free on the singular arc, and a solve driven to a duality gap of
 * 1e-11 rings at ±0.3995 (measured on the library problem, 40 intervals), within the bound
 * tolerance (1e-3 of the range) of both bounds. Before ringing.ts that read as "lower".
 */
import { describe, expect, it } from "vitest";
import { detectArcs } from "~/engine/arcs";
import { relabelRinging } from "~/engine/arcs/ringing";
import { sampledSolution, toyProblem } from "./helpers";

const problem = toyProblem({
  states: [{ name: "x" }],
  controls: [{ name: "u", lower: -0.4, upper: 0.4 }],
  dynamics: (z, out) => (out[0] = z[2]),
  running: (z) => z[1] * z[1],
  runningHess: [[1, 1]],
  tf: 6,
});
const N = 40;
const t = Float64Array.from({ length: N + 1 }, (_, k) => (6 * k) / N);
const ts = 3;
const x = t.map((tk) => Math.max(1.2 - 0.4 * tk, 0));
// σ = λ > 0 before t_s (→ lower); on the singular arc a solver-sized 1e-9 wiggle.
const lam = t.map((tk) => (tk < ts ? (1.2 - 0.4 * tk) ** 2 / 0.4 : 0) + (tk >= ts ? 1e-9 * Math.cos(40 * tk) : 0));
const ringingU = (amp: number) => t.map((tk, k) => (tk < ts ? -0.4 : (k % 2 === 0 ? -1 : 1) * amp));

describe("singular arc ringing onto the bounds", () => {
  it("ringing inside the bounds (a loosely solved NLP) is singular, as before", () => {
    const s = detectArcs(problem, sampledSolution(t, [x], [ringingU(0.37)], [lam]));
    expect(s.signature).toBe("lower|singular");
  });
  it("ringing onto both bounds (a tightly solved NLP) is still singular, junction at t_s = 3", () => {
    const s = detectArcs(problem, sampledSolution(t, [x], [ringingU(0.3999)], [lam]));
    expect(s.signature).toBe("lower|singular");
    // Junction within one grid interval (h = 0.15) of the analytic switch.
    expect(Math.abs(s.controls[0].junctions[0] - ts)).toBeLessThan(6 / N);
  });
  it("without costate estimates the same ringing is not relabelled (cannot be told from a switch)", () => {
    expect(relabelRinging(["lower", "upper", "lower", "upper"], null)).toEqual(["lower", "upper", "lower", "upper"]);
  });
  it("a bang–bang switch through one intermediate point keeps its bang points", () => {
    const labels = ["upper", "upper", "upper", "singular", "lower", "lower", "lower"];
    expect(relabelRinging(labels, new Float64Array([-3, -2, -1, 0, 1, 2, 3]).map((v) => v * 1e-3))).toEqual(labels);
  });
  it("a short bang run is kept where σ is clearly nonzero in its neighbourhood", () => {
    const labels = ["lower", "upper", "lower", "upper", "lower"];
    const sigma = new Float64Array([1, 0.5, 0.2, 0.5, 1]);
    expect(relabelRinging(labels, sigma)).toEqual(labels);
    // ... and relabelled where σ is negligible throughout (σ from another stretch sets max|σ|).
    const long = [...labels, "lower", "lower", "lower", "lower", "lower"];
    const flat = new Float64Array(long.length).fill(1e-9);
    flat[long.length - 1] = 1;
    expect(relabelRinging(long, flat).slice(0, 4)).toEqual(["singular", "singular", "singular", "singular"]);
  });
});
