/**
 * The strategies of the interior-point method one by one, against outside references:
 * dense ml-matrix eigenvalues and solves, brute force, and the formulas of Wächter and Biegler,
 * Math. Programming 106, 2006 (equation numbers beside each case).
 */
import { describe, it, expect } from "vitest";
import { Matrix, EigenvalueDecomposition, solve as denseSolve } from "ml-matrix";
import { SymmetricSolver } from "~/engine/sparse";
import { KktSystem } from "~/engine/nlp/kkt";
import { InertiaCorrection } from "~/engine/nlp/inertia-correction";
import { fractionToBoundary, alphaMin, switchingCondition } from "~/engine/nlp/line-search";
import { Filter } from "~/engine/nlp/filter";
import { nextMu, tauOf } from "~/engine/nlp/barrier";
import { resetBoundMultipliers } from "~/engine/nlp/bound-multipliers";
import { kktError } from "~/engine/nlp/convergence";
import { NlpReformulation } from "~/engine/nlp/reformulation";
import { runRestoration } from "~/engine/nlp/restoration";
import { resolveOptions } from "~/engine/nlp/options";
import { pushInsideBounds } from "~/engine/nlp/initial-point";
import { solveNlp } from "~/engine/nlp";
import { makeProblem, derivativeMismatch } from "./helpers/dense-problem";
import { HS } from "./helpers/hock-schittkowski";
import { pendulumProblem } from "../../bench/nlp-banded.bench";

function rng(seed: number) {
  let s = seed >>> 0;
  return () => ((s = (1664525 * s + 1013904223) >>> 0) / 2 ** 32) * 2 - 1;
}
const factory = (n: number, r: Int32Array, c: Int32Array) => new SymmetricSolver(n, r, c, { pivotTolerance: 1e-20 });

/** Random sparse KKT data: H (N×N, lower triplets, indefinite), J (m×N). */
function randomKkt(N: number, m: number, seed: number) {
  const r = rng(seed);
  const hR: number[] = [], hC: number[] = [], hV: number[] = [];
  for (let i = 0; i < N; i++) { hR.push(i); hC.push(i); hV.push(3 * r()); if (i > 0) { hR.push(i); hC.push(i - 1); hV.push(r()); } }
  const jR: number[] = [], jC: number[] = [], jV: number[] = [];
  for (let j = 0; j < m; j++) for (const c of [j, (j + 2) % N, (3 * j + 1) % N]) { jR.push(j); jC.push(c); jV.push(1 + r()); }
  return { hR: Int32Array.from(hR), hC: Int32Array.from(hC), hV: Float64Array.from(hV), jR: Int32Array.from(jR), jC: Int32Array.from(jC), jV: Float64Array.from(jV) };
}
function denseKkt(N: number, m: number, d: ReturnType<typeof randomKkt>, diag: Float64Array, dw: number, dc: number): Matrix {
  const A = Matrix.zeros(N + m, N + m);
  const add = (i: number, j: number, v: number) => { A.set(i, j, A.get(i, j) + v); if (i !== j) A.set(j, i, A.get(j, i) + v); };
  for (let k = 0; k < d.hR.length; k++) add(d.hR[k], d.hC[k], d.hV[k]);
  for (let i = 0; i < N; i++) add(i, i, diag[i] + dw);
  for (let k = 0; k < d.jR.length; k++) add(N + d.jR[k], d.jC[k], d.jV[k]);
  for (let j = 0; j < m; j++) add(N + j, N + j, -dc);
  return A;
}

describe("KKT system and inertia correction (Algorithm IC, §3.1)", () => {
  for (const seed of [1, 2, 3, 4, 5]) {
    it(`random indefinite Hessian (seed ${seed}): regularised matrix has inertia (N, m, 0) by dense eigenvalues; solve matches dense LU to 1e-9`, () => {
      const N = 30, m = 12;
      const d = randomKkt(N, m, seed);
      const kkt = new KktSystem(N, m, d.hR, d.hC, d.jR, d.jC, factory);
      const diag = new Float64Array(N).fill(0.1);
      const ic = new InertiaCorrection();
      const res = ic.factorize(kkt, d.hV, diag, d.jV, 0.1);
      expect(res.ok).toBe(true);
      const A = denseKkt(N, m, d, diag, res.deltaW, res.deltaC);
      const ev = new EigenvalueDecomposition(A).realEigenvalues;
      expect(ev.filter((v) => v > 0).length).toBe(N);
      expect(ev.filter((v) => v < 0).length).toBe(m);
      // Smallest δ_w in the IC sequence: the previous trial value would not have worked
      // (checked with dense eigenvalues, up to the factor κ̄_w⁺ = 100 of IC-5).
      if (res.deltaW > 1e-4) {
        const prev = denseKkt(N, m, d, diag, res.deltaW / 100, res.deltaC);
        const ev2 = new EigenvalueDecomposition(prev).realEigenvalues;
        expect(ev2.filter((v) => v < 0).length).toBeGreaterThan(m);
      }
      const r = rng(seed + 100);
      const b = Float64Array.from({ length: N + m }, () => r());
      const x = new Float64Array(N + m);
      kkt.solve(b, x);
      const xd = denseSolve(A, Matrix.columnVector(Array.from(b))).to1DArray();
      for (let i = 0; i < N + m; i++) expect(Math.abs(x[i] - xd[i])).toBeLessThan(1e-9 * Math.max(1, Math.abs(xd[i])));
    });
  }

  it("with the default solver (signs, 2×2 pairs): values summed straight into the factor's storage after the first factor solve as dense LU", () => {
    const N = 30, m = 12;
    const d = randomKkt(N, m, 11);
    const pairsFactory = (n: number, r: Int32Array, c: Int32Array, signs?: Int8Array) => new SymmetricSolver(n, r, c, { pivotTolerance: 1e-20, signs, pairs: true });
    const kkt = new KktSystem(N, m, d.hR, d.hC, d.jR, d.jC, pairsFactory);
    expect(kkt.solver.assembly!()).toBeNull(); // the pairing reads the first values
    const rr = rng(12);
    for (const [dw, dc] of [[1, 0.5], [2, 1e-3], [5, 0]] as const) {
      const diag = Float64Array.from({ length: N }, () => 0.5 + Math.abs(rr()));
      const inertia = kkt.factor(d.hV, diag, dw, d.jV, dc);
      expect(kkt.solver.assembly!()).not.toBeNull();
      const A = denseKkt(N, m, d, diag, dw, dc);
      const ev = new EigenvalueDecomposition(A).realEigenvalues;
      expect(inertia.positive).toBe(ev.filter((v) => v > 0).length);
      expect(inertia.negative).toBe(ev.filter((v) => v < 0).length);
      const b = Float64Array.from({ length: N + m }, () => rr());
      const x = new Float64Array(N + m);
      kkt.solve(b, x);
      const xd = denseSolve(A, Matrix.columnVector(Array.from(b))).to1DArray();
      for (let i = 0; i < N + m; i++) expect(Math.abs(x[i] - xd[i])).toBeLessThan(1e-9 * Math.max(1, Math.abs(xd[i])));
    }
  });

  it("refactor (a retry with other shifts) gives the matrix factor gives, to the bit, W's duplicated diagonal entries included", () => {
    const N = 30, m = 12;
    const d = randomKkt(N, m, 21);
    // a second triplet on three diagonal entries of W: the slot sums both before Σ + δ_w
    const hR = Int32Array.from([...d.hR, 4, 9, 17]), hC = Int32Array.from([...d.hC, 4, 9, 17]), hV = Float64Array.from([...d.hV, 0.25, -1.5, 2]);
    const dd = { ...d, hR, hC, hV };
    const pairsFactory = (n: number, r: Int32Array, c: Int32Array, signs?: Int8Array) => new SymmetricSolver(n, r, c, { pivotTolerance: 1e-20, signs, pairs: true });
    const rr = rng(22);
    const diag = Float64Array.from({ length: N }, () => 0.5 + Math.abs(rr()));
    const b = Float64Array.from({ length: N + m }, () => rr());
    const retried = new KktSystem(N, m, hR, hC, d.jR, d.jC, pairsFactory);
    retried.factor(hV, diag, 0, d.jV, 0); // analysis on these values, triplet path
    retried.factor(hV, diag, 0.3, d.jV, 0); // direct assembly from here on
    for (const [dw, dc] of [[1e-4, 0], [7, 1e-3], [0, 0.25], [2.5, 0]] as const) {
      const a = retried.refactor(dw, dc);
      const x = new Float64Array(N + m);
      retried.solve(b, x);
      const fresh = new KktSystem(N, m, hR, hC, d.jR, d.jC, pairsFactory);
      fresh.factor(hV, diag, 0, d.jV, 0);
      const f = fresh.factor(hV, diag, dw, d.jV, dc);
      const y = new Float64Array(N + m);
      fresh.solve(b, y);
      expect(a).toEqual(f);
      expect(Array.from(x)).toEqual(Array.from(y));
      // and the dense matrix with these shifts (ml-matrix LU)
      const xd = denseSolve(denseKkt(N, m, dd, diag, dw, dc), Matrix.columnVector(Array.from(b))).to1DArray();
      for (let i = 0; i < N + m; i++) expect(Math.abs(x[i] - xd[i])).toBeLessThan(1e-8 * Math.max(1, Math.abs(xd[i])));
    }
    expect(() => new KktSystem(N, m, hR, hC, d.jR, d.jC, factory).refactor(0, 0)).toThrow("no factor() before");
  });

  it("positive definite Hessian needs no δ_w", () => {
    const N = 10, m = 4;
    const d = randomKkt(N, m, 9);
    for (let k = 0; k < d.hV.length; k++) d.hV[k] = d.hR[k] === d.hC[k] ? 5 : 0.5;
    const kkt = new KktSystem(N, m, d.hR, d.hC, d.jR, d.jC, factory);
    const res = new InertiaCorrection().factorize(kkt, d.hV, new Float64Array(N), d.jV, 0.1);
    expect(res.ok).toBe(true);
    expect(res.deltaW).toBe(0);
  });
});

describe("fraction-to-the-boundary rule, eq. (15)", () => {
  it("agrees with a brute-force scan of α over [0, 1]", () => {
    const r = rng(7);
    for (let trial = 0; trial < 20; trial++) {
      const n = 8, tau = 0.99;
      const v = Float64Array.from({ length: n }, () => 0.1 + Math.abs(r()));
      const d = Float64Array.from({ length: n }, () => 3 * r());
      const has = Uint8Array.from({ length: n }, () => (r() > -0.5 ? 1 : 0));
      const a = fractionToBoundary(tau, v, d, 1, has, 1);
      const feasible = (al: number) => v.every((vi, i) => !has[i] || vi + al * d[i] >= (1 - tau) * vi - 1e-15);
      expect(feasible(a)).toBe(true);
      if (a < 1) expect(feasible(a * (1 + 1e-9) + 1e-12)).toBe(false);
    }
  });
});

describe("filter (§2.3) and step acceptance formulas", () => {
  it("rejects dominated points and drops entries dominated by a new one", () => {
    const F = new Filter();
    F.reset(100);
    expect(F.isAcceptable(150, -1e30)).toBe(false); // θ ≥ θ_max
    F.add(1, 10);
    expect(F.isAcceptable(2, 11)).toBe(false);
    expect(F.isAcceptable(0.5, 11)).toBe(true);
    expect(F.isAcceptable(2, 9)).toBe(true);
    F.add(0.5, 5); // dominates (1, 10)
    expect(F.size).toBe(2);
  });
  it("switching condition (19) and α_min (23) follow their formulas", () => {
    // (19): α (−∇φᵀd)^{s_φ} > δ θ^{s_θ}, s_φ = 2.3, s_θ = 1.1, δ = 1
    expect(switchingCondition(1, 0.1, -1)).toBe(1 > 0.1 ** 1.1);
    expect(switchingCondition(0.01, 1, -1)).toBe(false);
    expect(switchingCondition(1, 0, 0.5)).toBe(false);
    // (23) with θ ≤ θ_min: γ_α min(γ_θ, γ_φ θ / (−∇φᵀd), δ θ^{s_θ} / (−∇φᵀd)^{s_φ})
    const th = 1e-3, g = -2;
    expect(alphaMin(th, g, 1)).toBeCloseTo(0.05 * Math.min(1e-5, (1e-8 * th) / 2, th ** 1.1 / 2 ** 2.3), 20);
    expect(alphaMin(th, 1, 1)).toBeCloseTo(0.05 * 1e-5, 20);
  });
});

describe("barrier update eq. (7)-(8), z reset eq. (16), optimality error eq. (5)", () => {
  it("μ⁺ = max(ε/10, min(κ_μ μ, μ^θ_μ)) with κ_μ = 0.2, θ_μ = 1.5; τ = max(0.99, 1 − μ)", () => {
    expect(nextMu(0.1, 1e-8)).toBeCloseTo(0.02, 15); // min(0.02, 0.0316)
    expect(nextMu(1e-3, 1e-8)).toBeCloseTo(1e-3 ** 1.5, 15);
    expect(nextMu(1e-9, 1e-8)).toBe(1e-9);
    expect(tauOf(0.1)).toBe(0.99);
    expect(tauOf(1e-4)).toBeCloseTo(1 - 1e-4, 15);
  });
  it("z stays within [μ/(κ_Σ s), κ_Σ μ/s]", () => {
    const s = Float64Array.from([1e-3, 1, 2]);
    const z = Float64Array.from([1e12, 1e-20, 0.5]);
    const has = Uint8Array.from([1, 1, 1]);
    const zu = new Float64Array(3);
    resetBoundMultipliers(0.1, s, s, has, new Uint8Array(3), z, zu);
    expect(z[0]).toBeCloseTo((1e10 * 0.1) / 1e-3, 0);
    expect(z[1]).toBeCloseTo(0.1 / 1e10, 20);
    expect(z[2]).toBe(0.5);
  });
  it("E_μ scales the dual error by s_d when multipliers are large", () => {
    const gradL = Float64Array.from([1e3]), c = Float64Array.from([0]);
    const one = Uint8Array.from([1]);
    const e = kktError(gradL, c, Float64Array.from([1]), Float64Array.from([1]), one, new Uint8Array(1), Float64Array.from([1e4]), Float64Array.from([2e4]), new Float64Array(1), 0);
    // s_d = max(100, (1e4 + 2e4)/2)/100 = 150, s_c = max(100, 2e4)/100 = 200
    expect(e.sd).toBeCloseTo(150, 12);
    expect(e.sc).toBeCloseTo(200, 12);
    expect(e.E).toBeCloseTo(Math.max(1e3 / 150, 2e4 / 200), 10);
  });
  it("bound push of §3.6: κ₁ max(1,|x_L|) and κ₂ (x_U − x_L)", () => {
    const w = Float64Array.from([0, 0, 10, 5]);
    pushInsideBounds(w, Float64Array.from([0, -Infinity, 0, 4.99]), Float64Array.from([Infinity, 1e-3, 10, 5]));
    expect(w[0]).toBeCloseTo(1e-2, 15);
    expect(w[1]).toBeCloseTo(1e-3 - 1e-2, 15);
    expect(w[2]).toBeCloseTo(10 - 1e-1, 12);
    expect(w[3]).toBeCloseTo(5 - 1e-2 * 0.01, 12);
  });
});

describe("feasibility restoration phase (§3.3)", () => {
  for (const name of ["HS71", "HS39", "HS7", "HS40"]) {
    it(`${name}: from x₀ it returns a point with θ ≤ 0.9 θ(x₀) acceptable to the filter`, () => {
      const spec = HS.find((s) => s.name === name)!;
      const ref = new NlpReformulation(makeProblem(spec), 1e-8, 100);
      const w = new Float64Array(ref.N);
      ref.initialW(w);
      pushInsideBounds(w, ref.wL, ref.wU);
      const hasL = Uint8Array.from(ref.wL, (v) => (Number.isFinite(v) ? 1 : 0));
      const hasU = Uint8Array.from(ref.wU, (v) => (Number.isFinite(v) ? 1 : 0));
      const c = new Float64Array(ref.m);
      ref.c(w, c);
      const theta0 = c.reduce((a, b) => a + Math.abs(b), 0);
      expect(theta0).toBeGreaterThan(0);
      const F = new Filter();
      F.reset(1e4 * Math.max(1, theta0));
      F.add((1 - 1e-5) * theta0, -Infinity); // the iterate itself, as step A-9 adds it
      const st = { w, lambda: new Float64Array(ref.m), zL: Float64Array.from(hasL), zU: Float64Array.from(hasU), mu: 0.1 };
      const ctx = { opts: resolveOptions({}), factory, log: [], iter: 0, t0: performance.now(), factorMs: 0, factorizations: 0 };
      const out = runRestoration(ref, st, ctx, F, hasL, hasU);
      expect(out.status, out.message).toBe("returned");
      ref.c(st.w, c);
      const theta1 = c.reduce((a, b) => a + Math.abs(b), 0);
      expect(theta1).toBeLessThanOrEqual(0.9 * theta0);
      expect(ctx.log.every((r: { phase: string }) => r.phase === "restoration")).toBe(true);
      for (let i = 0; i < ref.N; i++) {
        if (hasL[i]) expect(st.w[i]).toBeGreaterThan(ref.wL[i]);
        if (hasU[i]) expect(st.w[i]).toBeLessThan(ref.wU[i]);
      }
    });
  }
});

describe("gradient-based scaling (§3.8)", () => {
  it("HS71 with the objective multiplied by 1e6 reaches the same point", () => {
    const spec = HS.find((s) => s.name === "HS71")!;
    const p = makeProblem(spec);
    const big = { ...p, f: (x: Float64Array) => 1e6 * p.f(x), gradF: (x: Float64Array, o: Float64Array) => { p.gradF(x, o); for (let i = 0; i < o.length; i++) o[i] *= 1e6; },
      hessValues: (x: Float64Array, s: number, l: Float64Array, o: Float64Array) => p.hessValues(x, 1e6 * s, l, o) };
    const ref = new NlpReformulation(big, 0, 100);
    const g0 = new Float64Array(4);
    spec.grad(p.x0, g0);
    expect(ref.df).toBeCloseTo(100 / (1e6 * Math.max(...g0.map(Math.abs))), 15);
    const a = solveNlp(p), b = solveNlp(big);
    // The unscaled complementarity test (complInfTol on z/d_f) can keep a 1e6-scaled objective
    // from "optimal" at the smallest μ; "acceptable" is then the honest end.
    expect(["optimal", "acceptable"], b.message).toContain(b.status);
    for (let i = 0; i < 4; i++) expect(Math.abs(a.x[i] - b.x[i])).toBeLessThan(1e-6);
    expect(Math.abs(b.f / 1e6 - spec.fStar)).toBeLessThan(1e-6 * spec.fStar);
  });
});

describe("banded transcription of the benchmark", () => {
  const spec = (N: number) => {
    const p = pendulumProblem(N);
    return { p, dense: { name: "pendulum", n: p.n, m: p.m, x0: [], gL: [], gU: [], fStar: NaN, source: "",
      f: p.f, grad: p.gradF, g: p.g,
      jac: (x: Float64Array, add: (r: number, c: number, v: number) => void) => { const v = new Float64Array(p.jacRows.length); p.jacValues(x, v); for (let k = 0; k < v.length; k++) add(p.jacRows[k], p.jacCols[k], v[k]); },
      hess: (x: Float64Array, s: number, l: Float64Array, add: (i: number, j: number, v: number) => void) => { const v = new Float64Array(p.hessRows.length); p.hessValues(x, s, l, v); for (let k = 0; k < v.length; k++) add(p.hessRows[k], p.hessCols[k], v[k]); },
    } };
  };
  it("hand-written derivatives agree with finite differences (1e-5 relative)", () => {
    const { p, dense } = spec(6);
    const r = rng(3);
    const x = Float64Array.from(p.x0, (v) => v + 0.3 * r());
    const e = derivativeMismatch(dense, x, 0.7, Float64Array.from({ length: p.m }, () => r()));
    expect(e.grad).toBeLessThan(1e-5);
    expect(e.jac).toBeLessThan(1e-5);
    expect(e.hess).toBeLessThan(1e-5);
  });
  it("exact and limited-memory Hessians reach the same optimum (1e-5 relative), controls within bounds", () => {
    const { p } = spec(40);
    const a = solveNlp(p);
    const b = solveNlp(pendulumProblem(40), { hessian: "limited-memory", maxIter: 500 });
    expect(a.status).toBe("optimal");
    expect(["optimal", "acceptable"]).toContain(b.status);
    expect(Math.abs(a.f - b.f)).toBeLessThan(1e-5 * Math.abs(a.f));
    for (let k = 0; k <= 40; k++) expect(Math.abs(a.x[3 * k + 2])).toBeLessThanOrEqual(0.6 + 1e-7);
    expect(a.x[0]).toBe(2); // fixed initial angle kept exactly
  });
});
