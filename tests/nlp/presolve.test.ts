/**
 * Presolve of linear singleton equality rows (reformulation.ts, presolveSingletons): only rows
 * that are verifiably linear in one variable are turned into fixed variables, the answer is the
 * same as without presolve (1e-7), and multipliers satisfy stationarity (1e-6).
 */
import { describe, it, expect } from "vitest";
import { solveNlp, type NlpProblem } from "~/engine/nlp";
import { NlpReformulation } from "~/engine/nlp/reformulation";
import { makeProblem, type DenseSpec } from "./helpers/dense-problem";
import { HS } from "./helpers/hock-schittkowski";

const hs42 = HS.find((s) => s.name === "HS42")!;

function stationarity(spec: DenseSpec, x: Float64Array, lambda: Float64Array, zL: Float64Array, zU: Float64Array): number {
  const r = new Float64Array(spec.n);
  spec.grad(x, r);
  spec.jac(x, (row, c, v) => { r[c] += lambda[row] * v; });
  let e = 0;
  for (let i = 0; i < spec.n; i++) e = Math.max(e, Math.abs(r[i] - zL[i] + zU[i]));
  return e;
}

describe("singleton presolve", () => {
  it("HS42: the row x1 − 2 = 0 is presolved; same solution and multipliers as without", () => {
    const ref = new NlpReformulation(makeProblem(hs42), 1e-8, 100);
    expect(Array.from(ref.singletonOf)).toEqual([0, -1]);
    expect(ref.m).toBe(1);
    const a = solveNlp(makeProblem(hs42)), b = solveNlp(makeProblem(hs42), { presolveSingletons: false });
    expect(a.status).toBe("optimal");
    expect(b.status).toBe("optimal");
    for (let i = 0; i < 4; i++) expect(Math.abs(a.x[i] - b.x[i])).toBeLessThan(1e-7);
    for (let j = 0; j < 2; j++) expect(Math.abs(a.lambda[j] - b.lambda[j])).toBeLessThan(1e-6 * Math.max(1, Math.abs(b.lambda[j])));
    expect(stationarity(hs42, a.x, a.lambda, a.zL, a.zU)).toBeLessThan(1e-6);
    expect(a.x[0]).toBeCloseTo(2, 12); // fixed exactly by the presolve
    expect(a.g[0]).toBeCloseTo(0, 12);
  });

  it("a nonlinear singleton x1² = 4 is not presolved", () => {
    const spec: DenseSpec = {
      ...hs42, name: "HS42sq",
      g: (x, o) => { o[0] = x[0] ** 2; o[1] = x[2] ** 2 + x[3] ** 2 - 2; },
      gL: [4, 0], gU: [4, 0],
      jac: (x, a) => { a(0, 0, 2 * x[0]); a(1, 2, 2 * x[2]); a(1, 3, 2 * x[3]); },
      hess: (x, s, l, a) => { hs42.hess(x, s, l, a); a(0, 0, 2 * l[0]); },
    };
    const ref = new NlpReformulation(makeProblem(spec), 1e-8, 100);
    expect(ref.singletonOf[0]).toBe(-1);
    const r = solveNlp(makeProblem(spec));
    expect(r.status).toBe("optimal");
    expect(Math.abs(r.x[0] - 2)).toBeLessThan(1e-7); // x1 = 2 (from x₀ = 1 > 0), f as HS42
    expect(Math.abs(r.f - hs42.fStar)).toBeLessThan(1e-6 * hs42.fStar);
  });

  it("a singleton whose value violates the variable's bound stays a row, and the problem is infeasible", () => {
    const p = makeProblem(hs42);
    p.xU[0] = 1.5; // x1 = 2 is then impossible
    const ref = new NlpReformulation(p, 1e-8, 100);
    expect(ref.singletonOf[0]).toBe(-1);
    const r = solveNlp(p);
    expect(r.status, r.message).toBe("infeasible");
  });

  it("a row left with fixed variables only is checked once: violated means infeasible", () => {
    // min (x1 − 1)² + (x2 − 1)² s.t. x1 = 2 with x1 fixed at 3 by its bounds (sparse pattern).
    const p: NlpProblem = {
      n: 2, m: 1, x0: Float64Array.from([3, 0]), xL: Float64Array.from([3, -Infinity]), xU: Float64Array.from([3, Infinity]),
      gL: Float64Array.from([2]), gU: Float64Array.from([2]),
      jacRows: Int32Array.from([0]), jacCols: Int32Array.from([0]), hessRows: Int32Array.from([0, 1]), hessCols: Int32Array.from([0, 1]),
      f: (x) => (x[0] - 1) ** 2 + (x[1] - 1) ** 2,
      gradF: (x, o) => { o[0] = 2 * (x[0] - 1); o[1] = 2 * (x[1] - 1); },
      g: (x, o) => { o[0] = x[0]; },
      jacValues: (_x, o) => { o[0] = 1; },
      hessValues: (_x, s, _l, o) => { o[0] = 2 * s; o[1] = 2 * s; },
    };
    const r = solveNlp(p);
    expect(r.status).toBe("infeasible");
    expect(r.message).toContain("g[0]");
    expect(r.iterations).toBe(0);
  });
});
