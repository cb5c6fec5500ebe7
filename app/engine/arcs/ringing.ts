/**
 * Singular arcs read from the primal control: mesh-scale ringing.
 *
 * On a singular arc the discrete optimum of a direct transcription is not unique to first order
 * in the control: H is affine in u and ∂H/∂u ≈ 0, so an oscillation of the control from one grid
 * point to the next that leaves the states unchanged (u_k + u_{k+1} = 0 in the trapezoidal rule,
 * a period-2 or period-4 pattern with Hermite–Simpson) costs nothing. The transcribed problem
 * then rings between values that may touch the control bounds (J. T. Betts, Practical Methods
 * for Optimal Control and Estimation Using Nonlinear Programming, 2nd ed., SIAM 2010, §4.14 on
 * singular arcs and the oscillating discrete controls they produce; L. T. Biegler, Nonlinear
 * Programming, SIAM 2010, §10.5; both recalled from memory, sections not re-checked).
 * How close to the bound the ringing gets depends on how far the barrier parameter was driven
 * down: a solve stopped at a larger μ rings well inside the bounds (read as "singular"), one
 * driven to a small duality gap (nlp/gap.ts) rings onto the bounds (gannet-ballast-trim,
 * trapezoidal: ±0.368 … ±0.397 of the bound 0.4 at gap 1e-6, ±0.3995 at gap 1e-11). A
 * classification that read "at a bound" as "bang" therefore depended on the stopping rule.
 *
 * A genuine bang arc keeps its control at one bound over consecutive grid points, and a switch
 * between two bang arcs changes label once (possibly through one intermediate point). Ringing
 * instead returns to the same bound after a point or two elsewhere. So a short run of
 * "lower"/"upper" (at most ringingMaxRun points) is relabelled "singular" when, within
 * ringingReach points on either side, the labels leave that bound for "singular" or the opposite
 * bound and come back to it (bound → other → bound), and the switching function is negligible
 * over the run and ringingReach points on each side: |σ| ≤ ringingSigmaTol · max|σ|. Pontryagin's principle (Bryson and Ho
 * 1975, §3.4) puts an affine control on a bound only where σ is clearly nonzero. Measured on the
 * library: ringing points on singular arcs have |σ| from 1e-9 (gannet, trapezoidal) to 7e-3
 * (kestrel-2-ascent, Hermite–Simpson) of max|σ|; the ringing next to a bang–bang switch has σ
 * of the size σ'·h, ≥ 1e-2 of max|σ| at the meshes used. Without costate estimates nothing is
 * relabelled: a switch with ringing and a singular arc cannot be told apart from the control
 * alone. Boundary arcs are left alone (a state-constraint arc is not singular). The three
 * constants are common practice, no source (ringing of period 2 and 4 points is what the
 * library's transcriptions show).
 */
import { runsOf } from "./merge";

/** Longest run of bound points that can be ringing (common practice, no source). */
export const ringingMaxRun = 3;
/** Points on each side searched for the return to the same bound (common practice, no source). */
export const ringingReach = 4;
/** |σ| at most this share of max|σ| counts as zero on ringing points (common practice, no source). */
export const ringingSigmaTol = 1e-2;

function isBang(label: string): boolean {
  return label === "lower" || label === "upper";
}

/**
 * Labels with the bang points of mesh-scale ringing on an affine control turned into
 * "singular" (a new array; the input is not changed). `sigma` is the switching function on the
 * same grid (either sign convention: only |σ| is read), or null, in which case nothing changes.
 */
export function relabelRinging(labels: string[], sigma: Float64Array | null): string[] {
  const n = labels.length;
  const out = labels.slice();
  if (!sigma) return out;
  let sigmaMax = 0;
  for (const v of sigma) sigmaMax = Math.max(sigmaMax, Math.abs(v));
  if (!(sigmaMax > 0)) return out;
  /** From index k stepping by dir: leaves `lab` for a ringing label and returns to it within reach. */
  const returns = (k: number, dir: 1 | -1, lab: string): boolean => {
    let left = false;
    for (let q = k + dir, steps = 0; q >= 0 && q < n && steps < ringingReach; q += dir, steps++) {
      const l = labels[q];
      if (l === lab) {
        if (left) return true;
        continue;
      }
      if (l !== "singular" && !isBang(l)) return false; // a boundary or interior point ends the search
      left = true;
    }
    return false;
  };
  for (const run of runsOf(labels)) {
    const lab = run.label;
    if (!isBang(lab) || run.k1 - run.k0 + 1 > ringingMaxRun) continue;
    if (!returns(run.k0, -1, lab) && !returns(run.k1, 1, lab)) continue;
    // σ negligible over the whole neighbourhood: next to a bang–bang switch σ ≈ σ'·(t − t_s)
    // grows within a few points, on a singular arc it stays at the level of the solver's error.
    let local = 0;
    for (let k = Math.max(0, run.k0 - ringingReach); k <= Math.min(n - 1, run.k1 + ringingReach); k++) local = Math.max(local, Math.abs(sigma[k]));
    if (local > ringingSigmaTol * sigmaMax) continue;
    for (let k = run.k0; k <= run.k1; k++) out[k] = "singular";
  }
  return out;
}
