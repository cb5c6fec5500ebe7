/**
 * Structure confirmation of a refined trajectory: the necessary conditions the shooting equations
 * do not impose by themselves (Bryson and Ho, Applied Optimal Control, 1975, §3.8–3.11, §8.3):
 *   - bang arcs have the switching function's sign (u = lower where ∂H/∂u ≥ 0, upper where ≤ 0);
 *   - Legendre–Clebsch ∂²H/∂u_j² > 0 on interior arcs (eq. (2.5.6) with ≥);
 *   - every control stays within its bounds;
 *   - every state bound and path constraint holds on every arc (they are imposed only on the
 *     boundary arcs of the structure; elsewhere the structure assumed them inactive);
 *   - the inactive endpoint inequalities hold.
 * For the state bounds and path constraints the WORST violation is reported (largest excess over
 * the bound on the dense trajectory, with its time, and the interval around it where the bound is
 * exceeded), not the first crossing: the interval is where refine.ts inserts a boundary arc when
 * it retries.
 *
 * Tolerances: a bound is violated when exceeded by more than 1e-8·(1 + |bound|) (states, path and
 * endpoint constraints) or 1e-9·(upper − lower) (controls); ∂H/∂u has the wrong sign on a bang arc
 * when beyond 1e-7·max(1, |∂H/∂u|) (common practice, no source: a few orders above the shooting
 * residual, far below the violations a wrong structure gives).
 */
import type { CompiledProblem } from "../problem/types";
import { denseJacobian, type OptimalityConditions } from "./conditions";
import type { MultipleShooting, ShootingArc } from "./multiple-shooting";

/** A state bound or path constraint exceeded on the refined trajectory. */
export interface ConstraintViolation {
  /** "state" bound or "path" constraint. */
  kind: "state" | "path";
  /** Constraint name as in arc labels (the state name for a state bound). */
  name: string;
  /** +1: value ≤ bound (upper) violated; −1: value ≥ bound (lower) violated. */
  side: 1 | -1;
  bound: number;
  /** Largest excess over the bound (> 0), the value there and its time. */
  excess: number;
  value: number;
  t: number;
  /** The interval around t on which the bound is exceeded (first and last point beyond it). */
  tIn: number;
  tOut: number;
}

export interface Confirmation {
  /** Readable violations, one per condition (empty: structure confirmed). */
  messages: string[];
  /** State bounds and path constraints exceeded, worst first. */
  constraints: ConstraintViolation[];
}

export interface DenseTrajectory {
  t: number[];
  x: number[][];
  lambda: number[][];
  u: number[][];
  arc: number[];
}

const p8 = (v: number) => v.toPrecision(8);

export function confirmStructure(problem: CompiledProblem, oc: OptimalityConditions, ms: MultipleShooting, traj: DenseTrajectory): Confirmation {
  const { nx, nu } = problem;
  const out: string[] = [];
  const w = new Float64Array(oc.nW);
  const hu = new Float64Array(nu);
  const huJacBuf = new Float64Array(oc.hu.jacRows.length);
  const huJac = new Float64Array(nu * oc.nW);
  const np = problem.pathInfo.length;
  const c = new Float64Array(np);
  const zc = new Float64Array(1 + nx + nu);
  const seen = new Set<string>();
  const report = (key: string, msg: string) => {
    if (!seen.has(key)) {
      seen.add(key);
      out.push(msg);
    }
  };
  // Excess over each one-sided state / path bound at every trajectory point (≤ 0: satisfied).
  type Track = { kind: "state" | "path"; name: string; side: 1 | -1; bound: number; tol: number; excess: number[]; value: number[] };
  const tracks: Track[] = [];
  const addTracks = (kind: "state" | "path", name: string, lower: number, upper: number) => {
    for (const [side, bound] of [[1, upper], [-1, lower]] as const) {
      if (Number.isFinite(bound)) tracks.push({ kind, name, side, bound, tol: 1e-8 * (1 + Math.abs(bound)), excess: [], value: [] });
    }
  };
  problem.states.forEach((s) => addTracks("state", s.name, s.lower, s.upper));
  const stateTracks = tracks.length;
  problem.pathInfo.forEach((info) => addTracks("path", info.name, info.lower, info.upper));
  const record = (tr: Track, v: number) => {
    tr.value.push(v);
    tr.excess.push(tr.side * (v - tr.bound));
  };

  for (let p = 0; p < traj.t.length; p++) {
    const a = traj.arc[p];
    const arc: ShootingArc = ms.arcs[a];
    w.fill(0);
    w[0] = traj.t[p];
    for (let i = 0; i < nx; i++) {
      w[1 + i] = traj.x[p][i];
      w[oc.iL + i] = traj.lambda[p][i];
    }
    for (let j = 0; j < nu; j++) w[oc.iU + j] = traj.u[p][j];
    oc.hu.eval(w, hu);
    // Legendre–Clebsch on interior arcs: ∂²H/∂u_j² > 0 (Bryson and Ho 1975, eq. (2.5.6) with ≥).
    if (arc.kinds.some((k) => k === "interior") && !arc.constraint) {
      denseJacobian(oc.hu, w, huJacBuf, huJac);
      for (let j = 0; j < nu; j++) {
        if (arc.kinds[j] === "interior" && !(huJac[j * oc.nW + oc.iU + j] > 0)) {
          report(`lc${a}${j}`, `arc ${a + 1}: ∂²H/∂${problem.controls[j].name}² ≤ 0 at t = ${p8(traj.t[p])} (a maximum of H, not a minimum)`);
        }
      }
    }
    let huScale = 1e-300;
    for (const v of hu) huScale = Math.max(huScale, Math.abs(v));
    for (let j = 0; j < nu; j++) {
      const info = problem.controls[j];
      const k = arc.kinds[j];
      const range = Number.isFinite(info.upper - info.lower) ? info.upper - info.lower : 1;
      const tolSigma = 1e-7 * Math.max(1, huScale);
      if (k === "lower" && hu[j] < -tolSigma) report(`sigma${a}${j}`, `arc ${a + 1}: ${info.name} on its lower bound but ∂H/∂u < 0 at t = ${p8(traj.t[p])}`);
      if (k === "upper" && hu[j] > tolSigma) report(`sigma${a}${j}`, `arc ${a + 1}: ${info.name} on its upper bound but ∂H/∂u > 0 at t = ${p8(traj.t[p])}`);
      const u = traj.u[p][j];
      if (!Number.isFinite(u)) report(`nan${a}`, `arc ${a + 1}: control law failed at t = ${p8(traj.t[p])}`);
      if (u < info.lower - 1e-9 * range || u > info.upper + 1e-9 * range) {
        report(`bound${a}${j}`, `arc ${a + 1}: ${k} control ${info.name} = ${p8(u)} leaves [${info.lower}, ${info.upper}] at t = ${p8(traj.t[p])}`);
      }
    }
    for (let q = 0; q < stateTracks; q++) {
      const tr = tracks[q];
      record(tr, traj.x[p][problem.states.findIndex((s) => s.name === tr.name)]);
    }
    if (np > 0) {
      zc.set(w.subarray(0, 1 + nx + nu));
      problem.path.eval(zc, c);
      for (let q = stateTracks; q < tracks.length; q++) {
        const tr = tracks[q];
        record(tr, c[problem.pathInfo.findIndex((info) => info.name === tr.name)]);
      }
    }
  }

  const constraints: ConstraintViolation[] = [];
  for (const tr of tracks) {
    let worst = -1;
    for (let p = 0; p < tr.excess.length; p++) if (tr.excess[p] > tr.tol && (worst < 0 || tr.excess[p] > tr.excess[worst])) worst = p;
    if (worst < 0) continue;
    let i0 = worst;
    let i1 = worst;
    while (i0 > 0 && tr.excess[i0 - 1] > 0) i0--;
    while (i1 + 1 < tr.excess.length && tr.excess[i1 + 1] > 0) i1++;
    // The dense trajectory holds ODEX's accepted steps only: the peak between samples is placed by
    // the parabola through the worst sample and its neighbours (when they lie on the same arc).
    let excess = tr.excess[worst];
    let tWorst = traj.t[worst];
    if (worst > 0 && worst + 1 < tr.excess.length && traj.arc[worst - 1] === traj.arc[worst] && traj.arc[worst + 1] === traj.arc[worst]) {
      const peak = parabolaPeak(traj.t[worst - 1], tr.excess[worst - 1], tWorst, excess, traj.t[worst + 1], tr.excess[worst + 1]);
      if (peak && peak.y >= excess) {
        excess = peak.y;
        tWorst = peak.t;
      }
    }
    constraints.push({
      kind: tr.kind, name: tr.name, side: tr.side, bound: tr.bound,
      excess, value: tr.bound + tr.side * excess, t: tWorst, tIn: traj.t[i0], tOut: traj.t[i1],
    });
  }
  constraints.sort((a, b) => b.excess / (1 + Math.abs(b.bound)) - a.excess / (1 + Math.abs(a.bound)));
  for (const v of constraints) out.push(describeViolation(v));

  // Endpoint inequalities.
  const nE = 2 + 2 * nx;
  const e = new Float64Array(nE);
  const last = traj.t.length - 1;
  e[0] = traj.t[0];
  e.set(traj.x[0], 1);
  e[1 + nx] = traj.t[last];
  e.set(traj.x[last], 2 + nx);
  const b = new Float64Array(problem.endpointInfo.length);
  if (b.length) problem.endpoint.eval(e, b);
  problem.endpointInfo.forEach((info, r) => {
    const scale = 1e-8 * (1 + Math.abs(Number.isFinite(info.upper) ? info.upper : Number.isFinite(info.lower) ? info.lower : 0));
    if (b[r] < info.lower - scale || b[r] > info.upper + scale) out.push(`endpoint constraint ${info.name} violated (value ${b[r].toPrecision(10)})`);
  });
  return { messages: out, constraints };
}

/** Vertex of the parabola through three points with t0 < t1 < t2 (null when not a maximum inside). */
function parabolaPeak(t0: number, y0: number, t1: number, y1: number, t2: number, y2: number): { t: number; y: number } | null {
  const d0 = (y1 - y0) / (t1 - t0);
  const d1 = (y2 - y1) / (t2 - t1);
  const c = (d1 - d0) / (t2 - t0);
  if (!(c < 0)) return null;
  // y(t) = y1 + d0 (t − t1) + c (t − t0)(t − t1): the Newton form through the three points.
  const t = 0.5 * (t0 + t1 - d0 / c);
  if (!(t > t0 && t < t2)) return null;
  return { t, y: y1 + d0 * (t - t1) + c * (t - t0) * (t - t1) };
}

/** "state bound v ≤ 0.1 violated: worst v = 0.13330 at t = 0.07267 (beyond the bound on [0.0601, 0.0890])". */
export function describeViolation(v: ConstraintViolation): string {
  const what = v.kind === "state" ? "state bound" : "path constraint";
  const rel = v.side === 1 ? "≤" : "≥";
  return `${what} ${v.name} ${rel} ${v.bound} violated: worst ${v.name} = ${v.value.toPrecision(10)} at t = ${p8(v.t)}, ${v.excess.toExponential(2)} beyond the bound (beyond it on [${p8(v.tIn)}, ${p8(v.tOut)}])`;
}
