/**
 * Monotone (Fiacco–McCormick) barrier update, W&B 2006 eq. (7)–(8):
 *
 *   μ_{j+1} = max( ε_tol / 10, min( κ_μ μ_j, μ_j^θ_μ ) )       (7)
 *   τ_j     = max( τ_min, 1 − μ_j )                            (8)
 *
 * applied when the barrier subproblem is solved to E_μ ≤ κ_ε μ (step A-3).
 */
import { CONSTANTS as C } from "./options";

/** eq. (7). */
export function nextMu(mu: number, tol: number): number {
  return Math.max(tol / 10, Math.min(C.kappaMu * mu, Math.pow(mu, C.thetaMu)));
}

/** eq. (8). */
export function tauOf(mu: number): number {
  return Math.max(C.tauMin, 1 - mu);
}

/** Smallest μ eq. (7) can produce: ε_tol / 10. */
export function muMin(tol: number): number {
  return tol / 10;
}
