/**
 * Derivatives of every transcription's NLP against central finite differences of its own f and g
 * (step 1e-6 relative; agreement required to 1e-5 relative to max(1, |value|)): gradient, the
 * sparse Jacobian and the lower-triangle sparse Hessian of σf + λᵀg, on a problem exercising free
 * final time, running and terminal costs, a path constraint, endpoint constraints, a non-uniform
 * mesh and two controls. Also checks the triplet patterns (lower triangle, indices in range).
 */
import { describe, expect, it } from "vitest";
import { SCHEME_IDS, getScheme } from "~/engine/schemes";
import type { NlpProblem } from "~/engine/nlp/types";
import { compileJson } from "./helpers/fixtures";

const problem = compileJson(
  "fd-check",
  JSON.stringify({
    format: "arcwatch-problem/1",
    title: "derivative check",
    description: "Free final time, nonlinear dynamics, costs, path and endpoint constraints.",
    tags: [],
    constants: { k: 0.7 },
    states: [
      { name: "p", unit: "-", scale: 2 },
      { name: "q", unit: "-", lower: -5, upper: 5 },
    ],
    controls: [
      { name: "a", unit: "-", lower: -3, upper: 3, scale: 0.5 },
      { name: "b", unit: "-" },
    ],
    dynamics: { p: "q*cos(a) + k*t*p", q: "sin(p)*b - q^2/(1 + a^2)" },
    horizon: { initialTime: 0.3, finalTime: { free: { lower: 0.5, upper: 5, guess: 1.7 } } },
    initial: { p: 0.2 },
    final: { q: { lower: -1, upper: 1 } },
    endpointConstraints: [{ name: "mix", expr: "final(p)*initial(q) + tf^2", upper: 10 }],
    path: [{ name: "ring", expr: "p^2 + a*b*t", upper: 4 }],
    objective: { sense: "max", terminal: "final(p)^2*tf", running: "-(a^2 + exp(0.1*b)*q^2 + t*p)" },
    guess: { kind: "constant", states: { p: 0.4, q: -0.3 }, controls: { a: 0.2, b: 0.5 } },
  }),
);

function rand(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (1664525 * s + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

function denseJac(nlp: NlpProblem, y: Float64Array): Float64Array {
  const v = new Float64Array(nlp.jacRows.length);
  nlp.jacValues(y, v);
  const J = new Float64Array(nlp.m * nlp.n);
  for (let k = 0; k < v.length; k++) J[nlp.jacRows[k] * nlp.n + nlp.jacCols[k]] += v[k];
  return J;
}

const CASES: Array<{ id: (typeof SCHEME_IDS)[number]; variant?: string }> = [...SCHEME_IDS.map((id) => ({ id })), { id: "hermite-simpson", variant: "compressed" }];
for (const { id, variant } of CASES) {
  describe(`${id}${variant ? ` (${variant})` : ""}: NLP derivatives vs finite differences`, () => {
    const mesh = id === "lgr" ? { intervals: 2, degree: 3, breakpoints: [0, 0.35, 1] } : { intervals: 3, breakpoints: [0, 0.2, 0.55, 1], variant };
    const nlp = getScheme(id).transcribe(problem, mesh).nlp;
    const r = rand(42);
    const y = new Float64Array(nlp.n);
    for (let i = 0; i < nlp.n; i++) y[i] = nlp.x0[i] + 0.2 * (r() - 0.5);
    const tol = (a: number) => 1e-5 * Math.max(1, Math.abs(a));
    const step = (i: number) => 1e-6 * Math.max(1, Math.abs(y[i]));

    it("patterns are valid", () => {
      for (let k = 0; k < nlp.jacRows.length; k++) {
        expect(nlp.jacRows[k]).toBeGreaterThanOrEqual(0);
        expect(nlp.jacRows[k]).toBeLessThan(nlp.m);
        expect(nlp.jacCols[k]).toBeLessThan(nlp.n);
      }
      for (let k = 0; k < nlp.hessRows.length; k++) expect(nlp.hessRows[k]).toBeGreaterThanOrEqual(nlp.hessCols[k]);
    });

    it("gradient and Jacobian", () => {
      const grad = new Float64Array(nlp.n);
      nlp.gradF(y, grad);
      const J = denseJac(nlp, y);
      const gp = new Float64Array(nlp.m), gm = new Float64Array(nlp.m);
      for (let i = 0; i < nlp.n; i++) {
        const h = step(i);
        const yi = y[i];
        y[i] = yi + h;
        const fp = nlp.f(y);
        nlp.g(y, gp);
        y[i] = yi - h;
        const fm = nlp.f(y);
        nlp.g(y, gm);
        y[i] = yi;
        const fd = (fp - fm) / (2 * h);
        expect(Math.abs(grad[i] - fd)).toBeLessThan(tol(fd));
        for (let j = 0; j < nlp.m; j++) {
          const d = (gp[j] - gm[j]) / (2 * h);
          if (Math.abs(J[j * nlp.n + i] - d) >= tol(d)) throw new Error(`J[${j}, ${i}] = ${J[j * nlp.n + i]}, FD ${d} (${nlp.constraintName?.(j)} / ${nlp.variableName?.(i)})`);
        }
      }
    });

    it("Hessian of the Lagrangian", () => {
      const lambda = new Float64Array(nlp.m);
      for (let j = 0; j < nlp.m; j++) lambda[j] = 2 * (r() - 0.5);
      const sigma = 0.7;
      const hv = new Float64Array(nlp.hessRows.length);
      nlp.hessValues(y, sigma, lambda, hv);
      const H = new Float64Array(nlp.n * nlp.n);
      for (let k = 0; k < hv.length; k++) {
        const p = nlp.hessRows[k], q = nlp.hessCols[k];
        H[p * nlp.n + q] += hv[k];
        if (p !== q) H[q * nlp.n + p] += hv[k];
      }
      const gradL = (out: Float64Array) => {
        nlp.gradF(y, out);
        for (let i = 0; i < nlp.n; i++) out[i] *= sigma;
        const J = denseJac(nlp, y);
        for (let j = 0; j < nlp.m; j++) for (let i = 0; i < nlp.n; i++) out[i] += lambda[j] * J[j * nlp.n + i];
      };
      const lp = new Float64Array(nlp.n), lm = new Float64Array(nlp.n);
      for (let i = 0; i < nlp.n; i++) {
        const h = step(i);
        const yi = y[i];
        y[i] = yi + h;
        gradL(lp);
        y[i] = yi - h;
        gradL(lm);
        y[i] = yi;
        for (let q = 0; q < nlp.n; q++) {
          const d = (lp[q] - lm[q]) / (2 * h);
          if (Math.abs(H[q * nlp.n + i] - d) >= tol(d)) throw new Error(`H[${q}, ${i}] = ${H[q * nlp.n + i]}, FD ${d} (${nlp.variableName?.(q)} / ${nlp.variableName?.(i)})`);
        }
      }
    });
  });
}

describe("assembly bookkeeping", () => {
  it("the Assembly keeps no per-site inputs, terms or linear entries, and the builder lets go of them", async () => {
    const { TranscriptionBuilder } = await import("~/engine/schemes/builder");
    const b = new TranscriptionBuilder(problem);
    const x0 = b.addStates(0, "a"), u0 = b.addControls(0, "a");
    const x1 = b.addStates(1, "b"), u1 = b.addControls(1, "b");
    const p0 = b.point(0, { start: x0 }, { start: u0 }), p1 = b.point(1, { start: x1 }, { start: u1 });
    b.addDefect([{ start: x1, coef: 1 }, { start: x0, coef: -1 }], [{ point: p0, weight: -0.5 }, { point: p1, weight: -0.5 }], "interval 0");
    b.setEndpoints(x0, x1);
    const asm = b.build();
    expect(Object.keys(asm.spec)).not.toContain("sites");
    expect(Object.keys(asm.spec)).not.toContain("terms");
    expect(Object.keys(asm.spec)).not.toContain("linear");
    const held = b as unknown as { sites: unknown[]; terms: unknown[]; linear: unknown[] };
    expect([held.sites.length, held.terms.length, held.linear.length]).toEqual([0, 0, 0]);
    // and it still evaluates (the values themselves: the finite-difference checks above, which
    // run on every scheme after this release): two defect rows plus the endpoint rows, all finite
    const nlp = asm.nlp();
    const g = new Float64Array(nlp.m);
    nlp.g(nlp.x0, g);
    expect(nlp.m).toBeGreaterThanOrEqual(2);
    expect([...g].every(Number.isFinite)).toBe(true);
  });
});
