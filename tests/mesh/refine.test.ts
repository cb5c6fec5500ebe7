/**
 * Adaptive mesh refinement (app/engine/mesh): the refinement rules on synthetic estimates, the
 * order q of the estimate that the local rule assumes, and whole refinements on library problems:
 *   smooth (tiercel-upper-stage, fine-mesh LGR reference; wren-wheel-spin-down, closed form): the
 *   refined mesh meets ε with fewer points than the uniform mesh that meets it;
 *   bang–bang (pika-rover-dash, closed form: one switch at t_s = √(D/umax) = tf/2, i.e. τ_s = 1/2,
 *   see problems/pika-rover-dash/problem.json): the points cluster at the switch.
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";
import { meshPoints, solveAdaptive, type AdaptiveReport } from "~/engine/mesh/adaptive";
import { orderReductions, refineLocal, ESTIMATE_ORDER } from "~/engine/mesh/refine-local";
import { refineHp } from "~/engine/mesh/refine-hp";
import type { CompiledProblem } from "~/engine/problem/types";
import type { Mesh, SchemeId } from "~/engine/schemes/types";

function load(id: string): CompiledProblem {
  const r = loadProblem(id);
  if (!r.ok) throw new Error(`${id} does not load`);
  return r.problem;
}

const quiet = { resimulate: false, arcs: false, keepTrajectory: false } as const;

function maxEstimate(p: CompiledProblem, scheme: SchemeId, mesh: Mesh): number {
  const r = solveProblem(p, scheme, mesh, quiet);
  expect(["optimal", "acceptable"]).toContain(r.status);
  return r.meshEstimate!.max;
}

describe("local refinement rule (Betts 2010 §4.7.3–4.7.4)", () => {
  it("adds points where the estimate exceeds ε, as many as the error model asks, at most 5", () => {
    // trapezoidal, q = 3: interval 0 needs (1e-6/(0.1·1e-6))^(1/3) = 2.15 → 2 points (1+I ≥ 2.15 → I = 2);
    // interval 1 asks (1e-3/1e-7)^(1/3) ≈ 21.5 → capped at 5; interval 2 meets ε and is kept
    const r = refineLocal("trapezoidal", [0, 0.25, 0.5, 1], [1e-6 * 1.0000001, 1e-3, 1e-9], 1e-6, null);
    expect(r.added).toEqual([2, 5, 0]);
    expect(r.mesh.intervals).toBe(3 + 7);
    expect(r.mesh.breakpoints!.slice(0, 4)).toEqual([0, 0.25 / 3, 0.5 / 3, 0.25]);
  });
  it("measures the order reduction from how a split interval's estimate fell", () => {
    // parent estimate 1e-3 halved (one point): children at 1e-3/2 → r = 3 − log 2 / log 2 = 2;
    // children at 1e-3/8 → r = 0 (the full order)
    const hist = (added: number) => [0, 1].map(() => ({ parentError: 1e-3, added, parent: 0, r: 0 }));
    expect(orderReductions(3, [5e-4, 1e-4], hist(1))).toEqual([2, 2]);
    expect(orderReductions(3, [1.25e-4, 1e-5], hist(1))).toEqual([0, 0]);
  });
});

describe("hp rule for LGR (Patterson, Hager and Rao 2015)", () => {
  it("raises the degree when N + P ≤ 10, splits into intervals of degree 3 otherwise", () => {
    // e/ε = 1e3, N = 4: P = ⌈ln 1000 / ln 4⌉ = ⌈4.98⌉ = 5 → degree 9;
    // e/ε = 1e4, N = 4: P = ⌈6.64⌉ = 7 → 11 > 10 → B = ⌈11/3⌉ = 4 intervals of degree 3
    const r = refineHp([0, 0.5, 0.75, 1], [4, 4, 4], [1e-3, 1e-2, 1e-7], 1e-6);
    expect(r.actions).toEqual(["p", "h", "keep"]);
    expect(r.mesh.degrees).toEqual([9, 3, 3, 3, 3, 4]);
    expect(r.mesh.breakpoints).toEqual([0, 0.5, 0.5625, 0.625, 0.6875, 0.75, 1]);
  });
});

describe("order of the estimate on a smooth problem (alder-ridge-cable-car, halving h)", () => {
  for (const scheme of Object.keys(ESTIMATE_ORDER) as Array<keyof typeof ESTIMATE_ORDER>)
    it(`${scheme}: log2(max estimate at 10 / at 20 intervals) = q = ${ESTIMATE_ORDER[scheme]} ± 0.3`, () => {
      const p = load("alder-ridge-cable-car");
      const e10 = maxEstimate(p, scheme, { intervals: 10 }), e20 = maxEstimate(p, scheme, { intervals: 20 });
      const q = Math.log2(e10 / e20);
      console.log(`${scheme}: measured order of the estimate ${q.toFixed(2)}`);
      expect(Math.abs(q - ESTIMATE_ORDER[scheme])).toBeLessThan(0.3);
    });
});

/** Smallest uniform mesh (growing by 10 %) from `start` intervals whose largest estimate meets eps. */
function uniformMeeting(p: CompiledProblem, scheme: SchemeId, start: number, eps: number, degree?: number): { intervals: number; points: number } {
  for (let N = start; N < 20 * start; N = Math.max(N + 1, Math.round(N * 1.1))) {
    const mesh: Mesh = degree ? { intervals: N, degree } : { intervals: N };
    if (maxEstimate(p, scheme, mesh) <= eps) return { intervals: N, points: meshPoints(scheme, mesh) };
  }
  throw new Error("no uniform mesh met the tolerance");
}

describe("smooth problems: the refined mesh meets ε with fewer points than the uniform mesh that meets it", () => {
  const cases: Array<{ id: string; scheme: SchemeId; initial: Mesh; eps: number }> = [
    { id: "wren-wheel-spin-down", scheme: "trapezoidal", initial: { intervals: 10 }, eps: 1e-6 },
    { id: "tiercel-upper-stage", scheme: "hermite-simpson", initial: { intervals: 10 }, eps: 1e-8 },
    { id: "tiercel-upper-stage", scheme: "lgr", initial: { intervals: 4, degree: 4 }, eps: 1e-8 },
  ];
  for (const c of cases)
    it(`${c.id} with ${c.scheme} at ε = ${c.eps}`, () => {
      const p = load(c.id);
      const rep = solveAdaptive(p, c.scheme, c.initial, { ...quiet, tolerance: c.eps });
      expect(rep.stop).toBe("met");
      const last = rep.passes[rep.passes.length - 1];
      expect(last.maxEstimate!).toBeLessThanOrEqual(c.eps);
      // the uniform mesh with as many points as the refined one does not meet ε
      const sameSize = c.scheme === "lgr" ? Math.ceil((last.points - 1) / c.initial.degree!) : last.points - 1;
      const u = uniformMeeting(p, c.scheme, sameSize, c.eps, c.initial.degree);
      console.log(
        `${c.id} ${c.scheme} ε=${c.eps}: refined ${last.points} points in ${rep.passes.length} passes (${rep.totalIterations} iterations, ${rep.totalSeconds.toFixed(2)} s), ` +
          `uniform meeting ε: ${u.points} points (${u.intervals} intervals); meshes ${rep.passes.map((q) => q.points).join(" → ")}`,
      );
      expect(last.points).toBeLessThan(u.points);
    });

  it("a warm-started pass takes no more iterations than a cold solve of the same mesh", () => {
    const p = load("tiercel-upper-stage");
    const rep = solveAdaptive(p, "hermite-simpson", { intervals: 10 }, { ...quiet, tolerance: 1e-8, maxPasses: 2 });
    const second = rep.passes[1];
    const cold = solveProblem(p, "hermite-simpson", { intervals: second.intervals, breakpoints: second.breakpoints }, quiet);
    console.log(`warm ${second.iterations} iterations, cold ${cold.iterations}`);
    expect(second.iterations).toBeLessThanOrEqual(cold.iterations);
  });
});

describe("bang–bang problem: points cluster at the switching time", () => {
  const tauS = 0.5; // t_s = tf/2 (closed form, pika-rover-dash)
  const widths = (rep: AdaptiveReport) => {
    const b = rep.finalMesh.breakpoints!;
    return b.slice(1).map((x, k) => ({ a: b[k], b: x, h: x - b[k] }));
  };
  it("trapezoidal from 15 intervals (switch inside interval 7) at ε = 1e-6", () => {
    const rep = solveAdaptive(load("pika-rover-dash"), "trapezoidal", { intervals: 15 }, { ...quiet, tolerance: 1e-6 });
    expect(rep.stop).toBe("met");
    const w = widths(rep);
    const smallest = [...w].sort((x, y) => x.h - y.h).slice(0, 6);
    console.log(`pika trapezoidal: ${w.length} intervals; six smallest ${smallest.map((s) => `[${s.a.toFixed(4)}, ${s.b.toFixed(4)}]`).join(" ")}`);
    // the six smallest intervals all lie within 0.01 (normalised time) of the switch
    for (const s of smallest) expect(Math.min(Math.abs(s.a - tauS), Math.abs(s.b - tauS))).toBeLessThan(0.01);
    // and more than half of the mesh points lie within ±0.05 of it (a uniform mesh would put 10 % there)
    const near = rep.finalMesh.breakpoints!.filter((x) => Math.abs(x - tauS) <= 0.05).length;
    expect(near / rep.finalMesh.breakpoints!.length).toBeGreaterThan(0.5);
  });
  it("LGR (hp) from 5 intervals of degree 4: the intervals at the switch are split, the others keep their width", () => {
    const rep = solveAdaptive(load("pika-rover-dash"), "lgr", { intervals: 5, degree: 4 }, { ...quiet, tolerance: 1e-6 });
    expect(rep.stop).toBe("met");
    const w = widths(rep);
    const hMin = Math.min(...w.map((s) => s.h));
    console.log(`pika lgr: ${w.map((s) => `[${s.a.toFixed(3)}, ${s.b.toFixed(3)}]`).join(" ")}, degrees ${rep.finalMesh.degrees!.join(" ")}`);
    for (const s of w) {
      const atSwitch = s.a <= tauS + 1e-12 && s.b >= tauS - 1e-12;
      if (atSwitch) expect(s.h).toBeCloseTo(hMin, 12);
      else if (s.b < 0.4 - 1e-12 || s.a > 0.6 + 1e-12) expect(s.h).toBeCloseTo(0.2, 12);
    }
  });
});

describe("failures are recorded", () => {
  it("a pass that does not converge stops the refinement with the solver's status", () => {
    const rep = solveAdaptive(load("tiercel-upper-stage"), "trapezoidal", { intervals: 10 }, { ...quiet, tolerance: 1e-8, nlp: { maxIter: 2 } });
    expect(rep.stop).toBe("solver");
    expect(rep.met).toBe(false);
    expect(rep.passes).toHaveLength(1);
    expect(rep.passes[0].maxEstimate).toBeNull();
    expect(rep.final.status).toBe("iteration_limit");
  });
  it("a tolerance that is not positive is refused with its value", () => {
    expect(() => solveAdaptive(load("tiercel-upper-stage"), "trapezoidal", { intervals: 10 }, { tolerance: 0 })).toThrow(/tolerance must be positive \(got 0\)/);
  });
});
