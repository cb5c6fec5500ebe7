/**
 * Errors against references (app/engine/analysis/errors.ts) on the Pika rover problem, whose
 * reference is the closed-form bang–bang solution (t_s = √(D/umax) = √80, tf = 2√80; derivation in
 * problems/pika-rover-dash/problem.json): a solution equal to the closed form has zero errors (to
 * 1e-12), a solution with its state shifted by a known amount reports exactly that amount (scaled by
 * the state's scale hint 40), and bound events are found between the grid points around t_s.
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import { boundEvents, solutionErrors } from "~/engine/analysis/errors";
import type { Solution } from "~/engine/schemes/types";

const loaded = loadProblem("pika-rover-dash");
if (!loaded.ok) throw new Error("pika-rover-dash does not load");
const p = loaded.problem;
const D = 40, umax = 0.5, ts = Math.sqrt(D / umax), tf = 2 * ts;
const exact = (t: number) => (t < ts ? [0.5 * umax * t * t, umax * t, umax] : [D - 0.5 * umax * (tf - t) ** 2, umax * (tf - t), -umax]);

function solution(shift: number, n: number): Solution {
  const t = Float64Array.from({ length: n + 1 }, (_, k) => (tf * k) / n);
  return {
    scheme: "trapezoidal", t, tu: t,
    states: [Float64Array.from(t, (s) => exact(s)[0] + shift), Float64Array.from(t, (s) => exact(s)[1])],
    controls: [Float64Array.from(t, (s) => exact(s)[2])],
    tLambda: null, costates: null, pathMultipliers: null, t0: 0, tf, objective: tf,
    stateAt: (s, out) => { const e = exact(s); out[0] = e[0] + shift; out[1] = e[1]; },
    controlAt: (s, out) => void (out[0] = exact(s)[2]),
  };
}

describe("errors against the reference", () => {
  it("the closed form has zero errors", () => {
    const e = solutionErrors(p, solution(0, 101));
    expect(e.objectiveAbs!).toBeLessThan(1e-12);
    expect(e.finalTimeAbs!).toBeLessThan(1e-12);
    expect(e.stateMax!).toBeLessThan(1e-12);
    expect(e.controlMax!).toBeLessThan(1e-12);
    expect(e.costateMax).toBeNull();
  });
  it("a known state shift is reported scaled by the state's scale", () => {
    const e = solutionErrors(p, solution(0.2, 101));
    expect(Math.abs(e.stateMax! - 0.2 / 40)).toBeLessThan(1e-12);
  });
  it("bound events bracket the switching time", () => {
    const n = 101;
    const ev = boundEvents(p, solution(0, n));
    const h = tf / n;
    expect(ev.length).toBeGreaterThanOrEqual(1);
    for (const t of ev) expect(Math.abs(t - ts)).toBeLessThan(h);
    expect(solutionErrors(p, solution(0, n)).switchingTimes!).toBeLessThan(h);
  });
});
