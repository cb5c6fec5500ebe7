/**
 * Re-simulation check: does a discrete solution describe a real trajectory?
 *
 * Integrates ẋ = f(t, x, u(t)) from the solution's initial state with the solution's own control
 * interpolant (Solution.controlAt, as the scheme implies), segment by segment between the
 * solution's grid points (where the control may have kinks or jumps), with ODEX (odex.ts) at
 * rtol = 1e-10 and atol = 1e-10 · scale_i. Inside a segment [a, b] the control is evaluated at
 * times clamped to [a + ε(b−a), b − ε(b−a)], ε = 1e-12, so that a control held on [a, b)
 * is not replaced by the next value at the segment end.
 *
 * Reports
 *   finalMiss        = max_i |x_sim,i(tf) − x_sol,i(tf)| / scale_i          (scaled max norm)
 *   maxPathViolation = max over a fine grid of max_j max(c_lower,j − c_j, c_j − c_upper,j, 0)
 *                      with c evaluated on the simulated state and the interpolated control
 *                      (in the constraint's own units); 0 when there are no path constraints.
 */
import type { CompiledProblem } from "../problem/types";
import type { Solution } from "../schemes/types";
import { integrate } from "./odex";

export interface ResimResult {
  finalMiss: number;
  maxPathViolation: number;
  /** false when the integrator failed (then finalMiss is Infinity). */
  ok: boolean;
}

export interface ResimOptions {
  /** Minimum number of samples of the path constraints over the horizon. Default 400. */
  samples?: number;
  rtol?: number;
}

export function resimulate(problem: CompiledProblem, sol: Solution, options: ResimOptions = {}): ResimResult {
  const { nx, nu } = problem;
  const rtol = options.rtol ?? 1e-10;
  const atol = problem.states.map((s) => rtol * (s.scale > 0 ? s.scale : 1));
  // segment boundaries: union of state and control grids
  const grid = Array.from(new Set([...sol.t, ...sol.tu, sol.t0, sol.tf]))
    .filter((v) => v >= sol.t0 && v <= sol.tf)
    .sort((a, b) => a - b);
  const nSeg = grid.length - 1;
  const sub = Math.max(1, Math.ceil((options.samples ?? 400) / Math.max(nSeg, 1)));
  const z = new Float64Array(1 + nx + nu);
  const u = new Float64Array(nu);
  const fOut = new Float64Array(nx);
  const cOut = new Float64Array(problem.pathInfo.length);
  let segA = 0, segB = 0;
  const eps = 1e-12;
  const f = (t: number, y: number[]): number[] => {
    const tc = Math.min(Math.max(t, segA + eps * (segB - segA)), segB - eps * (segB - segA));
    sol.controlAt(tc, u);
    z[0] = t;
    for (let i = 0; i < nx; i++) z[1 + i] = y[i];
    for (let i = 0; i < nu; i++) z[1 + nx + i] = u[i];
    problem.dynamics.eval(z, fOut);
    return Array.from(fOut);
  };
  const pathViolation = (t: number, y: number[], tc: number): number => {
    if (problem.pathInfo.length === 0) return 0;
    sol.controlAt(tc, u);
    z[0] = t;
    for (let i = 0; i < nx; i++) z[1 + i] = y[i];
    for (let i = 0; i < nu; i++) z[1 + nx + i] = u[i];
    problem.path.eval(z, cOut);
    let v = 0;
    problem.pathInfo.forEach((info, j) => {
      v = Math.max(v, info.lower - cOut[j], cOut[j] - info.upper);
    });
    return Number.isFinite(v) ? Math.max(v, 0) : Infinity;
  };
  let y = sol.states.map((s) => s[0]);
  let maxPath = pathViolation(grid[0], y, grid[0] + eps * (grid[1] - grid[0]));
  let ok = true;
  for (let s = 0; s < nSeg && ok; s++) {
    segA = grid[s];
    segB = grid[s + 1];
    for (let q = 1; q <= sub; q++) {
      const ta = segA + ((q - 1) / sub) * (segB - segA);
      const tb = segA + (q / sub) * (segB - segA);
      const r = integrate(f, ta, y, tb, { rtol, atol });
      if (!r.ok) {
        ok = false;
        break;
      }
      y = r.y;
      maxPath = Math.max(maxPath, pathViolation(tb, y, Math.min(tb, segB - eps * (segB - segA))));
    }
  }
  if (!ok) return { finalMiss: Infinity, maxPathViolation: maxPath, ok: false };
  let miss = 0;
  const last = sol.t.length - 1;
  for (let i = 0; i < nx; i++) {
    const sc = problem.states[i].scale > 0 ? problem.states[i].scale : 1;
    miss = Math.max(miss, Math.abs(y[i] - sol.states[i][last]) / sc);
  }
  return { finalMiss: miss, maxPathViolation: maxPath, ok: true };
}
