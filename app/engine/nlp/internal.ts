/**
 * The form the interior-point iteration works on (W&B 2006, problem (1) after §3.4):
 *
 *   minimise f(w)   subject to   c(w) = 0,   wL ≤ w ≤ wU,         w ∈ ℝᴺ, c: ℝᴺ → ℝᵐ
 *
 * For a user NLP, w = (x_free, s): the non-fixed variables followed by one slack per inequality
 * row, c_j = d_j g_j(x) − s_k for an inequality row and d_j (g_j(x) − gL_j) for an equality row
 * (d_j the gradient-based scale, see scaling.ts). The restoration phase wraps an InternalProblem
 * into another one (restoration.ts), so the same iteration serves both phases.
 *
 * Sparsity: Jacobian triplets (jRows[k] ∈ [0,m), jCols[k] ∈ [0,N)); Hessian of the Lagrangian
 * σ f + λᵀc as lower-triangle triplets (hRows[k] ≥ hCols[k]) in w indices.
 */
export interface InternalProblem {
  N: number;
  m: number;
  /** Leading primal components that may enter nonlinearly (the limited-memory Hessian acts on w[0..nX)). */
  nX: number;
  /** Factor turning the scaled dual infeasibility into the user's (1/d_f). */
  dualUnscale: number;
  wL: Float64Array;
  wU: Float64Array;
  /** Regular phase: how far each bound of wL/wU was relaxed from the problem's own (final steps, gap.ts). */
  relaxL?: Float64Array;
  relaxU?: Float64Array;
  jRows: Int32Array;
  jCols: Int32Array;
  hRows: Int32Array;
  hCols: Int32Array;
  f(w: Float64Array): number;
  gradF(w: Float64Array, out: Float64Array): void;
  c(w: Float64Array, out: Float64Array): void;
  jac(w: Float64Array, out: Float64Array): void;
  hess(w: Float64Array, sigma: number, lambda: Float64Array, out: Float64Array): void;
  /** Objective of the user problem (unscaled) at w, given the internal objective value fw. */
  reportF(w: Float64Array, fw: number): number;
  /** Unscaled max-norm constraint violation of the user problem at w, given c(w). */
  reportInfPr(w: Float64Array, cw: Float64Array): number;
}

/** A model callback returned NaN/±Infinity or threw; message names function and index. */
export class ModelError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ModelError";
  }
}
