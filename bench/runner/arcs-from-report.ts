/**
 * Arc structure of a solved case for the "structure" regression rule, computed once after the
 * timed repeats (never inside them): the report's trajectory is turned back into a `Solution`
 * (states and controls linearly interpolated between grid points, costates as reported, no
 * path multipliers) and handed to the engine's arc detection (app/engine/arcs).
 */
import { detectArcs, type ArcStructure } from "../../app/engine/arcs/index";
import type { CompiledProblem } from "../../app/engine/problem/types";
import type { SchemeId, Solution } from "../../app/engine/schemes/types";
import type { SolveTrajectory } from "../../app/engine/solve";

function lerpInto(ts: Float64Array, cols: Float64Array[], t: number, out: Float64Array): void {
  const n = ts.length;
  let lo = 0;
  let hi = n - 1;
  if (t <= ts[0]) hi = 0;
  else if (t >= ts[n - 1]) lo = hi = n - 1;
  else
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (ts[mid] <= t) lo = mid;
      else hi = mid;
    }
  const w = hi === lo ? 0 : (t - ts[lo]) / (ts[hi] - ts[lo]);
  for (let i = 0; i < cols.length; i++) out[i] = cols[i][lo] + w * (cols[i][hi] - cols[i][lo]);
}

export function solutionFromTrajectory(problem: CompiledProblem, scheme: SchemeId, tr: SolveTrajectory, objective: number): Solution {
  const f = (a: number[]) => Float64Array.from(a);
  const t = f(tr.t);
  const tu = f(tr.tu);
  const states = problem.states.map((s) => f(tr.states[s.name] ?? []));
  const controls = problem.controls.map((c) => f(tr.controls[c.name] ?? []));
  const costates = tr.costates && tr.tLambda ? problem.states.map((s) => f(tr.costates![s.name] ?? [])) : null;
  return {
    scheme,
    t,
    states,
    tu,
    controls,
    tLambda: tr.tLambda ? f(tr.tLambda) : null,
    costates: costates && costates.every((c) => c.length === tr.tLambda!.length) ? costates : null,
    pathMultipliers: null,
    t0: t[0],
    tf: t[t.length - 1],
    objective,
    stateAt: (time, out) => lerpInto(t, states, time, out),
    controlAt: (time, out) => lerpInto(tu, controls, time, out),
  };
}

/** Arc structure of a converged report with a trajectory, or null (never throws). */
export function arcsOfReport(problem: CompiledProblem, scheme: SchemeId, trajectory: SolveTrajectory | null, objective: number | null): ArcStructure | null {
  if (!trajectory || trajectory.t.length < 2 || trajectory.tu.length < 2) return null;
  try {
    return detectArcs(problem, solutionFromTrajectory(problem, scheme, trajectory, objective ?? NaN));
  } catch {
    return null;
  }
}
