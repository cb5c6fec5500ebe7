/**
 * A final-step point judged with multipliers of its own (ipm.ts, final steps after the KKT test):
 * the least-norm correction onto c = 0 when ‖c‖∞ > tol, then multipliers estimated for the
 * (corrected) point (multiplier-estimate.ts), then the same KKT test and duality gap as any other
 * point. The iteration itself goes on from its own point; a result is only a candidate for the
 * best converged point the final steps return.
 */
import { CONSTANTS as C, type ResolvedOptions } from "./options";
import { ModelError, type InternalProblem } from "./internal";
import type { KktSystem } from "./kkt";
import { kktError } from "./convergence";
import { solverGap } from "./gap";
import { boundSlacks } from "./vectors";
import { estimateMultipliers, feasibilityCorrection, type MultiplierEstimateWork } from "./multiplier-estimate";

/** Workspaces, made on first use: the multipliers, the corrected point and its model values. */
export interface FinalPointWork {
  lambda: Float64Array; zL: Float64Array; zU: Float64Array; work: MultiplierEstimateWork;
  /** The corrected point, its gradient, constraints, Jacobian values, slacks; the correction. */
  w: Float64Array; grad: Float64Array; c: Float64Array; jv: Float64Array; sL: Float64Array; sU: Float64Array; d: Float64Array;
}

export function finalPointWork(N: number, m: number, nnzJ: number, ones: Float64Array): FinalPointWork {
  return {
    lambda: new Float64Array(m), zL: new Float64Array(N), zU: new Float64Array(N),
    work: { ones, rhs: new Float64Array(N + m), sol: new Float64Array(N + m), jtl: new Float64Array(N), gradL: new Float64Array(N) },
    w: new Float64Array(N), grad: new Float64Array(N), c: new Float64Array(m), jv: new Float64Array(nnzJ),
    sL: new Float64Array(N), sU: new Float64Array(N), d: new Float64Array(N),
  };
}

/** A point that passes the KKT test with multipliers of its own (in the work's lambda, zL, zU). */
export interface FinalPointResult {
  /** The point: the iterate itself, or the work's corrected point. */
  w: Float64Array;
  corrected: boolean;
  /** Scaled KKT error and dual infeasibility with the estimated multipliers. */
  E: number;
  dual: number;
  /** Duality gap in the user's objective units (gap.ts). */
  gap: number;
  infPr: number;
}

/** The point the iteration stands on: w with its gradient, constraints, Jacobian values and slacks. */
export interface IteratePoint {
  w: Float64Array; grad: Float64Array; c: Float64Array; jv: Float64Array; sL: Float64Array; sU: Float64Array;
  /** ‖c‖∞ (scaled) and the reported primal infeasibility. */
  primal: number;
  infPr: number;
}

/**
 * Multipliers of its own for the iterate (corrected first when ‖c‖∞ > tol); null when no such
 * point passes the KKT test (tol, dualInfTol, complInfTol, constrViolTol). `tau`: the fraction to
 * the boundary the correction keeps. `zL`, `zU`: the iteration's bound multipliers.
 */
export function judgeFinalPoint(
  P: InternalProblem, kkt: KktSystem, x: IteratePoint, zL: Float64Array, zU: Float64Array,
  hasL: Uint8Array, hasU: Uint8Array, tau: number, o: ResolvedOptions, work: FinalPointWork,
): FinalPointResult | null {
  const { N, m } = P;
  let p: IteratePoint = x;
  let corrected = false;
  if (x.primal > o.tol) {
    const a = feasibilityCorrection(kkt, work.work.ones, x.jv, x.c, hasL, hasU, x.sL, x.sU, tau, work.work.rhs, work.work.sol, work.d);
    if (!(a > 0)) return null;
    for (let i = 0; i < N; i++) work.w[i] = x.w[i] + a * work.d[i];
    try {
      P.gradF(work.w, work.grad);
      P.c(work.w, work.c);
      P.jac(work.w, work.jv);
    } catch (e) {
      if (e instanceof ModelError) return null;
      throw e;
    }
    boundSlacks(N, work.w, P.wL, P.wU, hasL, hasU, work.sL, work.sU);
    p = { w: work.w, grad: work.grad, c: work.c, jv: work.jv, sL: work.sL, sU: work.sU, primal: 0, infPr: P.reportInfPr(work.w, work.c) };
    corrected = true;
  }
  if (!(p.infPr <= o.constrViolTol)) return null;
  const absorb = C.estimateAbsorbFraction * o.tol;
  if (!estimateMultipliers(kkt, p.grad, p.jv, P.jRows, P.jCols, hasL, hasU, p.sL, p.sU, zL, zU, absorb, absorb, work.lambda, work.zL, work.zU, work.work)) return null;
  const e = kktError(work.work.gradL, p.c, p.sL, p.sU, hasL, hasU, work.lambda, work.zL, work.zU, 0);
  if (!(e.E <= o.tol && e.dual * P.dualUnscale <= o.dualInfTol && e.compl * P.dualUnscale <= o.complInfTol)) return null;
  const gap = solverGap(N, p.sL, p.sU, hasL, hasU, work.zL, work.zU, m, work.lambda, p.c, P.relaxL, P.relaxU).total * P.dualUnscale;
  return { w: p.w, corrected, E: e.E, dual: e.dual, gap, infPr: p.infPr };
}
