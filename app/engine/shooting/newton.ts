/**
 * Damped Newton's method for a square (or overdetermined) nonlinear system F(z) = 0
 * (Deuflhard, Newton Methods for Nonlinear Problems, 2004, §3.1 for the damping idea; here the
 * plain Armijo rule on the residual 2-norm):
 *   J(z_k) d_k = −F(z_k)  (LU; least squares by SVD when J is rank deficient or not square),
 *   z_{k+1} = z_k + α d_k with the first α ∈ {1, 1/2, …, 2⁻¹²} such that
 *   ‖F(z_k + α d_k)‖₂ ≤ (1 − 10⁻⁴ α) ‖F(z_k)‖₂      (Armijo constant 10⁻⁴: common practice).
 * An F that cannot be evaluated (integration failure, junction order violated) returns null and
 * counts as an infinite residual.
 */
import { Matrix, SingularValueDecomposition, solve } from "ml-matrix";

export interface NewtonRecord {
  iter: number;
  /** Max norm of F at the start of the iteration. */
  residual: number;
  /** Max norm of the accepted step (0 on the last record). */
  step: number;
  alpha: number;
}

export type NewtonStatus = "converged" | "iteration_limit" | "line_search_failed" | "singular_jacobian" | "evaluation_failed";

export interface NewtonResult {
  status: NewtonStatus;
  z: Float64Array;
  F: Float64Array | null;
  residual: number;
  history: NewtonRecord[];
}

export interface NewtonOptions {
  /** Converged when ‖F‖∞ ≤ tol. Default 1e-10. */
  tol?: number;
  maxIter?: number;
  onIteration?: (rec: NewtonRecord) => void;
}

const maxNorm = (v: ArrayLike<number>) => {
  let m = 0;
  for (let i = 0; i < v.length; i++) m = Math.max(m, Math.abs(v[i]));
  return m;
};
const twoNorm = (v: ArrayLike<number>) => {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += v[i] * v[i];
  return Math.sqrt(s);
};

/** Solves J d = −F; null when nothing usable comes out. */
function newtonStep(J: Matrix, F: Float64Array): Float64Array | null {
  const rhs = Matrix.columnVector(Array.from(F, (v) => -v));
  let d: Matrix | null = null;
  if (J.rows === J.columns) {
    try {
      d = solve(J, rhs);
    } catch {
      d = null;
    }
  }
  const bad = (m: Matrix | null) => !m || m.to1DArray().some((v) => !Number.isFinite(v));
  if (bad(d)) {
    const svd = new SingularValueDecomposition(J, { autoTranspose: true });
    d = svd.solve(rhs);
  }
  if (bad(d)) return null;
  return Float64Array.from(d!.to1DArray());
}

export function dampedNewton(
  F: (z: Float64Array) => Float64Array | null,
  jacobian: (z: Float64Array, Fz: Float64Array) => Matrix | null,
  z0: Float64Array,
  options: NewtonOptions = {},
): NewtonResult {
  const tol = options.tol ?? 1e-10;
  const maxIter = options.maxIter ?? 40;
  const history: NewtonRecord[] = [];
  let z = Float64Array.from(z0);
  let Fz = F(z);
  if (!Fz) return { status: "evaluation_failed", z, F: null, residual: Infinity, history };
  for (let iter = 0; ; iter++) {
    const res = maxNorm(Fz);
    const rec: NewtonRecord = { iter, residual: res, step: 0, alpha: 0 };
    if (res <= tol) {
      history.push(rec);
      options.onIteration?.(rec);
      return { status: "converged", z, F: Fz, residual: res, history };
    }
    if (iter >= maxIter) {
      history.push(rec);
      options.onIteration?.(rec);
      return { status: "iteration_limit", z, F: Fz, residual: res, history };
    }
    const J = jacobian(z, Fz);
    const d = J ? newtonStep(J, Fz) : null;
    if (!d) {
      history.push(rec);
      options.onIteration?.(rec);
      return { status: "singular_jacobian", z, F: Fz, residual: res, history };
    }
    const n0 = twoNorm(Fz);
    let alpha = 1;
    let accepted = false;
    const trial = new Float64Array(z.length);
    let Ft: Float64Array | null = null;
    for (let k = 0; k <= 12; k++) {
      for (let i = 0; i < z.length; i++) trial[i] = z[i] + alpha * d[i];
      Ft = F(trial);
      if (Ft && twoNorm(Ft) <= (1 - 1e-4 * alpha) * n0) {
        accepted = true;
        break;
      }
      alpha *= 0.5;
    }
    rec.alpha = accepted ? alpha : 0;
    rec.step = accepted ? alpha * maxNorm(d) : 0;
    history.push(rec);
    options.onIteration?.(rec);
    if (!accepted || !Ft) return { status: "line_search_failed", z, F: Fz, residual: res, history };
    z = Float64Array.from(trial);
    Fz = Ft;
  }
}
