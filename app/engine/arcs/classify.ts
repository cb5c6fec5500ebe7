/**
 * Pointwise classification of a direct solution's control grid, before any merging.
 *
 * For control j at grid time t_k (bounds a_j ≤ u_j ≤ b_j, range R_j = b_j − a_j, or the observed
 * range where a side is absent):
 *   "lower"  if u − a ≤ τ_u R,  "upper" if b − u ≤ τ_u R   (τ_u = boundTol)
 *   "boundary:<c>" otherwise, if a path constraint or state bound c is active:
 *                  |c − bound| ≤ τ_c · scale   (τ_c = activeTol; scale = max_k max(|c_k − bound|,
 *                  |c_k|, |bound|)), or in a stretch
 *                  between two active points where |c − bound| stays ≤ τ_b · scale
 *                  (τ_b = bridgeTol: the dip of direct solutions between the touch points that
 *                  mark a higher-order boundary arc), or where a path constraint's multiplier
 *                  stands clearly above the interior-point floor (constants below)
 *   "singular" otherwise if H is affine in u_j, unless the switching function is clearly nonzero
 *              (|σ| > τ_σ max|σ|), in which case the sign of σ picks the bound (mesh noise,
 *              pseudospectral ringing on a bang arc)
 *   "interior" otherwise.
 * A state constraint active while the control sits on a bound (e.g. the mass floor during a coast)
 * does not make a boundary arc: the bound already explains the control. An active mixed constraint
 * in that control does (a unit thrust direction with one cosine at ±1 rides the constraint).
 * Tolerances are common practice, no source; they are options (ArcDetectionOptions).
 */
import type { CompiledProblem } from "../problem/types";
import type { Solution } from "../schemes/types";

/** A multiplier counts when ≥ multiplierShare · max|μ| (common practice, no source). */
export const multiplierShare = 0.02;
/** ... and only when max|μ| ≥ multiplierSeparation · median|μ| (the interior-point floor μ/s). */
export const multiplierSeparation = 100;
/** ... and the value is within nearTol · scale of the bound. */
export const nearTol = 1e-2;

/** One monitored constraint side: value d_k = distance to its bound (≥ 0 when feasible). */
export interface ConstraintDistance {
  name: string;
  /** Distance to the bound at each control grid point. */
  d: Float64Array;
  /** Activity threshold in the units of d. */
  threshold: number;
  /** 1 where the constraint counts as active (threshold, then bridging; see constraintDistances). */
  active: Uint8Array;
  /** Whether the constraint depends on each control (a mixed constraint c(t, x, u)). */
  dependsOn: boolean[];
}

/**
 * Distances of every path-constraint side and state bound to its bound at the control grid
 * times tu (states from sol.stateAt). Sides that never come within the threshold are dropped.
 */
export function constraintDistances(problem: CompiledProblem, sol: Solution, activeTol: number, bridgeTol: number): ConstraintDistance[] {
  const { nx, nu } = problem;
  const nt = sol.tu.length;
  const x = new Float64Array(nx);
  const z = new Float64Array(1 + nx + nu);
  const np = problem.pathInfo.length;
  const cval = Array.from({ length: np }, () => new Float64Array(nt));
  const sval = Array.from({ length: nx }, () => new Float64Array(nt));
  const c = new Float64Array(np);
  for (let k = 0; k < nt; k++) {
    const t = sol.tu[k];
    sol.stateAt(t, x);
    z[0] = t;
    z.set(x, 1);
    for (let j = 0; j < nu; j++) z[1 + nx + j] = sol.controls[j][k];
    if (np > 0) {
      problem.path.eval(z, c);
      for (let m = 0; m < np; m++) cval[m][k] = c[m];
    }
    for (let i = 0; i < nx; i++) sval[i][k] = x[i];
  }
  const out: ConstraintDistance[] = [];
  const pathUses = (m: number) => {
    const uses = new Array<boolean>(nu).fill(false);
    const fn = problem.path;
    for (let k = 0; k < fn.jacRows.length; k++) if (fn.jacRows[k] === m && fn.jacCols[k] > nx) uses[fn.jacCols[k] - 1 - nx] = true;
    return uses;
  };
  const add = (name: string, v: Float64Array, bound: number, side: 1 | -1, mu: Float64Array | null = null, dependsOn = new Array<boolean>(nu).fill(false)) => {
    if (!Number.isFinite(bound)) return;
    const d = new Float64Array(nt);
    // Scale: the largest distance, but at least the size of the values and of the bound, so that a
    // constraint active everywhere (all distances ≈ 0) still has a meaningful threshold.
    let scale = Math.max(1e-12, Math.abs(bound));
    for (let k = 0; k < nt; k++) {
      d[k] = side * (v[k] - bound);
      scale = Math.max(scale, Math.abs(d[k]), Math.abs(v[k]));
    }
    const threshold = activeTol * scale;
    const active = new Uint8Array(nt);
    for (let k = 0; k < nt; k++) if (d[k] <= threshold) active[k] = 1;
    // Multipliers: a path constraint is also active where its multiplier (in magnitude: schemes
    // may scale or sign it differently; the value test picks the side) stands clearly above the
    // interior-point noise floor and the value is near the bound.
    if (mu && mu.length === nt) {
      const a = Array.from(mu, (m) => Math.abs(m)).sort((x, y) => x - y);
      const median = a[a.length >> 1];
      const top = a[a.length - 1];
      if (top > 0 && top >= multiplierSeparation * median) {
        for (let k = 0; k < nt; k++) {
          if (Math.abs(mu[k]) >= multiplierShare * top && d[k] <= nearTol * scale) active[k] = 1;
        }
      }
    }
    if (!active.includes(1)) return;
    // Bridging: direct solutions of higher-order state constraints often touch the bound at the
    // arc's ends and dip slightly in between; a gap between active points whose distance stays
    // below bridgeTol · scale is part of the arc.
    let last = -1;
    for (let k = 0; k < nt; k++) {
      if (!active[k]) continue;
      if (last >= 0 && k > last + 1) {
        let dmax = 0;
        for (let q = last + 1; q < k; q++) dmax = Math.max(dmax, d[q]);
        if (dmax <= bridgeTol * scale) for (let q = last + 1; q < k; q++) active[q] = 1;
      }
      last = k;
    }
    out.push({ name, d, threshold, active, dependsOn });
  };
  for (let m = 0; m < np; m++) {
    const info = problem.pathInfo[m];
    if (info.lower === info.upper) continue; // an equality path constraint is always active
    const mu = sol.pathMultipliers ? sol.pathMultipliers[m] : null;
    const uses = pathUses(m);
    add(info.name, cval[m], info.lower, 1, mu, uses);
    add(info.name, cval[m], info.upper, -1, mu, uses);
  }
  for (let i = 0; i < nx; i++) {
    add(problem.states[i].name, sval[i], problem.states[i].lower, 1);
    add(problem.states[i].name, sval[i], problem.states[i].upper, -1);
  }
  return out;
}

export interface ClassifyInput {
  /** Index of the control being classified. */
  control: number;
  lower: number;
  upper: number;
  /** Control values on the grid. */
  u: Float64Array;
  affine: boolean;
  /** Switching function on the grid (already sign-corrected) or null. */
  sigma: Float64Array | null;
  constraints: ConstraintDistance[];
  boundTol: number;
  switchTol: number;
}

/** Effective bound range of a control: b − a, or the observed range where a side is absent. */
export function controlRange(lower: number, upper: number, u: Float64Array): number {
  if (Number.isFinite(lower) && Number.isFinite(upper)) return Math.max(upper - lower, 1e-300);
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of u) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  return Math.max(hi - lo, Math.abs(hi), Math.abs(lo), 1e-300);
}

/** Labels per grid point: "lower", "upper", "interior", "singular" or "boundary:<name>". */
export function classifyPoints(inp: ClassifyInput): string[] {
  const { lower, upper, u, sigma } = inp;
  const R = controlRange(lower, upper, u);
  const tolU = inp.boundTol * R;
  let sigmaMax = 0;
  if (sigma) for (const v of sigma) sigmaMax = Math.max(sigmaMax, Math.abs(v));
  const useSigma = sigma !== null && sigmaMax > 0 && inp.affine;
  const labels: string[] = new Array(u.length);
  const activeAt = (k: number, mixedOnly: boolean): string | null => {
    let active: string | null = null;
    let best = Infinity;
    for (const c of inp.constraints) {
      if (mixedOnly && !c.dependsOn[inp.control]) continue;
      const r = c.d[k] / c.threshold;
      if (c.active[k] && r < best) {
        best = r;
        active = c.name;
      }
    }
    return active;
  };
  for (let k = 0; k < u.length; k++) {
    const v = u[k];
    const atLower = Number.isFinite(lower) && v - lower <= tolU;
    const atUpper = !atLower && Number.isFinite(upper) && upper - v <= tolU;
    if (atLower || atUpper) {
      // A mixed constraint in this control that is active too explains the value (e.g. a unit
      // direction vector with one component at ±1); a state constraint does not.
      const mixed = activeAt(k, true);
      labels[k] = mixed !== null ? `boundary:${mixed}` : atLower ? "lower" : "upper";
      continue;
    }
    const active = activeAt(k, false);
    if (active !== null) {
      labels[k] = `boundary:${active}`;
      continue;
    }
    if (!inp.affine) {
      labels[k] = "interior";
      continue;
    }
    if (useSigma && Math.abs(sigma![k]) > inp.switchTol * sigmaMax && Number.isFinite(lower) && Number.isFinite(upper)) {
      labels[k] = sigma![k] > 0 ? "lower" : "upper";
      continue;
    }
    labels[k] = "singular";
  }
  return labels;
}

/**
 * Sign of the costate convention: +1 when σ agrees with the bang points (σ > 0 on "lower",
 * σ < 0 on "upper") at least as often as it disagrees, −1 otherwise. 0 when no bang point has a
 * clearly nonzero σ.
 */
export function costateSign(labels: string[], sigma: Float64Array, switchTol: number): 1 | -1 | 0 {
  let sigmaMax = 0;
  for (const v of sigma) sigmaMax = Math.max(sigmaMax, Math.abs(v));
  let agree = 0;
  let disagree = 0;
  for (let k = 0; k < labels.length; k++) {
    if (Math.abs(sigma[k]) <= switchTol * sigmaMax) continue;
    if (labels[k] === "lower") sigma[k] > 0 ? agree++ : disagree++;
    else if (labels[k] === "upper") sigma[k] < 0 ? agree++ : disagree++;
  }
  if (agree + disagree === 0) return 0;
  return agree >= disagree ? 1 : -1;
}
