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
    expect(Object.keys(asm.spec)).not.toContain("tables");
    const held = b as unknown as { tables: { nSite: number; nTerm: number; nLinear: number; nInput: number } };
    expect([held.tables.nSite, held.tables.nTerm, held.tables.nLinear, held.tables.nInput]).toEqual([0, 0, 0, 0]);
    // and it still evaluates (the values themselves: the finite-difference checks above, which
    // run on every scheme after this release): two defect rows plus the endpoint rows, all finite
    const nlp = asm.nlp();
    const g = new Float64Array(nlp.m);
    nlp.g(nlp.x0, g);
    expect(nlp.m).toBeGreaterThanOrEqual(2);
    expect([...g].every(Number.isFinite)).toBe(true);
  });
});

describe("names spelled on demand", () => {
  // Expected names written out by hand from the conventions of schemes/builder.ts (state or
  // control name, then the scheme's label; rows "defect <state> <label>", "path <name> <label>",
  // "endpoint <name>"); the variable layout of the trapezoidal scheme is tf, then per node the
  // states and the controls.
  it("spells every variable and row of a trapezoidal transcription", () => {
    const nlp = getScheme("trapezoidal").transcribe(problem, { intervals: 3 }).nlp;
    const vars = Array.from({ length: nlp.n }, (_, i) => nlp.variableName!(i));
    expect(vars).toEqual(["tf", ...[0, 1, 2, 3].flatMap((k) => [`p node ${k}`, `q node ${k}`, `a node ${k}`, `b node ${k}`])]);
    const rows = Array.from({ length: nlp.m }, (_, j) => nlp.constraintName!(j));
    expect(rows).toEqual([
      ...[0, 1, 2].flatMap((k) => [`defect p interval ${k}`, `defect q interval ${k}`]),
      ...[0, 1, 2, 3].map((k) => `path ring node ${k}`),
      "endpoint initial(p)",
      "endpoint final(q)",
      "endpoint mix",
    ]);
    expect([nlp.variableName!(-1), nlp.variableName!(nlp.n), nlp.constraintName!(nlp.m)]).toEqual(["x[-1]", `x[${nlp.n}]`, `g[${nlp.m}]`]);
  });

  it("spells Hermite–Simpson midpoints and defects", () => {
    const nlp = getScheme("hermite-simpson").transcribe(problem, { intervals: 2 }).nlp;
    const vars = Array.from({ length: nlp.n }, (_, i) => nlp.variableName!(i));
    expect(vars).toContain("p midpoint 1");
    expect(vars).toContain("b midpoint 0");
    const rows = Array.from({ length: nlp.m }, (_, j) => nlp.constraintName!(j));
    expect(rows).toContain("defect q Hermite interval 1");
    expect(rows).toContain("defect p Simpson interval 0");
    expect(rows).toContain("path ring midpoint 1");
  });
});

describe("assembly tables", () => {
  it("PairSlots numbers distinct pairs in order of first appearance, like a Map keyed by the pair", async () => {
    const { PairSlots } = await import("~/engine/schemes/assembly-spec");
    const r = rand(7);
    const slots = new PairSlots();
    const ref = new Map<string, number>();
    for (let k = 0; k < 20000; k++) {
      const a = Math.floor(r() * 300), b = Math.floor(r() * 300);
      const key = `${a},${b}`;
      if (!ref.has(key)) ref.set(key, ref.size);
      expect(slots.slot(a, b)).toBe(ref.get(key));
    }
    expect(slots.n).toBe(ref.size);
    for (const [key, s] of ref) {
      const [a, b] = key.split(",").map(Number);
      expect(slots.find(a, b)).toBe(s);
    }
    expect(slots.find(301, 0)).toBe(-1);
  });

  it("IntList and NumList hand out plain arrays and start again empty", async () => {
    const { IntList, NumList } = await import("~/engine/schemes/assembly-spec");
    const a = new IntList(), b = new NumList();
    for (let k = 0; k < 100000; k++) { a.push(k * 3); b.push(k / 7); }
    const ai = a.done(), bf = b.done();
    expect(ai.length).toBe(100000);
    expect(bf.length).toBe(100000);
    expect((ai.buffer as ArrayBuffer & { resizable?: boolean }).resizable).toBe(false);
    expect([ai[0], ai[99999], bf[70]]).toEqual([0, 299997, 10]);
    expect(a.n).toBe(0);
    a.push(5);
    expect(Array.from(a.done())).toEqual([5]);
  });

  it("a list that outgrows its reserved address space moves to a larger buffer and keeps every entry", async () => {
    const { IntList, NumList } = await import("~/engine/schemes/assembly-spec");
    // reserve 1 KB: 256 ints or 128 doubles; 5,000 entries outgrow it twice (1 KB → 4 KB → 16 KB → 64 KB)
    const a = new IntList(1024), b = new NumList(1024);
    for (let k = 0; k < 5000; k++) { a.push(7 * k - 3); b.push(k * 0.25); }
    const ai = a.done(), bf = b.done();
    expect(ai.length).toBe(5000);
    expect(Array.from(ai).every((v, k) => v === 7 * k - 3)).toBe(true);
    expect(Array.from(bf).every((v, k) => v === k * 0.25)).toBe(true);
  });
});
