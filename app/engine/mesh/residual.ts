/**
 * Relative local error of a local-scheme solution on each mesh interval, by quadrature of the
 * residual of the interpolated solution in the dynamics.
 *
 * Source: Betts, Practical Methods for Optimal Control and Estimation Using Nonlinear Programming,
 * 2nd ed., SIAM 2010, §4.7.2 ("Estimating the discretization error"). With x̃, ũ the state and
 * control the scheme implies between mesh points (§4.7.1: Euler linear/held, trapezoidal quadratic/
 * linear, Hermite–Simpson cubic/quadratic; RK4 shooting: cubic Hermite/quadratic, as its Solution
 * reports), the residual is
 *   ε_i(s) = dx̃_i/dt(s) − f_i(s, x̃(s), ũ(s)),
 * the absolute local error on interval k is η_{i,k} = ∫_{t_k}^{t_{k+1}} |ε_i(s)| ds, and the relative
 * local error is
 *   ε_k = max_i η_{i,k} / (w_i + 1),   w_i = max over the mesh points of |x̃_i|, |dx̃_i/dt|.
 * Betts evaluates the integral by Romberg quadrature; here adaptive Simpson quadrature (Lyness,
 * "Notes on the adaptive Simpson quadrature routine", J. ACM 16(3), 1969) on the max-norm of the
 * residual vector, to a relative accuracy of 1e-4 of each interval's integral (|ε| has kinks where ε
 * changes sign, which adaptive bisection handles and a fixed Gauss rule would not).
 */
import type { CompiledProblem } from "../problem/types";
import type { Mesh, Solution } from "../schemes/types";
import { controlInside, dynamicsEvaluator, intervalTimes, stateDegrees, statePiece, type StatePiece } from "./intervals";

export interface ResidualEstimate {
  t: Float64Array;
  /** ε_k, length N. */
  error: Float64Array;
  /** η_{i,k}/(w_i + 1) per state, nx × N. */
  perState: Float64Array[];
  /** w_i + 1 per state (the denominators), length nx. */
  weights: Float64Array;
  /** Evaluations of f spent. */
  evaluations: number;
}

/** Relative accuracy of each interval's integral (common practice, no source). */
const QUAD_RTOL = 1e-4;
const MAX_DEPTH = 12;

export function residualEstimate(problem: CompiledProblem, sol: Solution, mesh: Mesh): ResidualEstimate {
  const { nx, nu } = problem;
  const t = intervalTimes(sol, mesh);
  const N = mesh.intervals;
  const degrees = stateDegrees(sol.scheme, mesh);
  const f = dynamicsEvaluator(problem);
  const x = new Float64Array(nx), u = new Float64Array(nu), fx = new Float64Array(nx);
  let evaluations = 0;
  const pieces: StatePiece[] = [];
  for (let k = 0; k < N; k++) pieces.push(statePiece(sol, nx, t[k], t[k + 1], degrees[k]));
  const w = new Float64Array(nx);
  for (const p of pieces)
    for (const s of [p.a, p.b])
      for (let i = 0; i < nx; i++) w[i] = Math.max(w[i], Math.abs(p.value(i, s)), Math.abs(p.slope(i, s)));
  for (let i = 0; i < nx; i++) w[i] += 1;
  const error = new Float64Array(N);
  const perState = Array.from({ length: nx }, () => new Float64Array(N));
  for (let k = 0; k < N; k++) {
    const p = pieces[k];
    // |ε(s)| / (w + 1), one vector per call
    const r = (s: number): Float64Array => {
      for (let i = 0; i < nx; i++) x[i] = p.value(i, s);
      controlInside(sol, p.a, p.b, s, u);
      f(s, x, u, fx);
      evaluations++;
      const out = new Float64Array(nx);
      for (let i = 0; i < nx; i++) out[i] = Math.abs(p.slope(i, s) - fx[i]) / w[i];
      return out;
    };
    const eta = adaptiveSimpson(r, p.a, p.b, nx);
    for (let i = 0; i < nx; i++) {
      perState[i][k] = Number.isFinite(eta[i]) ? eta[i] : Infinity;
      error[k] = Math.max(error[k], perState[i][k]);
    }
  }
  return { t, error, perState, weights: w, evaluations };
}

/** ∫_a^b g(s) ds componentwise for a vector integrand g ≥ 0, adaptive Simpson on 4 starting panels. */
function adaptiveSimpson(g: (s: number) => Float64Array, a: number, b: number, n: number): Float64Array {
  const total = new Float64Array(n);
  const panels = 4;
  const vals: Float64Array[] = [];
  for (let j = 0; j <= 2 * panels; j++) vals.push(g(a + (j / (2 * panels)) * (b - a)));
  // a first coarse value sets the absolute target
  const coarse = simpsonSum(vals, (b - a) / panels, panels, n);
  const target = Math.max(QUAD_RTOL * maxOf(coarse), 1e-300);
  for (let q = 0; q < panels; q++) {
    const l = a + (q / panels) * (b - a), rr = a + ((q + 1) / panels) * (b - a);
    const whole = simpson(vals[2 * q], vals[2 * q + 1], vals[2 * q + 2], rr - l, n);
    const part = recurse(g, l, rr, vals[2 * q], vals[2 * q + 1], vals[2 * q + 2], whole, target / panels, MAX_DEPTH, n);
    for (let i = 0; i < n; i++) total[i] += part[i];
  }
  return total;
}

function recurse(g: (s: number) => Float64Array, a: number, b: number, fa: Float64Array, fm: Float64Array, fb: Float64Array, whole: Float64Array, tol: number, depth: number, n: number): Float64Array {
  const m = 0.5 * (a + b);
  const flm = g(0.5 * (a + m)), frm = g(0.5 * (m + b));
  const left = simpson(fa, flm, fm, m - a, n), right = simpson(fm, frm, fb, b - m, n);
  let diff = 0;
  for (let i = 0; i < n; i++) diff = Math.max(diff, Math.abs(left[i] + right[i] - whole[i]));
  const out = new Float64Array(n);
  if (depth <= 0 || diff <= 15 * tol || !Number.isFinite(diff)) {
    // Richardson step of Lyness 1969
    for (let i = 0; i < n; i++) out[i] = Math.max(0, left[i] + right[i] + (left[i] + right[i] - whole[i]) / 15);
    return out;
  }
  const l = recurse(g, a, m, fa, flm, fm, left, tol / 2, depth - 1, n);
  const r = recurse(g, m, b, fm, frm, fb, right, tol / 2, depth - 1, n);
  for (let i = 0; i < n; i++) out[i] = l[i] + r[i];
  return out;
}

function simpson(fa: Float64Array, fm: Float64Array, fb: Float64Array, h: number, n: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = (h / 6) * (fa[i] + 4 * fm[i] + fb[i]);
  return out;
}

function simpsonSum(vals: Float64Array[], h: number, panels: number, n: number): Float64Array {
  const out = new Float64Array(n);
  for (let q = 0; q < panels; q++) {
    const s = simpson(vals[2 * q], vals[2 * q + 1], vals[2 * q + 2], h, n);
    for (let i = 0; i < n; i++) out[i] += s[i];
  }
  return out;
}

function maxOf(v: Float64Array): number {
  let m = 0;
  for (const x of v) if (Number.isFinite(x)) m = Math.max(m, x);
  return m;
}
