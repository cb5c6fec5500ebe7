/**
 * A new mesh for a local scheme (Euler, trapezoidal, Hermite–Simpson, RK4 shooting) from the error
 * estimate of the current one, after Betts, Practical Methods for Optimal Control and Estimation
 * Using Nonlinear Programming, 2nd ed., SIAM 2010, §4.7.3–4.7.4.
 *
 * Error model (§4.7.3): on an interval of width h the estimate behaves as ε ≈ C h^(q − r), with q the
 * order of the estimate for the scheme on smooth solutions and r ≥ 0 the order reduction (r > 0
 * where the solution is not smooth, e.g. at a switch, or near active state constraints). Adding I
 * equally spaced points to interval k divides its width by 1 + I, so the predicted estimate is
 *   ε_k(I) = ε_k (1 + I)^(−(q − r_k)).
 * Betts writes the exponent p − r + 1 with p the order of the scheme; q here is the exponent of the
 * estimate itself, measured on smooth problems by tests/mesh/refine.test.ts (Euler 2, trapezoidal 3,
 * Hermite–Simpson and RK4 shooting 4: for Hermite–Simpson ∫|ε| is one order below the local error
 * |∫ε| because the residual is odd about the midpoint).
 * Order reduction (§4.7.3): after interval k (estimate η) was split by I points into subintervals
 * whose largest estimate is θ, r = q − log(η/θ)/log(1 + I), rounded and kept in [0, q − 1] (so a
 * split is never predicted to gain less than a factor 1 + I). Unknown r starts at 0.
 * New mesh (§4.7.4): minimise the largest predicted error by adding one point at a time to the
 * interval with the largest predicted error, until that is below κ ε, with at most M₁ points per
 * interval and M points per pass. κ = 0.1 and M₁ = 5 are Betts' suggested values (recalled from
 * memory); M = the current number of intervals (a pass at most doubles the mesh) is ours.
 */
import type { Mesh, SchemeId } from "../schemes/types";

/** Exponent q of the estimate in h on smooth problems, per local scheme (measured, see above). */
export const ESTIMATE_ORDER: Record<Exclude<SchemeId, "lgr">, number> = {
  euler: 2,
  trapezoidal: 3,
  "hermite-simpson": 4,
  "rk4-shooting": 4,
};

export const BETTS_KAPPA = 0.1;
export const BETTS_MAX_PER_INTERVAL = 5;

/** What refinement remembers of an interval: where it came from, for the order-reduction estimate. */
export interface IntervalHistory {
  /** Estimate of the parent interval before it was split, and the points added to it (0: not split). */
  parentError: number;
  added: number;
  /** Index of the parent interval in the previous mesh (children of one parent share it). */
  parent: number;
  /** Order reduction in use for this interval. */
  r: number;
}

export interface LocalRefinement {
  mesh: Mesh;
  history: IntervalHistory[];
  /** Points added to each interval of the input mesh. */
  added: number[];
  /** Largest predicted estimate on the new mesh. */
  predicted: number;
}

/** Order reduction of every current interval from how its parent's estimate fell (§4.7.3). */
export function orderReductions(q: number, error: number[], history: IntervalHistory[] | null): number[] {
  const N = error.length;
  if (!history || history.length !== N) return new Array<number>(N).fill(0);
  // θ per parent: the largest estimate among its children
  const theta = new Map<number, number>();
  history.forEach((h, k) => theta.set(h.parent, Math.max(theta.get(h.parent) ?? 0, error[k])));
  return history.map((h) => {
    if (h.added === 0) return h.r;
    const th = theta.get(h.parent)!;
    if (!(th > 0) || !(h.parentError > 0)) return h.r;
    const r = Math.round(q - Math.log(h.parentError / th) / Math.log(1 + h.added));
    return Math.min(Math.max(r, 0), q - 1);
  });
}

/**
 * The next mesh for interval estimates `error` (relative, length N) at tolerance eps; breakpoints
 * on [0, 1] (normalised time) of the current mesh.
 */
export function refineLocal(
  scheme: Exclude<SchemeId, "lgr">,
  tau: ArrayLike<number>,
  error: number[],
  eps: number,
  history: IntervalHistory[] | null,
  options: { kappa?: number; maxPerInterval?: number; maxPerPass?: number } = {},
): LocalRefinement {
  const q = ESTIMATE_ORDER[scheme];
  const kappa = options.kappa ?? BETTS_KAPPA;
  const M1 = options.maxPerInterval ?? BETTS_MAX_PER_INTERVAL;
  const N = error.length;
  const M = options.maxPerPass ?? Infinity;
  const r = orderReductions(q, error, history);
  const I = new Array<number>(N).fill(0);
  const predict = (k: number) => (Number.isFinite(error[k]) ? error[k] * Math.pow(1 + I[k], -(q - r[k])) : Infinity);
  let total = 0;
  for (;;) {
    let worst = -1, worstVal = -Infinity;
    for (let k = 0; k < N; k++) {
      if (I[k] >= M1) continue;
      const v = predict(k);
      if (v > worstVal) {
        worstVal = v;
        worst = k;
      }
    }
    // stop when the worst refinable interval is predicted below κε (or none can take another point)
    if (worst < 0 || worstVal <= kappa * eps || total >= M) break;
    // only intervals above the tolerance are refined (Betts: the others already meet it)
    if (error[worst] <= eps) break;
    I[worst]++;
    total++;
  }
  const breakpoints: number[] = [];
  const newHistory: IntervalHistory[] = [];
  for (let k = 0; k < N; k++) {
    const a = tau[k], b = tau[k + 1];
    for (let j = 0; j <= I[k]; j++) {
      breakpoints.push(a + (j / (I[k] + 1)) * (b - a));
      newHistory.push({ parentError: error[k], added: I[k], parent: k, r: r[k] });
    }
  }
  breakpoints.push(1);
  breakpoints[0] = 0;
  let predicted = 0;
  for (let k = 0; k < N; k++) predicted = Math.max(predicted, predict(k));
  return { mesh: { intervals: breakpoints.length - 1, breakpoints }, history: newHistory, added: I, predicted };
}
