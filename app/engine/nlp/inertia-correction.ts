/**
 * Inertia correction, Algorithm IC of W&B 2006 §3.1. The KKT matrix of eq. (13) must have
 * inertia (N, m, 0) (N positive, m negative eigenvalues) for d_w to be a descent direction of
 * the barrier problem; otherwise it is regularised with δ_w I on the primal block and −δ_c I on
 * the constraint block:
 *
 *   IC-1  try δ_w = δ_c = 0;
 *   IC-2  if K is singular: δ_c = δ̄_c μ^κ_c;
 *   IC-3  δ_w = δ̄_w⁰ if δ_w^last = 0, else max(δ̄_w^min, κ_w⁻ δ_w^last);
 *   IC-4  factorise; if the inertia is right: δ_w^last = δ_w, done;
 *   IC-5  δ_w ← κ̄_w⁺ δ_w if δ_w^last = 0 else κ_w⁺ δ_w; fail above δ̄_w^max; back to IC-4.
 *
 * Two refinements (common practice, no source): after IC-2 the matrix is first retried with
 * δ_w = 0 (a structurally singular Jacobian block with no Hessian trouble needs only δ_c), and
 * once a singular matrix was met, later iterations start from δ_c > 0 directly.
 */
import { CONSTANTS as C } from "./options";
import type { KktSystem } from "./kkt";

export interface CorrectionResult {
  ok: boolean;
  deltaW: number;
  deltaC: number;
  factorizations: number;
}

export class InertiaCorrection {
  /** δ_w^last of Algorithm IC. */
  deltaWLast = 0;
  /** A singular matrix was met before: start with δ_c > 0. */
  jacobianSingular = false;

  /**
   * Factorise kkt with the smallest regularisation that gives inertia (N, m, 0).
   * hVals may be null (W = 0); diag holds Σ (+ fixed diagonal).
   */
  factorize(kkt: KktSystem, hVals: Float64Array | null, diag: Float64Array, jVals: Float64Array, mu: number): CorrectionResult {
    const N = kkt.N, m = kkt.m;
    let count = 0;
    const right = (dw: number, dc: number) => {
      // a retry changes the shifts alone: the diagonal is rewritten, nothing else (kkt.ts)
      const r = count++ === 0 ? kkt.factor(hVals, diag, dw, jVals, dc) : kkt.refactor(dw, dc);
      // A pivot replaced by the solver's signed regularisation (r.regularized) hides a zero
      // eigenvalue: it counts as singular here, so that δ_c / δ_w are chosen by Algorithm IC.
      const reg = r.regularized ?? 0;
      return { good: r.ok && r.zero === 0 && reg === 0 && r.positive === N && r.negative === m, singular: !r.ok || r.zero > 0 || reg > 0 || r.negative < m };
    };
    const deltaCTrial = C.deltaCBar * Math.pow(mu, C.kappaC); // IC-2: δ_c = δ̄_c μ^κ_c
    let deltaC = this.jacobianSingular ? deltaCTrial : 0;
    // IC-1
    let t = right(0, deltaC);
    if (t.good) return { ok: true, deltaW: 0, deltaC, factorizations: count };
    // IC-2
    if (t.singular && deltaC === 0) {
      deltaC = deltaCTrial;
      this.jacobianSingular = true;
      t = right(0, deltaC);
      if (t.good) return { ok: true, deltaW: 0, deltaC, factorizations: count };
    }
    // IC-3
    let deltaW = this.deltaWLast === 0 ? C.deltaW0 : Math.max(C.deltaWMin, C.kappaWMinus * this.deltaWLast);
    for (;;) {
      // IC-4
      t = right(deltaW, deltaC);
      if (t.good) {
        this.deltaWLast = deltaW;
        return { ok: true, deltaW, deltaC, factorizations: count };
      }
      // IC-5
      deltaW = this.deltaWLast === 0 ? C.kappaWPlusBar * deltaW : C.kappaWPlus * deltaW;
      if (deltaW > C.deltaWMax) return { ok: false, deltaW, deltaC, factorizations: count };
    }
  }
}
