/**
 * The Assembly's tables (assembly-build.ts) on a hand-built NLP whose values and derivatives are
 * written out by hand below (closed forms, not the code under test), with and without the NLP's
 * scales; and the builder-consistency errors, each naming what is wrong.
 *
 * The NLP: X ∈ ℝ³, fixed span T = 2, one point function F(z) = z² (F' = 2z, F'' = 2) at two sites:
 *   site 0 (time-scaled): z = 1 + 2 X₀ + X₁ =: u;   site 1: z = X₂.
 *   g₀ = 4 X₂ + 3 T u² = 4 X₂ + 6 u²,   g₁ = X₁ − X₂²,   f = ½ T u² = u².
 *   ∇g₀ = (24u, 12u, 4), ∇g₁ = (0, 1, −2 X₂), ∇f = (4u, 2u, 0);
 *   ∇²(σ f + λ₀ g₀ + λ₁ g₁) = 2 (σ + 6 λ₀) ∇u ∇uᵀ − 2 λ₁ e₂e₂ᵀ with ∇u = (2, 1, 0).
 */
import { describe, expect, it } from "vitest";
import { Assembly, AssemblyTables, type AssemblySpec } from "~/engine/schemes/assembly";
import type { PointFunction } from "~/engine/problem/types";

const square: PointFunction = {
  nIn: 1,
  nOut: 1,
  eval: (z, out) => void (out[0] = z[0] * z[0]),
  jacRows: Int32Array.from([0]),
  jacCols: Int32Array.from([0]),
  jac: (z, out) => void (out[0] = 2 * z[0]),
  hessRows: Int32Array.from([0]),
  hessCols: Int32Array.from([0]),
  hess: (_z, w, out) => void (out[0] = 2 * w[0]),
};

function tables(): AssemblyTables {
  const T = new AssemblyTables();
  const s0 = T.addSite(square, [{ c: 1, vars: [0, 1], coefs: [2, 1] }], true);
  const s1 = T.addSite(square, [{ c: 0, vars: [2], coefs: [1] }], false);
  T.term(s0, 0, 0, 3);
  T.term(s1, 0, 1, -1);
  T.term(s0, 0, -1, 0.5);
  T.linear(0, 2, 4);
  T.linear(1, 1, 1);
  return T;
}

function spec(T: AssemblyTables, varScale: number[], rowScale: number[], n = 3, m = 2): AssemblySpec {
  return {
    n, m, tables: T,
    xL: new Float64Array(n).fill(-10), xU: new Float64Array(n).fill(10),
    varScale: Float64Array.from(varScale), x0: Float64Array.from([0.1, 0.2, 0.3]),
    gL: new Float64Array(m), gU: new Float64Array(m), rowScale: Float64Array.from(rowScale),
    t0: 0, tfVar: -1, fixedSpan: 2,
  };
}

/** The closed forms above at physical X: g, J (dense 2×3), ∇f and the dense Hessian for σ, λ (physical). */
function closedForms(X: number[], sigma: number, lam: number[]) {
  const u = 1 + 2 * X[0] + X[1];
  const du = [2, 1, 0];
  const H = [0, 1, 2].map((p) => [0, 1, 2].map((q) => 2 * (sigma + 6 * lam[0]) * du[p] * du[q] - (p === 2 && q === 2 ? 2 * lam[1] : 0)));
  return {
    f: u * u,
    g: [4 * X[2] + 6 * u * u, X[1] - X[2] * X[2]],
    J: [[24 * u, 12 * u, 4], [0, 1, -2 * X[2]]],
    grad: [4 * u, 2 * u, 0],
    H,
  };
}

function close(a: number, b: number) {
  expect(Math.abs(a - b)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(b)));
}

describe("Assembly tables on a hand-written NLP", () => {
  for (const { label, d, rho } of [
    { label: "unit scales", d: [1, 1, 1], rho: [1, 1] },
    { label: "variable scales and automatic row scales", d: [2, 1, 0.5], rho: [0, 0] },
  ]) {
    it(`values, Jacobian, gradient and Hessian match the closed forms (${label})`, () => {
      const asm = new Assembly(spec(tables(), d, rho));
      // Automatic ρ_r = max_j |J_rj(x₀) d_j| clamped to [1e-6, 1e6]: at x₀ = (0.1, 0.2, 0.3), u = 1.4,
      // row 0: |(33.6, 16.8, 4) ⊙ d|, row 1: |(0, 1, −0.6) ⊙ d|.
      const x0 = [0.1, 0.2, 0.3];
      const J0 = closedForms(x0, 0, [0, 0]).J;
      const wantRho = rho.map((given, r) => (given > 0 ? given : Math.max(...J0[r].map((v, j) => Math.abs(v * d[j])))));
      wantRho.forEach((v, r) => close(asm.rowScale[r], v));

      const nlp = asm.nlp();
      const y = Float64Array.from([0.7, -0.4, 1.3]);
      const X = [...y].map((v, i) => v * d[i]);
      const sigma = 0.8, lamScaled = [1.5, -2.5];
      const lam = lamScaled.map((v, r) => v / wantRho[r]);
      const cf = closedForms(X, sigma, lam);

      close(nlp.f(y), cf.f);
      const g = new Float64Array(2);
      nlp.g(y, g);
      cf.g.forEach((v, r) => close(g[r], v / wantRho[r]));
      const grad = new Float64Array(3);
      nlp.gradF(y, grad);
      cf.grad.forEach((v, i) => close(grad[i], v * d[i]));

      const jv = new Float64Array(nlp.jacRows.length);
      nlp.jacValues(y, jv);
      const J = [[0, 0, 0], [0, 0, 0]];
      for (let k = 0; k < jv.length; k++) J[nlp.jacRows[k]][nlp.jacCols[k]] += jv[k];
      cf.J.forEach((row, r) => row.forEach((v, j) => close(J[r][j], (v * d[j]) / wantRho[r])));

      const hv = new Float64Array(nlp.hessRows.length);
      nlp.hessValues(y, sigma, Float64Array.from(lamScaled), hv);
      const H = [[0, 0, 0], [0, 0, 0], [0, 0, 0]];
      for (let k = 0; k < hv.length; k++) {
        expect(nlp.hessRows[k]).toBeGreaterThanOrEqual(nlp.hessCols[k]);
        H[nlp.hessRows[k]][nlp.hessCols[k]] += hv[k];
      }
      for (let p = 0; p < 3; p++) for (let q = 0; q <= p; q++) close(H[p][q], cf.H[p][q] * d[p] * d[q]);
    });
  }
});

describe("Assembly tables: inconsistent builder tables are refused with what is wrong", () => {
  const cases: Array<{ what: string; build: (T: AssemblyTables) => void; message: string }> = [
    { what: "a site never closed", build: (T) => { T.beginSite(square, false); T.input(0); T.inputVar(0, 1); }, message: "assembly: 1 sites opened, 0 closed" },
    { what: "a site with too many inputs", build: (T) => void T.addSite(square, [{ c: 0, vars: [0], coefs: [1] }, { c: 0, vars: [1], coefs: [1] }], false), message: "assembly: site 0 has 2 inputs, function needs 1" },
    { what: "an input outside the variables", build: (T) => void T.addSite(square, [{ c: 0, vars: [5], coefs: [1] }], false), message: "assembly: input refers to variable 5 outside 0..2" },
    { what: "a term on a missing site", build: (T) => { T.addSite(square, [{ c: 0, vars: [0], coefs: [1] }], false); T.term(4, 0, 0, 1); }, message: "assembly: term 0 refers to site 4 outside 0..0" },
    { what: "a term on a missing output", build: (T) => { T.addSite(square, [{ c: 0, vars: [0], coefs: [1] }], false); T.term(0, 1, 0, 1); }, message: "assembly: term 0 refers to output 1 of site 0" },
    { what: "a linear entry on a missing row", build: (T) => T.linear(2, 0, 1), message: "assembly: linear entry row 2 outside 0..1" },
    { what: "a linear entry on a missing variable", build: (T) => T.linear(0, -1, 1), message: "assembly: linear entry refers to variable -1 outside 0..2" },
  ];
  for (const { what, build, message } of cases) {
    it(what, () => {
      const T = new AssemblyTables();
      build(T);
      expect(() => new Assembly(spec(T, [1, 1, 1], [1, 1]))).toThrow(message);
    });
  }
});
