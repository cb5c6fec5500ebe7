/**
 * Junction times between two consecutive filtered runs, refined by linear interpolation of an
 * indicator on the grid points from the last point of the left run to the first of the right:
 *   two opposite bang arcs:     zero of the switching function σ (Bryson and Ho 1975, §3.9:
 *                               the control switches where σ changes sign), or, without
 *                               costates, the crossing of the mid-range value (a + b)/2;
 *   a bang arc and another:     crossing of the distance to that bound through its tolerance
 *                               above the bang arc's own offset (an interior-point solver leaves
 *                               a "bang" control a barrier-sized distance δ inside its bound, up to
 *                               a few 1e-3 of its range; the control leaves the bang arc where
 *                               it departs from δ, not from the bound itself);
 *   a boundary arc and another: crossing of the constraint distance through its threshold;
 *   otherwise (singular/interior): the midpoint of the gap.
 * When several grid intervals cross, the one nearest the middle of the gap is used.
 */
import type { ConstraintDistance } from "./classify";
import { crossing } from "./interp";

export interface JunctionContext {
  tu: Float64Array;
  u: Float64Array;
  lower: number;
  upper: number;
  tolU: number;
  sigma: Float64Array | null;
  constraints: ConstraintDistance[];
}

function isBang(label: string): boolean {
  return label === "lower" || label === "upper";
}

/** Crossing of the level by d on grid points i..m (i < m), nearest the gap's middle. */
function crossingIn(tu: Float64Array, d: ArrayLike<number>, i: number, m: number, level: number): number {
  const mid = 0.5 * (tu[i] + tu[m]);
  let best = mid;
  let bestDist = Infinity;
  for (let k = i; k < m; k++) {
    const fa = d[k] - level;
    const fb = d[k + 1] - level;
    if (fa === 0 && fb === 0) continue;
    if (fa * fb <= 0) {
      const tc = crossing(tu[k], d[k], tu[k + 1], d[k + 1], level);
      if (Math.abs(tc - mid) < bestDist) {
        bestDist = Math.abs(tc - mid);
        best = tc;
      }
    }
  }
  return best;
}

/**
 * Barrier offset of a bang run on grid points k0..k1: the median of side·(u − bound) over the run
 * (≥ 0; side = +1 for the lower bound, −1 for the upper).
 */
export function bangOffset(u: Float64Array, k0: number, k1: number, bound: number, side: 1 | -1): number {
  const d: number[] = [];
  for (let k = k0; k <= k1; k++) d.push(Math.max(0, side * (u[k] - bound)));
  d.sort((x, y) => x - y);
  return d.length ? d[d.length >> 1] : 0;
}

/**
 * Junction time between the run ending at grid point i (label a) and the run starting at m
 * (label b). `bangRun` gives the grid extent of the bang run when one of the two is bang (for its
 * barrier offset); without it the offset is taken as 0.
 */
export function junctionTime(ctx: JunctionContext, a: string, i: number, b: string, m: number, bangRun?: { k0: number; k1: number }): number {
  const { tu, u } = ctx;
  const boundaryName = a.startsWith("boundary:") ? a.slice(9) : b.startsWith("boundary:") ? b.slice(9) : null;
  if (boundaryName !== null) {
    const c = ctx.constraints.find((q) => q.name === boundaryName);
    if (c) return crossingIn(tu, c.d, i, m, c.threshold);
    return 0.5 * (tu[i] + tu[m]);
  }
  if (isBang(a) && isBang(b)) {
    if (ctx.sigma) return crossingIn(tu, ctx.sigma, i, m, 0);
    return crossingIn(tu, u, i, m, 0.5 * (ctx.lower + ctx.upper));
  }
  const bang = isBang(a) ? a : isBang(b) ? b : null;
  if (bang !== null) {
    const bound = bang === "lower" ? ctx.lower : ctx.upper;
    const side = bang === "lower" ? 1 : -1;
    const offset = bangRun ? bangOffset(u, bangRun.k0, bangRun.k1, bound, side) : 0;
    const d = new Float64Array(m - i + 1);
    for (let k = i; k <= m; k++) d[k - i] = side * (u[k] - bound);
    const sub = tu.subarray(i, m + 1);
    return crossingIn(sub, d, 0, m - i, offset + ctx.tolU);
  }
  return 0.5 * (tu[i] + tu[m]);
}
