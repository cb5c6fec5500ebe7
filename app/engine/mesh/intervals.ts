/**
 * The mesh intervals of a discrete solution in time, and the polynomial state piece on each.
 *
 * Breakpoints: t_k = t0 + τ_k (tf − t0) with τ_k the mesh's breakpoints on [0, 1] (builder.ts,
 * meshBreakpoints), k = 0..N. Every scheme's state is a polynomial on each interval (degree 1 Euler,
 * 2 trapezoidal, 3 Hermite–Simpson and RK4 shooting, K_s LGR), so sampling Solution.stateAt at
 * `degree + 2` Chebyshev points recovers it exactly and gives its derivative (chebyshev.ts).
 */
import type { CompiledProblem } from "../problem/types";
import type { Mesh, SchemeId, Solution } from "../schemes/types";
import { meshBreakpoints } from "../schemes/builder";
import { lgrDegrees } from "../schemes/lgr";
import { chebyshevAt, chebyshevCoefficients, chebyshevDerivative, chebyshevPoints } from "./chebyshev";

/** Polynomial degree of the state on each mesh interval, as the scheme's interpolant implies. */
export function stateDegrees(scheme: SchemeId, mesh: Mesh): number[] {
  if (scheme === "lgr") return lgrDegrees(mesh);
  const d = scheme === "euler" ? 1 : scheme === "trapezoidal" ? 2 : 3;
  return new Array<number>(mesh.intervals).fill(d);
}

/** Mesh breakpoints in time, t_k = t0 + τ_k (tf − t0), length N + 1. */
export function intervalTimes(sol: Solution, mesh: Mesh): Float64Array {
  const tau = meshBreakpoints(mesh);
  const T = sol.tf - sol.t0;
  const t = new Float64Array(tau.length);
  for (let k = 0; k < tau.length; k++) t[k] = sol.t0 + tau[k] * T;
  t[tau.length - 1] = sol.tf;
  return t;
}

/** The state polynomial of one interval [a, b]: values and derivatives at any t in [a, b]. */
export interface StatePiece {
  a: number;
  b: number;
  /** x_i(t). */
  value(i: number, t: number): number;
  /** dx_i/dt(t). */
  slope(i: number, t: number): number;
}

/** Recovers the state polynomial of degree ≤ `degree` on [a, b] from sol.stateAt. */
export function statePiece(sol: Solution, nx: number, a: number, b: number, degree: number): StatePiece {
  const n = degree + 2;
  const x = chebyshevPoints(n);
  const vals = Array.from({ length: nx }, () => new Float64Array(n));
  const buf = new Float64Array(nx);
  for (let j = 0; j < n; j++) {
    sol.stateAt(a + ((x[j] + 1) / 2) * (b - a), buf);
    for (let i = 0; i < nx; i++) vals[i][j] = buf[i];
  }
  const c = vals.map((v) => chebyshevCoefficients(v));
  const dc = c.map((ci) => chebyshevDerivative(ci));
  const half = (b - a) / 2;
  const sigma = (t: number) => (2 * (t - a)) / (b - a) - 1;
  return {
    a,
    b,
    value: (i, t) => chebyshevAt(c[i], sigma(t)),
    slope: (i, t) => chebyshevAt(dc[i], sigma(t)) / half,
  };
}

/** Evaluates f(t, x, u) of a compiled problem on caller buffers. */
export function dynamicsEvaluator(problem: CompiledProblem): (t: number, x: ArrayLike<number>, u: ArrayLike<number>, out: Float64Array) => void {
  const { nx, nu } = problem;
  const z = new Float64Array(1 + nx + nu);
  return (t, x, u, out) => {
    z[0] = t;
    for (let i = 0; i < nx; i++) z[1 + i] = x[i];
    for (let i = 0; i < nu; i++) z[1 + nx + i] = u[i];
    problem.dynamics.eval(z, out);
  };
}

/**
 * The control inside [a, b]: evaluated at times clamped to [a + ε(b−a), b − ε(b−a)], ε = 1e-12, so
 * that a control held on [a, b) (Euler) is not replaced by the next interval's value at t = b (the
 * same rule as analysis/resimulate.ts).
 */
export function controlInside(sol: Solution, a: number, b: number, t: number, out: Float64Array): void {
  const eps = 1e-12 * (b - a);
  sol.controlAt(Math.min(Math.max(t, a + eps), b - eps), out);
}
