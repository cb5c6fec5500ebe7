/**
 * The demo history's planted accuracy regression (scripts/demo-seed.ts), made consistent with
 * itself: instead of multiplying the stored error numbers alone (which left the objective and the
 * trajectory of the "less accurate" case identical to the baseline's), the planted case's solution
 * is moved away from the reference by `factor`: every stored state and control value becomes
 * ref + factor·(value − ref), the objective J_ref + factor·(J − J_ref), and the errors are then
 * recomputed from what is stored, the way app/engine/analysis/errors.ts measures them (objective
 * relative to |J_ref|, states and controls at the reference's time grid, divided by the variable's
 * scale; the stored series is interpolated linearly). So a page that shows the objective, the
 * errors and the trajectory of the case shows one story.
 */
import type { CompiledProblem } from "~/engine/problem/types";

export interface StoredTrajectory {
  t: number[];
  states: Record<string, number[]>;
  tu?: number[];
  controls?: Record<string, number[]>;
  [k: string]: unknown;
}

export interface PlantedAccuracy {
  objective: number;
  objectiveErrorAbs: number;
  objectiveErrorRel: number;
  stateError: number | null;
  controlError: number | null;
  trajectory: StoredTrajectory;
}

/** Linear interpolation of (xs, ys) at x, clamped to the ends (xs increasing). */
export function linearAt(xs: ArrayLike<number>, ys: ArrayLike<number>, x: number): number {
  const n = xs.length;
  if (n === 0) return NaN;
  if (x <= xs[0]!) return ys[0]!;
  if (x >= xs[n - 1]!) return ys[n - 1]!;
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid]! <= x) lo = mid;
    else hi = mid;
  }
  const w = (x - xs[lo]!) / (xs[hi]! - xs[lo]! || 1);
  return ys[lo]! + w * (ys[hi]! - ys[lo]!);
}

/**
 * The case's numbers with its deviation from the reference multiplied by `factor`; null when the
 * problem has no reference objective or trajectory, or the case stored no trajectory.
 */
export function plantAccuracyLoss(c: { objective: number | null; trajectoryJson: unknown }, problem: CompiledProblem, factor: number): PlantedAccuracy | null {
  const ref = problem.reference;
  const tr = c.trajectoryJson as StoredTrajectory | null;
  if (!ref.objective || !ref.trajectory || c.objective === null || !tr?.t?.length || !tr.states) return null;
  const rt = ref.trajectory.t;
  const rt0 = rt[0]!;
  const rT = rt[rt.length - 1]! - rt0;
  const t0 = tr.t[0]!;
  const T = tr.t[tr.t.length - 1]! - t0;
  // solution time ↔ reference time, as errors.ts maps them (free final times scale the grid)
  const toRef = (s: number) => rt0 + ((s - t0) / (T || 1)) * rT;
  const toSol = (r: number) => t0 + ((r - rt0) / (rT || 1)) * T;
  const moved = (times: number[], series: Record<string, number[]>) =>
    Object.fromEntries(
      Object.entries(series).map(([name, values]) => {
        const col = ref.trajectory!.columns[name];
        if (!col) return [name, values];
        return [name, values.map((v, i) => {
          const r = linearAt(rt, col, toRef(times[i]!));
          return r + factor * (v - r);
        })];
      }),
    );
  const states = moved(tr.t, tr.states);
  const controls = tr.tu && tr.controls ? moved(tr.tu, tr.controls) : tr.controls;
  const worst = (vars: typeof problem.states, times: number[] | undefined, series: Record<string, number[]> | undefined): number | null => {
    if (!times || !series) return null;
    let m: number | null = null;
    for (const v of vars) {
      const col = ref.trajectory!.columns[v.name];
      const values = series[v.name];
      if (!col || !values) continue;
      for (let k = 0; k < rt.length; k++) {
        const e = Math.abs(linearAt(times, values, toSol(rt[k]!)) - col[k]!) / (v.scale > 0 ? v.scale : 1);
        m = Math.max(m ?? 0, e);
      }
    }
    return m;
  };
  const jRef = ref.objective.value;
  const objective = jRef + factor * (c.objective - jRef);
  const abs = Math.abs(objective - jRef);
  return {
    objective,
    objectiveErrorAbs: abs,
    objectiveErrorRel: abs / Math.max(Math.abs(jRef), 1e-12),
    stateError: worst(problem.states, tr.t, states),
    controlError: worst(problem.controls, tr.tu, controls ?? undefined),
    trajectory: { ...tr, states, ...(controls ? { controls } : {}) },
  };
}
