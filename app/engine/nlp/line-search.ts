/**
 * Backtracking filter line search, W&B 2006 §2.3–2.4 (Algorithm A, step A-5).
 *
 * Given the direction d = (d_w, d_λ) and α_max from the fraction-to-the-boundary rule (15),
 * trial steps α = α_max, α_max/2, … are tested on the barrier function φ = φ_μ and the
 * infeasibility θ = ‖c‖₁:
 *  - filter acceptance (§2.3), θ_max entry included;
 *  - switching condition (19):  m(α) = α ∇φᵀd_w < 0 and (−m(α))^{s_φ} α^{1−s_φ} > δ θ^{s_θ};
 *  - if θ ≤ θ_min and (19) holds: Armijo (20), φ(α) ≤ φ + η_φ m(α) ("f-type", no filter update);
 *  - otherwise sufficient decrease (18): θ(α) ≤ (1−γ_θ)θ or φ(α) ≤ φ − γ_φ θ, and the filter is
 *    augmented by (22);
 *  - second-order correction (§2.4) at the first trial when θ(α_max) ≥ θ, at most p_max = 4
 *    times while θ decreases by κ_soc = 0.99. Safeguard (ours, no source): after a corrected
 *    step accepted h-type without reducing θ, and until an accepted step brings θ below the θ
 *    that correction started from, a corrected step must end below θ to be accepted h-type
 *    (socMustReduceTheta; ipm.ts keeps that θ). Corrections that trade feasibility for ever
 *    smaller decreases of φ, in chains or alternating with plain steps, kept
 *    ibis-crane-load-flip trapezoidal N = 30 between θ = 2.6e-3 and 2.3e-2 for hundreds of
 *    iterations (440 in all, now 63) while the plain step α_max/2 reduced θ. A single such
 *    correction is often a good step: forbidding all of them cost ibis HS and LGR ~35 % more
 *    iterations;
 *  - α < α_min of eq. (23) sends the iteration to the feasibility restoration phase.
 */
import { CONSTANTS as C } from "./options";
import type { Filter } from "./filter";

/**
 * Fraction-to-the-boundary rule, eq. (15): the largest α ∈ (0, 1] with
 * v + α d ≥ (1 − τ) v for the positive quantities v (bound slacks or multipliers).
 * Here v_i = s_i (or z_i) and the direction of v is sign · d_i; only indices with has[i] count.
 */
export function fractionToBoundary(tau: number, v: Float64Array, d: Float64Array, sign: number, has: Uint8Array, alpha: number): number {
  for (let i = 0; i < v.length; i++) {
    if (!has[i]) continue;
    const dv = sign * d[i];
    if (dv < 0) {
      const a = (-tau * v[i]) / dv;
      if (a < alpha) alpha = a;
    }
  }
  return alpha;
}

export interface TrialValues {
  theta: number;
  phi: number;
}

/** What the line search needs from the iteration (ipm.ts owns the buffers). */
export interface LineSearchHost {
  /** Evaluate at w + α d_w (kept as the current trial); null on a model error. */
  trial(alpha: number): TrialValues | null;
  /**
   * Second-order correction: with c_soc = α_soc c_soc + c(trial) (first call: α c(w) + c(w+αd)),
   * solve eq. (27) for a corrected step, apply eq. (15), evaluate it as the current trial.
   * Returns its values and step size, or null.
   */
  secondOrderCorrection(alpha: number, first: boolean): (TrialValues & { alpha: number }) | null;
}

export interface LineSearchResult {
  accepted: boolean;
  alpha: number;
  trials: number;
  soc: boolean;
  /** The step was accepted as h-type: augment the filter with the current iterate (22). */
  augment: boolean;
}

/** α_min of eq. (23). */
export function alphaMin(theta: number, gradPhiD: number, thetaMin: number): number {
  let a: number;
  if (gradPhiD < 0 && theta <= thetaMin)
    a = Math.min(C.gammaTheta, (C.gammaPhi * theta) / -gradPhiD, (C.delta * Math.pow(theta, C.sTheta)) / Math.pow(-gradPhiD, C.sPhi));
  else if (gradPhiD < 0) a = Math.min(C.gammaTheta, (C.gammaPhi * theta) / -gradPhiD);
  else a = C.gammaTheta;
  return C.gammaAlpha * a;
}

/** Switching condition (19). */
export function switchingCondition(alpha: number, theta: number, gradPhiD: number): boolean {
  return gradPhiD < 0 && alpha * Math.pow(-gradPhiD, C.sPhi) > C.delta * Math.pow(theta, C.sTheta);
}

/**
 * Acceptance of a trial point (θ_t, φ_t) reached with step α from a point with (θ, φ, ∇φᵀd):
 * filter, then Armijo (20) in the f-type case (θ ≤ θ_min and (19)), else sufficient decrease (18).
 */
export function acceptTrial(t: TrialValues, a: number, filter: Filter, theta: number, phi: number, gradPhiD: number, thetaMin: number): { ok: boolean; fType: boolean } {
  if (!filter.isAcceptable(t.theta, t.phi)) return { ok: false, fType: false };
  if (theta <= thetaMin && switchingCondition(a, theta, gradPhiD)) {
    return { ok: t.phi <= phi + C.etaPhi * a * gradPhiD, fType: true }; // (20)
  }
  return { ok: t.theta <= (1 - C.gammaTheta) * theta || t.phi <= phi - C.gammaPhi * theta, fType: false }; // (18)
}

export function backtrack(
  host: LineSearchHost, filter: Filter, theta: number, phi: number, gradPhiD: number,
  alphaMax: number, thetaMin: number, withSoc: boolean, socMustReduceTheta = false,
): LineSearchResult {
  const aMin = alphaMin(theta, gradPhiD, thetaMin);
  let alpha = alphaMax;
  let trials = 0;
  /** Acceptance of a trial computed with step α (used in m(α) = α ∇φᵀd). */
  const acceptable = (t: TrialValues, a: number) => acceptTrial(t, a, filter, theta, phi, gradPhiD, thetaMin);
  while (alpha >= aMin) {
    trials++;
    const t = host.trial(alpha);
    if (t && Number.isFinite(t.phi) && Number.isFinite(t.theta)) {
      const r = acceptable(t, alpha);
      if (r.ok) return { accepted: true, alpha, trials, soc: false, augment: !r.fType };
      // §2.4: second-order correction at the first trial if the infeasibility grew.
      if (withSoc && trials === 1 && t.theta >= theta) {
        let thetaOld = theta;
        let tt: TrialValues = t;
        for (let p = 1; p <= C.maxSoc; p++) {
          if (p > 1 && tt.theta > C.kappaSoc * thetaOld) break;
          thetaOld = tt.theta;
          const s = host.secondOrderCorrection(alpha, p === 1);
          if (!s || !Number.isFinite(s.phi) || !Number.isFinite(s.theta)) break;
          const rs = acceptable(s, alpha);
          if (rs.ok && (rs.fType || !socMustReduceTheta || s.theta < theta)) return { accepted: true, alpha: s.alpha, trials, soc: true, augment: !rs.fType };
          tt = s;
        }
      }
    }
    alpha *= C.alphaReduction;
  }
  return { accepted: false, alpha, trials, soc: false, augment: true };
}
