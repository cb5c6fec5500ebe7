/**
 * Errors of a discrete solution against the problem's reference (problem.reference).
 *
 *   objectiveAbs = |J − J_ref|, objectiveRel = |J − J_ref| / max(|J_ref|, 1e-12)
 *   finalTimeAbs = |tf − tf_ref|
 *   stateMax     = max over the reference grid points and states of |x_i(t) − x_ref,i(t)| / scale_i
 *   controlMax   = the same for controls (the solution's control interpolant, Solution.controlAt)
 *   costateMax   = the same for columns lambda_<state>, the solution's costate series linearly
 *                  interpolated (no extrapolation outside its own grid)
 *   switchingTimes = max over reference switching times of the distance to the nearest junction
 *                  of the solution's detected arc structure (app/engine/arcs/detect.ts: switching-
 *                  function zeros between bang arcs, departures from a bang arc measured from
 *                  the control's own barrier offset, boundary-arc entries and exits from the
 *                  constraint's activity), pooled over all controls. Null when no junction is
 *                  detected. A structure with a missing junction still gets a number (the distance
 *                  to the nearest one); the structure itself is compared separately (arcs).
 * The solution is sampled at the reference's own time points (no interpolation of the reference);
 * with a free final time both are compared at equal normalised time τ = (t − t0)/(tf − t0).
 * Every field is null when the reference has no such value.
 */
import type { CompiledProblem } from "../problem/types";
import type { Solution } from "../schemes/types";
import { linearAt } from "../schemes/interpolation";
import { detectArcs } from "../arcs/detect";

export interface SolutionErrors {
  objectiveAbs: number | null;
  objectiveRel: number | null;
  finalTimeAbs: number | null;
  stateMax: number | null;
  controlMax: number | null;
  costateMax: number | null;
  switchingTimes: number | null;
}

export function solutionErrors(problem: CompiledProblem, sol: Solution): SolutionErrors {
  const ref = problem.reference;
  const out: SolutionErrors = {
    objectiveAbs: null, objectiveRel: null, finalTimeAbs: null, stateMax: null, controlMax: null, costateMax: null, switchingTimes: null,
  };
  if (ref.objective && Number.isFinite(sol.objective)) {
    const d = Math.abs(sol.objective - ref.objective.value);
    out.objectiveAbs = d;
    out.objectiveRel = d / Math.max(Math.abs(ref.objective.value), 1e-12);
  }
  if (ref.finalTime) out.finalTimeAbs = Math.abs(sol.tf - ref.finalTime.value);
  const tr = ref.trajectory;
  if (tr && tr.t.length > 1) {
    const rt0 = tr.t[0], rT = tr.t[tr.t.length - 1] - rt0;
    const T = sol.tf - sol.t0;
    const map = (t: number) => sol.t0 + ((t - rt0) / rT) * T;
    const xs = new Float64Array(problem.nx), us = new Float64Array(problem.nu);
    let sMax: number | null = null, uMax: number | null = null, lMax: number | null = null;
    for (let k = 0; k < tr.t.length; k++) {
      const t = map(tr.t[k]);
      sol.stateAt(t, xs);
      sol.controlAt(t, us);
      problem.states.forEach((s, i) => {
        const col = tr.columns[s.name];
        if (!col) return;
        const e = Math.abs(xs[i] - col[k]) / (s.scale > 0 ? s.scale : 1);
        sMax = Math.max(sMax ?? 0, Number.isFinite(e) ? e : Infinity);
      });
      problem.controls.forEach((c, i) => {
        const col = tr.columns[c.name];
        if (!col) return;
        const e = Math.abs(us[i] - col[k]) / (c.scale > 0 ? c.scale : 1);
        uMax = Math.max(uMax ?? 0, Number.isFinite(e) ? e : Infinity);
      });
      if (sol.costates && sol.tLambda && sol.tLambda.length > 0) {
        const tl = sol.tLambda;
        if (t < tl[0] - 1e-12 * Math.abs(T) || t > tl[tl.length - 1] + 1e-12 * Math.abs(T)) continue;
        problem.states.forEach((s, i) => {
          const col = tr.columns[`lambda_${s.name}`];
          if (!col) return;
          const e = Math.abs(linearAt(tl, sol.costates![i], t) - col[k]);
          lMax = Math.max(lMax ?? 0, Number.isFinite(e) ? e : Infinity);
        });
      }
    }
    out.stateMax = sMax;
    out.controlMax = uMax;
    out.costateMax = lMax;
  }
  if (ref.switchingTimes && ref.switchingTimes.values.length > 0) {
    const ev = detectedJunctions(problem, sol);
    if (ev.length > 0) {
      let worst = 0;
      for (const ts of ref.switchingTimes.values) {
        let best = Infinity;
        for (const e of ev) best = Math.min(best, Math.abs(e - ts));
        worst = Math.max(worst, best);
      }
      out.switchingTimes = worst;
    }
  }
  return out;
}

/** Junction times of the detected arc structure, all controls pooled and sorted (empty on failure). */
export function detectedJunctions(problem: CompiledProblem, sol: Solution): number[] {
  try {
    return detectArcs(problem, sol).controls.flatMap((c) => c.junctions).sort((a, b) => a - b);
  } catch {
    return [];
  }
}

/**
 * Times where a control (on the control grid) or a state with a finite bound (on the state grid)
 * enters or leaves a bound, taken at the midpoint between the two grid points where the
 * activity changes. "At a bound" means within 1e-5 · scale of it.
 */
export function boundEvents(problem: CompiledProblem, sol: Solution): number[] {
  const events: number[] = [];
  const scan = (t: Float64Array, y: Float64Array, lo: number, hi: number, scale: number) => {
    const tolA = 1e-5 * (scale > 0 ? scale : 1);
    const status = (v: number) => (Number.isFinite(lo) && v - lo <= tolA ? -1 : Number.isFinite(hi) && hi - v <= tolA ? 1 : 0);
    let prev = status(y[0]);
    for (let k = 1; k < y.length; k++) {
      const s = status(y[k]);
      if (s !== prev) events.push(0.5 * (t[k - 1] + t[k]));
      prev = s;
    }
  };
  problem.controls.forEach((c, i) => {
    if (Number.isFinite(c.lower) || Number.isFinite(c.upper)) scan(sol.tu, sol.controls[i], c.lower, c.upper, c.scale);
  });
  problem.states.forEach((s, i) => {
    if (Number.isFinite(s.lower) || Number.isFinite(s.upper)) scan(sol.t, sol.states[i], s.lower, s.upper, s.scale);
  });
  return events.sort((a, b) => a - b);
}
