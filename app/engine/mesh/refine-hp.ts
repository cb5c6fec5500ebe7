/**
 * A new LGR mesh from the error estimate of the current one: the ph method of Patterson, Hager and
 * Rao, "A ph mesh refinement method for optimal control", Optimal Control Applications and Methods
 * 36(4), 2015, §4 (parameter values recalled from memory).
 *
 * For interval s with N_s collocation points (the degree K_s) and estimate e_s > ε:
 *   P_s = max(1, ⌈log(e_s/ε) / log(N_s)⌉)          points to add (the error is assumed to fall by
 *                                                    a factor N_s per added point: spectral decay)
 *   if N_s + P_s ≤ N_max: raise the degree (p):  K_s ← N_s + P_s
 *   else split (h) into B = max(⌈(N_s + P_s)/N_min⌉, 2) equal intervals of degree N_min.
 * Intervals with e_s ≤ ε are kept. N_min = 3 and N_max = 10 (the paper's choices; our defaults
 * can be overridden). Interval merging and degree reduction, which the paper's method does not
 * include either, are not done.
 */
import type { Mesh } from "../schemes/types";

export const HP_MIN_DEGREE = 3;
export const HP_MAX_DEGREE = 10;

export interface HpRefinement {
  mesh: Mesh;
  /** Per input interval: "keep", "p" (degree raised) or "h" (split). */
  actions: Array<"keep" | "p" | "h">;
}

export function refineHp(tau: ArrayLike<number>, degrees: number[], error: number[], eps: number, options: { minDegree?: number; maxDegree?: number } = {}): HpRefinement {
  const Nmin = options.minDegree ?? HP_MIN_DEGREE;
  const Nmax = options.maxDegree ?? HP_MAX_DEGREE;
  const breakpoints: number[] = [];
  const out: number[] = [];
  const actions: Array<"keep" | "p" | "h"> = [];
  for (let s = 0; s < degrees.length; s++) {
    const a = tau[s], b = tau[s + 1], Ns = degrees[s];
    const e = error[s];
    if (e <= eps) {
      breakpoints.push(a);
      out.push(Ns);
      actions.push("keep");
      continue;
    }
    const P = Number.isFinite(e) ? Math.max(1, Math.ceil(Math.log(e / eps) / Math.log(Math.max(Ns, 2)))) : Nmax;
    if (Ns + P <= Nmax) {
      breakpoints.push(a);
      out.push(Ns + P);
      actions.push("p");
    } else {
      const B = Math.max(Math.ceil((Ns + P) / Nmin), 2);
      for (let j = 0; j < B; j++) {
        breakpoints.push(a + (j / B) * (b - a));
        out.push(Nmin);
      }
      actions.push("h");
    }
  }
  breakpoints.push(1);
  breakpoints[0] = 0;
  return { mesh: { intervals: out.length, breakpoints, degrees: out }, actions };
}
