/**
 * Limited-memory Hessian (app/engine/nlp/lbfgs.ts) against independent dense computations:
 * the compact representation must equal the recursive BFGS update (Nocedal and Wright,
 * Numerical Optimization, 2nd ed., 2006, eq. (6.19)) from B₀ = σ I with the same pairs, and the
 * Sherman–Morrison–Woodbury KKT solve must equal a dense ml-matrix solve of
 * [[B + Σ, Jᵀ], [J, 0]]. Tolerances 1e-10 relative.
 */
import { describe, it, expect } from "vitest";
import { Matrix, solve as denseSolve } from "ml-matrix";
import { LimitedMemoryHessian } from "~/engine/nlp/lbfgs";
import { KktSystem } from "~/engine/nlp/kkt";
import { SymmetricSolver } from "~/engine/sparse";

function rng(seed: number) {
  let s = seed >>> 0;
  return () => ((s = (1664525 * s + 1013904223) >>> 0) / 2 ** 32) * 2 - 1;
}

describe("limited-memory BFGS", () => {
  const n = 7;
  const r = rng(11);
  // A: symmetric with eigenvalues in [1, 2] (y = A s gives sᵀy ≥ |s|², no damping needed).
  const Q = new Matrix(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) Q.set(i, j, r());
  const qr = Q.transpose().mmul(Q);
  const A = Matrix.eye(n).add(qr.div(qr.norm("frobenius")));
  const pairs: { s: Float64Array; y: Float64Array }[] = [];
  for (let k = 0; k < 3; k++) {
    const s = Float64Array.from({ length: n }, () => r());
    const y = Float64Array.from(A.mmul(Matrix.columnVector(Array.from(s))).to1DArray());
    pairs.push({ s, y });
  }
  const qn = new LimitedMemoryHessian(n, 5, n + 2);
  for (const p of pairs) expect(qn.update(p.s, p.y)).toBe(true);

  it("compact form equals the recursive BFGS update from σI", () => {
    let B = Matrix.eye(n).mul(qn.sigma);
    for (const { s, y } of pairs) {
      const sv = Matrix.columnVector(Array.from(s)), yv = Matrix.columnVector(Array.from(y));
      const Bs = B.mmul(sv);
      const sBs = sv.transpose().mmul(Bs).get(0, 0), sy = sv.transpose().mmul(yv).get(0, 0);
      expect(sy).toBeGreaterThan(0.2 * sBs); // undamped
      B = B.sub(Bs.mmul(Bs.transpose()).div(sBs)).add(yv.mmul(yv.transpose()).div(sy));
    }
    const out = new Float64Array(n);
    for (let j = 0; j < n; j++) {
      const e = new Float64Array(n); e[j] = 1;
      qn.times(e, out);
      for (let i = 0; i < n; i++) expect(Math.abs(out[i] - B.get(i, j))).toBeLessThan(1e-10 * Math.max(1, Math.abs(B.get(i, j))));
    }
  });

  it("SMW solve of the KKT system equals a dense solve with B", () => {
    const m = 2, K = n + m;
    const jR = Int32Array.from([0, 0, 0, 1, 1]), jC = Int32Array.from([0, 3, 5, 1, 6]), jV = Float64Array.from([1, 2, -1, 0.5, 3]);
    const kkt = new KktSystem(n, m, new Int32Array(0), new Int32Array(0), jR, jC, (nn, rr, cc, sg) => new SymmetricSolver(nn, rr, cc, { signs: sg }));
    const diag = Float64Array.from({ length: n }, () => 0.5 + Math.abs(r()));
    const d0 = Float64Array.from(diag);
    qn.addDiagonal(d0);
    const inertia = kkt.factor(null, d0, 0, jV, 0);
    expect(inertia.ok).toBe(true);
    const work = new Float64Array(K);
    const solve0 = (b: Float64Array, x: Float64Array) => kkt.solve(b, x);
    qn.prepare(solve0, work);
    const b = Float64Array.from({ length: K }, () => r());
    const x = new Float64Array(K);
    qn.solve(solve0, b, x);
    // dense reference
    const D = Matrix.zeros(K, K);
    const col = new Float64Array(n);
    for (let j = 0; j < n; j++) {
      const e = new Float64Array(n); e[j] = 1;
      qn.times(e, col);
      for (let i = 0; i < n; i++) D.set(i, j, col[i]);
      D.set(j, j, D.get(j, j) + diag[j]);
    }
    for (let k = 0; k < jR.length; k++) { D.set(n + jR[k], jC[k], jV[k]); D.set(jC[k], n + jR[k], jV[k]); }
    const xd = denseSolve(D, Matrix.columnVector(Array.from(b))).to1DArray();
    for (let i = 0; i < K; i++) expect(Math.abs(x[i] - xd[i])).toBeLessThan(1e-10 * Math.max(1, Math.abs(xd[i])));
  });
});
