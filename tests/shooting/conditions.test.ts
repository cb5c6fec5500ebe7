/**
 * Optimality conditions derived from problem files, checked through separate code paths:
 * hand-written Hamiltonians, finite differences of the switching function along an integrated
 * state–costate flow, closed-form stationary controls, and constraint orders known from the
 * literature (Bryson–Denham x ≤ ℓ is second order: Bryson and Ho 1975, §3.11; a speed limit on
 * the Goddard rocket is first order since v̇ contains the thrust).
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import type { CompiledProblem } from "~/engine/problem/types";
import { OptimalityConditions } from "~/engine/shooting/conditions";
import { ArcControlLaw } from "~/engine/shooting/control-law";
import { integrateSegment } from "~/engine/shooting/integrate";

function classic(id: string): CompiledProblem {
  const r = loadProblem(`tests/fixtures/classic/${id}`);
  if (!r.ok) throw new Error(r.errors.map((e) => e.message).join("; "));
  return r.problem;
}

describe("Goddard (COPS) conditions", () => {
  const p = classic("goddard-cops");
  const oc = new OptimalityConditions(p);
  // w = [t, h, v, m, T, λh, λv, λm, η]
  const w = Float64Array.from([0.05, 1.003, 0.09, 0.8, 1.2, -2.1, -0.15, -0.05, 0]);
  oc.samples = [w];
  const D = (h: number, v: number) => 310 * v * v * Math.exp(-500 * (h - 1));

  it("H = λh v + λv ((T − D)/m − 1/h²) − λm T/c (maximisation: no running cost)", () => {
    const [, h, v, m, T, lh, lv, lm] = w;
    const H = lh * v + lv * ((T - D(h, v)) / m - 1 / (h * h)) - (lm * T) / 0.5;
    const out = new Float64Array(1);
    oc.hamiltonian.eval(w, out);
    expect(Math.abs(out[0] - H)).toBeLessThan(1e-14 * Math.max(1, Math.abs(H)));
  });

  it("H is affine in T; the singular arc has order 1", () => {
    expect(oc.affineIn(0)).toBe(true);
    expect(oc.singularDerivatives(0).order).toBe(1);
  });

  it("σ̇ from the symbolic chain equals a central difference of σ along the flow (T held fixed)", () => {
    const s = oc.singularDerivatives(0);
    const vals = new Float64Array(s.fn.nOut);
    s.fn.eval(w, vals);
    const flowAt = new Float64Array(6);
    const ww = Float64Array.from(w);
    const rhs = (t: number, y: Float64Array, dy: Float64Array) => {
      ww[0] = t;
      for (let i = 0; i < 3; i++) {
        ww[1 + i] = y[i];
        ww[5 + i] = y[3 + i];
      }
      oc.flow.eval(ww, flowAt);
      dy.set(flowAt);
      return true;
    };
    const y0 = Float64Array.from([w[1], w[2], w[3], w[5], w[6], w[7]]);
    const sigmaAt = (y: Float64Array, t: number) => {
      const z = Float64Array.from(w);
      z[0] = t;
      for (let i = 0; i < 3; i++) {
        z[1 + i] = y[i];
        z[5 + i] = y[3 + i];
      }
      const o = new Float64Array(s.fn.nOut);
      s.fn.eval(z, o);
      return o;
    };
    // Central differences with Richardson extrapolation, (4 D(h/2) − D(h))/3: error O(h⁴).
    const central = (h: number, q: number) => {
      const sp = sigmaAt(integrateSegment(rhs, w[0], y0, w[0] + h).y, w[0] + h);
      const sm = sigmaAt(integrateSegment(rhs, w[0], y0, w[0] - h).y, w[0] - h);
      return (sp[q] - sm[q]) / (2 * h);
    };
    const rich = (q: number) => (4 * central(5e-5, q) - central(1e-4, q)) / 3;
    // Integration error 1e-12 / h ≈ 2e-8 dominates: tolerance 1e-6 relative.
    expect(Math.abs(rich(0) - vals[1])).toBeLessThan(1e-6 * Math.max(1, Math.abs(vals[1])));
    expect(Math.abs(rich(1) - vals[2])).toBeLessThan(1e-6 * Math.max(1, Math.abs(vals[2])));
  });

  it("the speed limit is a first-order state constraint", () => {
    const q = classic("goddard-cops-speed-limit");
    const oq = new OptimalityConditions(q);
    oq.samples = [w];
    expect(oq.constraintDerivatives({ name: "v", side: 1, bound: 0.1, source: -2 }).order).toBe(1);
  });
});

describe("Bryson–Denham conditions", () => {
  it("x ≤ ℓ is a second-order constraint; on the boundary arc u = 0 and η = −λv", () => {
    const p = classic("bryson-denham");
    const oc = new OptimalityConditions(p);
    const w = Float64Array.from([0.5, 1 / 9, 0, 0.3, 2.0, -0.7, 0]); // [t, x, v, u, λx, λv, η]
    oc.samples = [w];
    const cd = oc.constraintDerivatives({ name: "x", side: 1, bound: 1 / 9, source: -1 });
    expect(cd.order).toBe(2);
    const law = new ArcControlLaw(oc, { kinds: ["boundary"], constraint: cd, singular: [null] }, (_t, out) => out.fill(0.3));
    expect(law.solve(w)).toBe(true);
    expect(Math.abs(w[3])).toBeLessThan(1e-14);
    // H̃ = u²/2 + λx v + λv u + η u, ∂H̃/∂u = u + λv + η = 0 at u = 0.
    expect(Math.abs(w[6] - 0.7)).toBeLessThan(1e-12);
  });
});

describe("orbit raising: stationary steering angle", () => {
  it("matches the closed form tan φ = λvr/λvt with H minimal (Bryson and Ho 1975, p. 67)", () => {
    const p = classic("orbit-raising");
    const oc = new OptimalityConditions(p);
    const lvr = -0.8;
    const lvt = -0.3;
    const w = Float64Array.from([1.0, 1.1, 0.1, 0.95, 0, -1.2, lvr, lvt, 0]); // [t, r, vr, vt, φ, λ…, η]
    oc.samples = [w];
    const law = new ArcControlLaw(oc, { kinds: ["interior"], constraint: null, singular: [null] }, (_t, out) => out.fill(1.0));
    expect(law.solve(w)).toBe(true);
    // Minimising λvr sin φ + λvt cos φ: (sin φ, cos φ) = −(λvr, λvt)/‖λ‖.
    const nrm = Math.hypot(lvr, lvt);
    expect(Math.abs(Math.sin(w[4]) + lvr / nrm)).toBeLessThan(1e-13);
    expect(Math.abs(Math.cos(w[4]) + lvt / nrm)).toBeLessThan(1e-13);
  });
});
