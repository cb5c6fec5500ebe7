/**
 * Does an error sequence over several meshes support an order at all? A least-squares slope
 * (convergence-order.ts) through errors that rise and fall prints a precise-looking order that
 * means nothing. This module reads the sequence first:
 *
 * - "monotone": every error below the one of the next coarser mesh (pairs where both are at the
 *   floor excepted); the order is fitted over every mesh;
 * - "pre-asymptotic": the errors fall strictly from some mesh N₀ on, over at least two meshes, but
 *   not before it; the order is fitted from N₀ on and the coarser meshes are named as outside the
 *   asymptotic range (the error model e ≈ C N^(−p) holds only for N large enough: Betts,
 *   Practical Methods for Optimal Control Using Nonlinear Programming, 2nd ed., SIAM 2010, §4.7;
 *   Hairer, Nørsett and Wanner, Solving ODEs I, 2nd ed., 1993, §II.4 on observed orders);
 * - "not-monotone": the finest mesh's error is not below the previous one: no order is given;
 * - "at-floor": every error at or below the resolution floor (1e-10 by default, the floor of
 *   issue 17's goal): there is nothing left to fit.
 * Two neighbouring errors both at or below the floor count as falling (as in
 * bench/mesh-monotonicity.bench.ts).
 *
 * Beside the verdict, the largest solver share over the meshes: the solver's own bound on its
 * error in the objective (the duality gap, app/engine/nlp/gap.ts) divided by the error. A small
 * share rules the solver out: the pattern is the discretisation's own. A share of 0.1 or more
 * only means the solver could account for the pattern, not that it does: the gap bounds the
 * solver's part from above and can exceed it many times (alder-ridge-cable-car Hermite–Simpson,
 * N = 30 … 240: errors 3.86e-9, 2.41e-10, 1.51e-11, 9.37e-13, order 4.00 throughout, with a gap of
 * 0.4 and 9 times the error at N = 120 and 240; DEVELOPERS.md, 2026-12-04), so the note says
 * "solver possible". The estimate is null when unknown (an external solver, an 'acceptable' end).
 */
import { fitConvergenceOrder } from "./convergence-order";

export interface MeshError {
  intervals: number;
  /** Error on that mesh (same metric for all points), > 0. */
  error: number;
  /** Solver error estimate in the same units as `error`, or null when unknown. */
  solverError: number | null;
}

export type VerdictKind = "monotone" | "pre-asymptotic" | "not-monotone" | "at-floor" | "too-few";

export interface ConvergenceVerdict {
  kind: VerdictKind;
  /** Order fitted over the meshes from `fromIntervals` on; null when not given. */
  order: number | null;
  /** Ĉ of that fit. */
  constant: number | null;
  /** Coarsest mesh of the fit (null without a fit). */
  fromIntervals: number | null;
  /** Meshes in the fit. */
  points: number;
  /** Largest solver error ÷ error over the meshes with an estimate; null when none has one. */
  solverShare: number | null;
  /**
   * Who made the pattern when it is not monotone: "discretisation" (share below 0.1: the solver is
   * ruled out), "solver" (share 0.1 or more: the solver could account for it; shown as "solver
   * possible") or "unknown".
   */
  cause: "discretisation" | "solver" | "unknown" | null;
  /** One line for the screen, e.g. "pre-asymptotic below N = 60 (discretisation; solver share ≤ 2e-6)". */
  note: string;
}

/** Errors at or below this count as having reached the floor (issue 17: "until 1e-10 relative"). */
export const RESOLUTION_FLOOR = 1e-10;

/** A solver share below this calls the pattern the discretisation's (common practice, no source). */
export const DISCRETISATION_SHARE = 0.1;

/**
 * The solver's error estimate written in an Arcwatch case message ("duality gap 1.01e-11 ≤ …",
 * app/engine/nlp/ipm.ts): the only place a stored case keeps it. null when the message has none.
 */
export function solverErrorFromMessage(message: string | null | undefined): number | null {
  const m = /duality gap (\d+(?:\.\d+)?(?:e[-+]?\d+)?)/i.exec(message ?? "");
  if (!m) return null;
  const v = Number(m[1]);
  return Number.isFinite(v) && v >= 0 ? v : null;
}

const fmt = (v: number) => v.toExponential(0).replace("e+", "e");

/**
 * Verdict on errors over meshes (one problem, one scheme). Points with the same N keep the
 * smallest error; errors below `floor` (round-off) are left out as in the order fit.
 */
export function convergenceVerdict(points: readonly MeshError[], floor = 0, flat = RESOLUTION_FLOOR): ConvergenceVerdict {
  const byN = new Map<number, MeshError>();
  for (const p of points) {
    if (!(p.intervals > 0) || !(p.error > 0) || !Number.isFinite(p.error) || p.error < floor) continue;
    const cur = byN.get(p.intervals);
    if (!cur || p.error < cur.error) byN.set(p.intervals, p);
  }
  const pts = [...byN.values()].sort((a, b) => a.intervals - b.intervals);
  let share: number | null = null;
  for (const p of pts) if (p.solverError !== null && Number.isFinite(p.solverError)) share = Math.max(share ?? 0, p.solverError / p.error);
  const none = { order: null, constant: null, fromIntervals: null, points: 0, solverShare: share };
  if (pts.length < 2) return { kind: "too-few", cause: null, note: pts.length === 1 ? "one mesh" : "no solved mesh", ...none };
  if (pts.every((p) => p.error <= flat)) return { kind: "at-floor", cause: null, note: `errors at the floor (≤ ${fmt(flat)}) on every mesh; no order`, ...none };
  // Start of the strictly decreasing tail (both at the floor counts as falling).
  let k0 = pts.length - 1;
  while (k0 > 0 && (pts[k0]!.error < pts[k0 - 1]!.error || (pts[k0]!.error <= flat && pts[k0 - 1]!.error <= flat))) k0--;
  const cause = share === null ? "unknown" : share < DISCRETISATION_SHARE ? "discretisation" : "solver";
  const why = share === null
    ? "solver share unknown"
    : cause === "discretisation"
      ? `discretisation; solver share ≤ ${fmt(share)}`
      : `solver possible; solver share ${fmt(share)}, an upper bound on its part`;
  if (k0 === pts.length - 1) {
    return { kind: "not-monotone", cause, note: `not monotone: the error at N = ${pts[k0]!.intervals} is not below N = ${pts[k0 - 1]!.intervals} (${why}); no order`, ...none };
  }
  const tail = pts.slice(k0);
  const fit = fitConvergenceOrder(tail.map((p) => p.intervals), tail.map((p) => p.error))!;
  const base = { order: fit.order, constant: fit.constant, fromIntervals: tail[0]!.intervals, points: tail.length, solverShare: share };
  if (k0 === 0) return { kind: "monotone", cause: null, note: "", ...base };
  return { kind: "pre-asymptotic", cause, note: `pre-asymptotic below N = ${tail[0]!.intervals} (${why}); order fitted over N = ${tail[0]!.intervals}…${tail[tail.length - 1]!.intervals}`, ...base };
}
