/**
 * From the detected per-control arc sequences (app/engine/arcs) to one combined sequence for
 * shooting: junctions of all controls are pooled, the junctions of different controls into or out
 * of the same boundary arc closer than `mergeGap` are taken as one (their mean), and each combined
 * arc records the kind of every control at its midpoint. On a
 * boundary arc the first control labelled "boundary" carries the constraint; others labelled
 * "boundary" become "interior" (they solve ∂H̃/∂u = 0 with the same H̃).
 */
import type { ArcKind, ArcStructure } from "../arcs/types";
import type { CompiledProblem } from "../problem/types";
import type { Solution } from "../schemes/types";
import type { ConstraintSide } from "./conditions";
import type { ShootingArc } from "./multiple-shooting";

export interface CombinedStructure {
  arcs: ShootingArc[];
  junctions: number[];
}

/** Which side of the named constraint is active at time t of the direct solution. */
export function constraintSide(problem: CompiledProblem, sol: Solution, name: string, t: number): ConstraintSide {
  const { nx, nu } = problem;
  const x = new Float64Array(nx);
  const u = new Float64Array(nu);
  sol.stateAt(t, x);
  sol.controlAt(t, u);
  const pick = (value: number, lower: number, upper: number, source: number): ConstraintSide => {
    const dl = Number.isFinite(lower) ? Math.abs(value - lower) : Infinity;
    const du = Number.isFinite(upper) ? Math.abs(value - upper) : Infinity;
    return du <= dl ? { name, side: 1, bound: upper, source } : { name, side: -1, bound: lower, source };
  };
  const m = problem.pathInfo.findIndex((c) => c.name === name);
  if (m >= 0) {
    const z = new Float64Array(1 + nx + nu);
    z[0] = t;
    z.set(x, 1);
    z.set(u, 1 + nx);
    const c = new Float64Array(problem.pathInfo.length);
    problem.path.eval(z, c);
    return pick(c[m], problem.pathInfo[m].lower, problem.pathInfo[m].upper, m);
  }
  const i = problem.states.findIndex((s) => s.name === name);
  if (i < 0) throw new Error(`shooting (${problem.id}): arc constraint '${name}' is neither a path constraint nor a state`);
  return pick(x[i], problem.states[i].lower, problem.states[i].upper, -1 - i);
}

export function combineStructure(problem: CompiledProblem, sol: Solution, s: ArcStructure, mergeGap: number): CombinedStructure {
  // Junctions of all controls; only junctions into or out of the same boundary arc, of different
  // controls and closer than mergeGap, are one junction (a boundary arc shows in every control's
  // sequence). Other junctions stay distinct however close: two controls may switch a fraction of
  // a grid interval apart (the Marten hopper's thrust and pitch rate).
  type J = { t: number; key: string | null; control: number };
  const all: J[] = [];
  s.controls.forEach((c, j) => {
    c.junctions.forEach((t, k) => {
      const a = c.arcs[k];
      const b = c.arcs[k + 1];
      const key = a.kind === "boundary" ? `out:${a.constraint}` : b.kind === "boundary" ? `in:${b.constraint}` : null;
      all.push({ t, key, control: j });
    });
  });
  all.sort((x, y) => x.t - y.t);
  const junctions: number[] = [];
  let cluster: J[] = [];
  const flush = () => {
    if (cluster.length) junctions.push(cluster.reduce((acc, q) => acc + q.t, 0) / cluster.length);
    cluster = [];
  };
  for (const q of all) {
    const last = cluster[cluster.length - 1];
    const joins = last && q.key !== null && q.key === last.key && q.t - last.t <= mergeGap && !cluster.some((c) => c.control === q.control);
    if (!joins) flush();
    cluster.push(q);
  }
  flush();
  const T = [sol.t0, ...junctions, sol.tf];
  const arcs: ShootingArc[] = [];
  const times: number[] = [];
  for (let a = 0; a + 1 < T.length; a++) {
    const mid = 0.5 * (T[a] + T[a + 1]);
    let constraintName: string | null = null;
    const labels: string[] = [];
    const kinds: ArcKind[] = s.controls.map((c) => {
      const arc = c.arcs.find((q) => q.t0 <= mid && mid <= q.t1) ?? c.arcs[c.arcs.length - 1];
      labels.push(arc.kind === "boundary" ? `boundary:${arc.constraint ?? "?"}` : arc.kind);
      if (arc.kind === "boundary") {
        if (constraintName === null) {
          constraintName = arc.constraint ?? null;
          return "boundary";
        }
        return "interior";
      }
      return arc.kind;
    });
    const constraint = constraintName !== null ? constraintSide(problem, sol, constraintName, mid) : null;
    const prev = arcs[arcs.length - 1];
    if (prev && prev.kinds.every((k, j) => k === kinds[j]) && (prev.constraint?.name ?? null) === (constraint?.name ?? null)) continue;
    if (arcs.length > 0) times.push(T[a]);
    arcs.push({ kinds, constraint, labels });
  }
  return { arcs, junctions: times };
}

/** Signature of a combined sequence, in the form of app/engine/arcs signatures. */
export function combinedSignature(problem: CompiledProblem, arcs: ShootingArc[]): string {
  const label = (arc: ShootingArc, j: number) => arcControlLabel(arc, j);
  const perControl = problem.controls.map((_, j) => {
    const seq: string[] = [];
    for (const arc of arcs) {
      const l = label(arc, j);
      if (seq[seq.length - 1] !== l) seq.push(l);
    }
    return seq.join("|");
  });
  return problem.nu === 1 ? perControl[0] : problem.controls.map((c, j) => `${c.name}=${perControl[j]}`).join(";");
}

/** Report label of control j on a combined arc. */
export function arcControlLabel(arc: ShootingArc, j: number): string {
  if (arc.labels) return arc.labels[j];
  return arc.kinds[j] === "boundary" && arc.constraint ? `boundary:${arc.constraint.name}` : arc.kinds[j];
}
