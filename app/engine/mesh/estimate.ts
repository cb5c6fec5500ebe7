/**
 * Per-interval error estimates of a discrete solution, one entry point for every scheme.
 *
 *   euler, trapezoidal, hermite-simpson, rk4-shooting  →  residual.ts (Betts 2010 §4.7.2: relative
 *       local error by quadrature of the residual of the interpolated solution)
 *   lgr  →  lgr-estimate.ts (Patterson, Hager and Rao 2015 §3: difference to the state integrated
 *       with one more LGR point)
 * Both are relative errors (dimensionless), compared with the same tolerance ε in refinement.
 * Pure functions of (problem, solution, mesh); nothing is stored.
 */
import type { CompiledProblem } from "../problem/types";
import type { Mesh, SchemeId, Solution } from "../schemes/types";
import { residualEstimate } from "./residual";
import { lgrEstimate } from "./lgr-estimate";

export type EstimateMethod = "residual-quadrature" | "lgr-integration";

export const ESTIMATE_SOURCES: Record<EstimateMethod, string> = {
  "residual-quadrature": "Betts 2010, §4.7.2: ∫|dx̃/dt − f(x̃, ũ)| dt / (w + 1) per interval",
  "lgr-integration": "Patterson, Hager and Rao 2015, §3: |X̂ − Y| / (1 + max|Y|) with one more LGR point",
};

export interface MeshEstimate {
  scheme: SchemeId;
  method: EstimateMethod;
  /** Mesh breakpoints in time (N + 1). */
  t: number[];
  /** Relative error estimate per interval (N). */
  error: number[];
  /** Per state (nx × N). */
  perState: number[][];
  /** Denominator of the relative error per state and interval (nx × N). */
  denominators: number[][];
  /** Largest entry of `error` and its interval. */
  max: number;
  worstInterval: number;
  /** Dynamics evaluations spent by the estimate. */
  evaluations: number;
}

export function estimateMethod(scheme: SchemeId): EstimateMethod {
  return scheme === "lgr" ? "lgr-integration" : "residual-quadrature";
}

export function estimateErrors(problem: CompiledProblem, sol: Solution, mesh: Mesh): MeshEstimate {
  const method = estimateMethod(sol.scheme);
  const N = mesh.intervals;
  let t: Float64Array, error: Float64Array, perState: Float64Array[], denominators: number[][], evaluations: number;
  if (method === "lgr-integration") {
    const e = lgrEstimate(problem, sol, mesh);
    ({ t, error, perState, evaluations } = e);
    denominators = e.scales.map((s) => Array.from(s));
  } else {
    const e = residualEstimate(problem, sol, mesh);
    ({ t, error, perState, evaluations } = e);
    denominators = Array.from(e.weights, (w) => new Array<number>(N).fill(w));
  }
  let max = 0, worstInterval = 0;
  for (let k = 0; k < N; k++)
    if (!(error[k] <= max)) {
      max = error[k];
      worstInterval = k;
    }
  return {
    scheme: sol.scheme,
    method,
    t: Array.from(t),
    error: Array.from(error),
    perState: perState.map((p) => Array.from(p)),
    denominators,
    max: Number.isFinite(max) ? max : Infinity,
    worstInterval,
    evaluations,
  };
}
