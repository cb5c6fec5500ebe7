import type { IterationEvent } from "./iteration-log";
import type { SymmetricSolverLike } from "../sparse/types";

/**
 * The NLP that every transcription hands to the interior-point solver.
 *
 *   minimise   f(x)                 x ∈ ℝⁿ
 *   subject to gL ≤ g(x) ≤ gU        g: ℝⁿ → ℝᵐ   (gL[j] = gU[j] is an equality)
 *              xL ≤ x ≤ xU           (±Infinity where a side is absent)
 *
 * Lagrangian convention (as in Wächter and Biegler, Math. Programming 106, 2006, eq. (3)):
 *   L(x, λ, zL, zU) = f(x) + λᵀ g(x) − zLᵀ (x − xL) − zUᵀ (xU − x)
 * so at a solution ∇f + J(x)ᵀ λ − zL + zU = 0. A multiplier λ[j] of an inequality row is
 * ≥ 0 when the upper side is active and ≤ 0 when the lower side is active.
 *
 * Sparsity is fixed for the life of the problem: the Jacobian of g is given as triplets
 * (jacRows[k], jacCols[k]), the Hessian of the Lagrangian as triplets of its LOWER triangle
 * (hessRows[k] ≥ hessCols[k]). Duplicated triplets are allowed and are summed.
 * Callbacks write into caller-owned buffers and must not keep references to them.
 */
export interface NlpProblem {
  n: number;
  m: number;
  xL: Float64Array;
  xU: Float64Array;
  gL: Float64Array;
  gU: Float64Array;
  /** Starting point (length n). */
  x0: Float64Array;
  jacRows: Int32Array;
  jacCols: Int32Array;
  hessRows: Int32Array;
  hessCols: Int32Array;
  f(x: Float64Array): number;
  gradF(x: Float64Array, out: Float64Array): void;
  g(x: Float64Array, out: Float64Array): void;
  /** Values of the Jacobian in the order of (jacRows, jacCols). */
  jacValues(x: Float64Array, out: Float64Array): void;
  /** Values of ∇²(σ f + Σ λ_j g_j) in the order of (hessRows, hessCols). */
  hessValues(x: Float64Array, sigma: number, lambda: Float64Array, out: Float64Array): void;
  /** Optional names for messages ("x[12] = h at node 3", "g[40] = defect v, interval 7"). */
  variableName?(i: number): string;
  constraintName?(j: number): string;
}

export type NlpStatus =
  | "optimal"
  | "acceptable"
  | "infeasible"
  | "unbounded"
  | "iteration_limit"
  | "time_limit"
  | "diverging"
  | "numerical_trouble"
  | "invalid_model";

export interface IterationRecord {
  iter: number;
  /** Unscaled objective. */
  f: number;
  /** Primal infeasibility (max norm of constraint violation, unscaled). */
  infPr: number;
  /** Dual infeasibility (max norm of the scaled Lagrangian gradient). */
  infDu: number;
  /** log10 of barrier parameter is shown by callers; this is μ itself. */
  mu: number;
  /** Max norm of the primal step. */
  normD: number;
  /** Hessian regularisation δw used for this iteration (0 when none). */
  deltaW: number;
  alphaPr: number;
  alphaDu: number;
  /** Number of backtracking trials in the line search. */
  lsTrials: number;
  phase: "regular" | "restoration";
  /** What happened in this iteration, by name (./iteration-log.ts ITERATION_EVENTS). */
  events: IterationEvent[];
}

export interface NlpOptions {
  /** Desired convergence tolerance on the scaled KKT error (tol). Default 1e-8. */
  tol?: number;
  /** Relative duality-gap tolerance also required at "optimal" (gap.ts). Default 1e-12; 0 disables. */
  gapTol?: number;
  /** Acceptable tolerance and number of consecutive acceptable iterates. Default 1e-6, 15. */
  acceptableTol?: number;
  acceptableIter?: number;
  /** An iterate counts toward 'acceptable' only if f moved by at most this × max(1, |f|). Default 1e-9. */
  acceptableObjChangeTol?: number;
  maxIter?: number;
  /** Wall-clock limit in seconds. Default Infinity. */
  maxSeconds?: number;
  /** Initial barrier parameter. Default 0.1. */
  muInit?: number;
  hessian?: "exact" | "limited-memory";
  /** Warm start from a previous primal–dual point. */
  warmStart?: { lambda?: Float64Array; zL?: Float64Array; zU?: Float64Array; mu?: number };
  /** Called after every iteration (progress display). */
  onIteration?: (rec: IterationRecord) => void;
  /** 0 silent (default). */
  printLevel?: number;
  /** Unscaled tolerances also required at "optimal" (defaults 1e-4, 1, 1e-4). */
  constrViolTol?: number;
  dualInfTol?: number;
  complInfTol?: number;
  /** Bounds relaxed by this × max(1, |bound|). Default 1e-8. */
  boundRelaxFactor?: number;
  /** Gradient-based scaling target (W&B §3.8). Default 100. */
  nlpScalingMaxGradient?: number;
  /** Stored pairs of the limited-memory Hessian. Default 6. */
  lbfgsMemory?: number;
  /** "diverging" when max|x| exceeds this. Default 1e20. */
  divergingIterates?: number;
  /** Linear equality rows in one variable become fixed variables (presolve). Default true. */
  presolveSingletons?: boolean;
  /** "unbounded" when the objective falls below this at a feasible iterate. Default -1e20. */
  unboundedObjective?: number;
  /**
   * Factory of the symmetric indefinite solver (default: sparse LDLᵀ of app/engine/sparse).
   * `signs` gives the expected pivot signs of the KKT matrix (+1 primal rows, −1 constraint rows).
   */
  linearSolver?: (n: number, rows: Int32Array, cols: Int32Array, signs?: Int8Array) => SymmetricSolverLike;
}

export interface NlpResult {
  status: NlpStatus;
  message: string;
  x: Float64Array;
  f: number;
  /** Constraint values g(x). */
  g: Float64Array;
  /** Constraint multipliers (sign convention above). */
  lambda: Float64Array;
  zL: Float64Array;
  zU: Float64Array;
  iterations: number;
  seconds: number;
  log: IterationRecord[];
  /** Final unscaled primal infeasibility and scaled dual infeasibility. */
  infPr: number;
  infDu: number;
  /**
   * Estimate of the solver's share of the objective error, f(x) − f* in the objective's units:
   * total duality gap Σ s z + |λᵀc| at the returned point (gap.ts); NaN when not available.
   */
  solverErrorEstimate: number;
  /** Work statistics: numeric factorisations, seconds spent in them, nonzeros of L. */
  stats?: { factorizations: number; factorSeconds: number; nnzL: number };
}
