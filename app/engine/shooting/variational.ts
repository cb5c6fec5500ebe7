/**
 * Variational equations of a shooting segment (Hairer, Nørsett and Wanner, Solving Ordinary
 * Differential Equations I, 2nd ed., 1993, §I.14, eq. (14.1)–(14.3)): with ẏ = F(t, y) on arc a,
 *   Φ̇ = A(t) Φ,  Φ(t_start) = I,  A = ∂F/∂y,
 * integrated together with y by ODEX (same tolerance), give Φ = ∂y(t_end)/∂y(t_start). F includes
 * the arc's control law u = u(t, x, λ) (and η on a boundary arc), solved implicitly from R(y, q) = 0,
 * so A = F_y + F_q dq/dy with dq/dy = −R_q⁻¹ R_y (implicit function theorem), all from the compiled
 * exact Jacobians (ArcControlLaw.sensitivity). Sizes: y ∈ ℝ^{n2}, Φ ∈ ℝ^{n2×n2} row-major, n2 = 2nx.
 */
import { denseJacobian } from "./conditions";
import { integrateSegment } from "./integrate";
import type { MultipleShooting } from "./multiple-shooting";

/**
 * A(t) = ∂ẏ/∂y on arc a at (t, y) into A (n2 × n2 row-major): the compiled flow's exact Jacobian
 * in (x, λ) plus its Jacobian in the law's unknowns q times dq/dy (ArcControlLaw.sensitivity).
 */
function rhsJacobian(ms: MultipleShooting, a: number, w: Float64Array, t: number, y: Float64Array, dy: Float64Array, A: Float64Array): boolean {
  if (!ms.rhs(a, w, dy, t, y)) return false;
  const { nx } = ms.problem;
  const n2 = ms.n2;
  const nW = ms.oc.nW;
  const spec = ms.specs[a];
  const fn = spec.constraint ? spec.constraint.flow : ms.oc.flow;
  const Jw = new Float64Array(n2 * nW);
  denseJacobian(fn, w, new Float64Array(fn.jacRows.length), Jw);
  const cols: number[] = [];
  const S = new Float64Array(Math.max(1, ms.laws[a].nUnknowns) * n2);
  if (!ms.laws[a].sensitivity(w, S, cols)) return false;
  for (let i = 0; i < n2; i++) {
    for (let c = 0; c < n2; c++) {
      const wc = c < nx ? 1 + c : ms.oc.iL + (c - nx);
      let v = Jw[i * nW + wc];
      for (let b = 0; b < cols.length; b++) v += Jw[i * nW + cols[b]] * S[b * n2 + c];
      A[i * n2 + c] = v;
    }
  }
  return true;
}

/** Segment k with its variational equations: flow and Φ = ∂y(t_end)/∂y(t_start) (n2 × n2), or null. */
export function segmentSensitivity(ms: MultipleShooting, k: number, z: Float64Array, T: number[]): { y: Float64Array; Phi: Float64Array } | null {
  const a = ms.segArc[k];
  const n2 = ms.n2;
  const w = new Float64Array(ms.oc.nW);
  const A = new Float64Array(n2 * n2);
  const dy = new Float64Array(n2);
  const y0 = new Float64Array(n2 + n2 * n2);
  y0.set(z.subarray(n2 * k, n2 * (k + 1)));
  for (let i = 0; i < n2; i++) y0[n2 + i * n2 + i] = 1;
  const res = integrateSegment(
    (t, Y, out) => {
      if (!rhsJacobian(ms, a, w, t, Y.subarray(0, n2), dy, A)) return false;
      out.set(dy);
      // Φ̇ = A Φ (row-major Φ after the n2 flow entries)
      for (let i = 0; i < n2; i++) {
        for (let c = 0; c < n2; c++) {
          let v = 0;
          for (let m = 0; m < n2; m++) v += A[i * n2 + m] * Y[n2 + m * n2 + c];
          out[n2 + i * n2 + c] = v;
        }
      }
      return true;
    },
    ms.nodeTime(k, T), y0, ms.segmentEnd(k, T), { tol: ms.tol },
  );
  ms.nEvalTotal += res.nEval;
  if (!res.ok) return null;
  return { y: res.y.slice(0, n2), Phi: res.y.slice(n2) };
}
