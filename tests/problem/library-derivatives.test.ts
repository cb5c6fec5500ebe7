/**
 * The compiled functions of every library problem (and of the fixtures) against central finite
 * differences at points along the initial guess: dynamics, path constraints, running and terminal
 * cost, endpoint rows; Jacobians from values, weighted Hessians from Jacobians.
 * D(h) = (F(z + h e_j) − F(z − h e_j))/(2h), h = 1e-6·(1 + |z_j|)·scale; tolerance
 * |D(h) − exact| ≤ 1e-5·(1 + |exact| + max|F|) + |D(2h) − D(h)| (Richardson estimate of the
 * truncation error; common practice, no source).
 */
import { describe, expect, it } from "vitest";
import { loadLibrary, loadProblem } from "~/engine/problem/load";
import type { CompiledProblem, PointFunction } from "~/engine/problem/types";

function checkFunction(name: string, f: PointFunction, z: Float64Array, w: Float64Array) {
  if (f.nOut === 0) return;
  const jac = new Float64Array(f.jacRows.length);
  f.jac(z, jac);
  const J = Array.from({ length: f.nOut }, () => new Float64Array(f.nIn));
  f.jacRows.forEach((r, k) => (J[r][f.jacCols[k]] = jac[k]));
  const v0 = new Float64Array(f.nOut);
  f.eval(z, v0);
  const mag = Math.max(...v0.map(Math.abs));
  const evalAt = (zz: Float64Array) => {
    const o = new Float64Array(f.nOut);
    f.eval(zz, o);
    return o;
  };
  const gradW = (zz: Float64Array) => {
    const jv = new Float64Array(f.jacRows.length);
    f.jac(zz, jv);
    const g = new Float64Array(f.nIn);
    f.jacRows.forEach((r, k) => (g[f.jacCols[k]] += w[r] * jv[k]));
    return g;
  };
  const hv = new Float64Array(f.hessRows.length);
  f.hess(z, w, hv);
  const H = Array.from({ length: f.nIn }, () => new Float64Array(f.nIn));
  f.hessRows.forEach((r, k) => {
    H[r][f.hessCols[k]] = hv[k];
    H[f.hessCols[k]][r] = hv[k];
  });
  const g0 = gradW(z);
  const gmag = Math.max(1, ...g0.map(Math.abs));
  const central = (fn: (zz: Float64Array) => Float64Array, j: number, h: number) => {
    const zp = Float64Array.from(z);
    const zm = Float64Array.from(z);
    zp[j] += h;
    zm[j] -= h;
    const a = fn(zp);
    const b = fn(zm);
    return a.map((x, i) => (x - b[i]) / (2 * h));
  };
  for (let j = 0; j < f.nIn; j++) {
    const h = 1e-6 * (1 + Math.abs(z[j]));
    const d1 = central(evalAt, j, h);
    const d2 = central(evalAt, j, 2 * h);
    for (let i = 0; i < f.nOut; i++) {
      const tol = 1e-5 * (1 + Math.abs(J[i][j]) + mag) + Math.abs(d2[i] - d1[i]);
      expect(Math.abs(d1[i] - J[i][j]), `${name}: ∂out${i}/∂z${j}`).toBeLessThanOrEqual(tol);
    }
    const e1 = central(gradW, j, h);
    const e2 = central(gradW, j, 2 * h);
    for (let r = 0; r < f.nIn; r++) {
      const tol = 1e-5 * (1 + Math.abs(H[r][j]) + gmag) + Math.abs(e2[r] - e1[r]);
      expect(Math.abs(e1[r] - H[r][j]), `${name}: H[${r}][${j}]`).toBeLessThanOrEqual(tol);
    }
  }
}

function checkProblem(p: CompiledProblem) {
  const g = new Float64Array(p.nx + p.nu);
  const tf = p.guess.tf;
  const t0 = p.horizon.t0;
  for (const tau of [0.13, 0.5, 0.91]) {
    p.guess.at(tau, g);
    // nudge off exact zeros and bounds so that sqrt/abs are evaluated at generic points
    const z = Float64Array.from([t0 + tau * (tf - t0), ...g], (v, k) => v + 1e-3 * (k + 1) * (1 + Math.abs(v)));
    const w = Float64Array.from({ length: Math.max(p.nx, p.path.nOut, 1) }, (_, i) => 0.7 - 0.3 * i);
    checkFunction(`${p.id} dynamics τ=${tau}`, p.dynamics, z, w);
    checkFunction(`${p.id} path τ=${tau}`, p.path, z, w);
    if (p.runningCost) checkFunction(`${p.id} running cost`, p.runningCost, z, Float64Array.of(1.3));
  }
  const x0 = new Float64Array(p.nx + p.nu);
  const x1 = new Float64Array(p.nx + p.nu);
  p.guess.at(0, x0);
  p.guess.at(1, x1);
  const e = Float64Array.from([t0, ...x0.subarray(0, p.nx), tf, ...x1.subarray(0, p.nx)], (v, k) => v + 1e-3 * (k + 1) * (1 + Math.abs(v)));
  checkFunction(`${p.id} endpoint`, p.endpoint, e, Float64Array.from({ length: p.endpoint.nOut }, (_, i) => 1 - 0.1 * i));
  if (p.terminalCost) checkFunction(`${p.id} terminal cost`, p.terminalCost, e, Float64Array.of(0.8));
}

describe("compiled derivatives of real problems", () => {
  it("every library problem and the Plover-1 fixture", () => {
    const { problems } = loadLibrary("problems");
    const plover = loadProblem("tests/fixtures/problems/plover-ascent");
    if (!plover.ok) throw new Error("fixture");
    expect(problems.length).toBeGreaterThanOrEqual(1);
    for (const p of [...problems, plover.problem]) checkProblem(p);
  });
});
