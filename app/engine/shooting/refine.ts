/**
 * Refinement of a direct solution by indirect multiple shooting: arc detection
 * (app/engine/arcs) → combined structure (structure.ts) → optimality conditions from the compiled
 * problem (conditions.ts) → multiple shooting (multiple-shooting.ts) solved by damped Newton
 * (newton.ts), seeded with the direct solution's states, costate estimates and junction times.
 * After convergence the structure is checked against the necessary conditions (structure
 * confirmation, confirm.ts): bang arcs have the switching function's sign, singular and interior
 * controls stay within their bounds, constraints hold on every arc, inactive endpoint inequalities
 * hold. A Newton solution that fails any of these is NOT converged: its status says why
 * ("constraint_violated", "structure_not_confirmed") and it is never stored as a reference. When a
 * state bound or path constraint is exceeded, the refinement is retried with a boundary arc of
 * that constraint inserted where it was exceeded (augmentStructure), as the necessary conditions
 * of the state-constrained problem require (Bryson and Ho 1975, §3.11).
 */
import type { CompiledProblem } from "../problem/types";
import type { Solution } from "../schemes/types";
import type { ArcDetectionOptions, ArcStructure } from "../arcs/types";
import { detectArcs, arcDefaults } from "../arcs/detect";
import { interpLinear } from "../arcs/interp";
import { denseJacobian, OptimalityConditions } from "./conditions";
import { MultipleShooting, type ShootingArc, type ShootingOptions } from "./multiple-shooting";
import { dampedNewton, type NewtonRecord, type NewtonStatus } from "./newton";
import { arcControlLabel, combineStructure, combinedSignature } from "./structure";
import { integrateSegment } from "./integrate";
import { confirmStructure, describeViolation, type ConstraintViolation } from "./confirm";
import { structureSignature, type Arc } from "../arcs/types";
import { SingularValueDecomposition } from "ml-matrix";

/**
 * Outcome of a refinement. "converged": Newton met its tolerance AND the structure is confirmed;
 * "constraint_violated": Newton converged on the assumed structure but the solution exceeds a
 * state bound or path constraint (worstViolation says which, where and by how much);
 * "structure_not_confirmed": Newton converged but another necessary condition fails (see
 * violations); otherwise Newton's own failure.
 */
export type RefineStatus = NewtonStatus | "setup_failed" | "constraint_violated" | "structure_not_confirmed";

export interface RefineOptions extends ShootingOptions {
  /** Newton tolerance: ‖F‖∞ ≤ tol · (1 + ‖z0‖∞), z0 the seeded unknowns. Default 1e-11. */
  tol?: number;
  maxIter?: number;
  arcOptions?: ArcDetectionOptions;
  /** Use this structure instead of detecting it (e.g. from the problem's reference arcs). */
  structure?: ArcStructure;
  onIteration?: (rec: NewtonRecord) => void;
  /**
   * Retry when the first attempt is not converged: with a boundary arc for a violated constraint,
   * with twice the segments, with the costate estimates negated. Default true.
   */
  retry?: boolean;
}

export interface RefinedArc {
  /** Label per control ("upper", "singular", "boundary:qmax", ...). */
  kinds: string[];
  t0: number;
  t1: number;
}

export interface RefinedTrajectory {
  t: number[];
  states: Record<string, number[]>;
  controls: Record<string, number[]>;
  costates: Record<string, number[]>;
}

export interface RefineReport {
  problemId: string;
  problemVersion: string;
  status: RefineStatus;
  /** Newton's own status on the returned attempt ("converged" although status may not be). */
  newtonStatus: NewtonStatus | "setup_failed";
  /** status === "converged": Newton converged and the structure is confirmed. */
  converged: boolean;
  message: string;
  residual: number;
  iterations: number;
  history: NewtonRecord[];
  objective: number;
  finalTime: number;
  junctions: number[];
  arcs: RefinedArc[];
  /** Signature of the refined structure (same form as arc detection). */
  signature: string;
  /** Signature detected on the direct solution. */
  detectedSignature: string;
  structureConfirmed: boolean;
  violations: string[];
  /** The largest excess over a state bound or path constraint on the refined trajectory, or null. */
  worstViolation: ConstraintViolation | null;
  /** What was tried, in order, one line each (structure, segments, sign, outcome). */
  attempts: string[];
  /** Endpoint multipliers ν of the active endpoint rows, by row name. */
  endpointMultipliers: Record<string, number>;
  /** Costate jumps π at boundary-arc entries. */
  jumps: number[];
  trajectory: RefinedTrajectory | null;
  seconds: number;
  rhsEvaluations: number;
  /** Condition number (2-norm) of the shooting Jacobian at the returned point; NaN when not computed. */
  jacobianCondition: number;
}

/** Costate guess from the scheme's estimates (linear interpolation), with a sign correction. */
function costateGuess(sol: Solution, sign: number): (t: number, out: Float64Array) => void {
  return (t, out) => {
    if (!sol.costates || !sol.tLambda) {
      out.fill(0);
      return;
    }
    for (let i = 0; i < out.length; i++) out[i] = sign * interpLinear(sol.tLambda, sol.costates[i], t);
  };
}

/**
 * Refines a direct solution. Attempts, in order, until one converges (Newton converged and the
 * structure confirmed), unless options.retry is false:
 *   1. the detected structure with the requested segments;
 *   2. while the last Newton-converged attempt exceeds a state bound or path constraint (at most
 *      three constraints): the structure with a boundary arc of the worst one inserted
 *      (augmentStructure), with the requested and then twice the segments;
 *   3. the detected structure with twice the segments (shorter segments tame the growth of the
 *      state–costate flow);
 *   4. when arc detection could not decide the costate sign convention, the estimates negated.
 * The returned report is the converged attempt, else the first one; `attempts` lists them all.
 */
export function refineFromSolution(problem: CompiledProblem, sol: Solution, options: RefineOptions = {}): RefineReport {
  let detected: ArcStructure;
  try {
    detected = options.structure ?? detectArcs(problem, sol, options.arcOptions);
  } catch (err) {
    return setupFailure(problem, err instanceof Error ? err.message : String(err), "", 0);
  }
  const attempts: string[] = [];
  let spent = 0;
  const segments = options.segments ?? 12;
  const attempt = (label: string, structure: ArcStructure, segs: number, sign: -1 | 0 | 1): RefineReport => {
    const r = refineOnce(problem, sol, { ...options, structure, segments: segs }, sign);
    spent += r.seconds;
    const cond = Number.isFinite(r.jacobianCondition) ? `, Jacobian condition ${r.jacobianCondition.toExponential(1)}` : "";
    attempts.push(`${label}, ${segs} segments: ${r.status} (residual ${r.residual.toExponential(1)} after ${r.iterations} Newton iterations${cond})`);
    return r;
  };
  const finish = (r: RefineReport, note?: string): RefineReport => ({
    ...r,
    message: note ? `${r.message} (${note})` : r.message,
    detectedSignature: detected.signature,
    attempts,
    seconds: spent,
  });
  const first = attempt(`structure ${detected.signature}`, detected, segments, 0);
  if (first.converged || first.status === "setup_failed" || options.retry === false) return finish(first);

  // A Newton solution beyond a constraint: the structure lacks that boundary arc.
  let last = first;
  let structure = detected;
  for (let added = 0; added < 3 && last.status === "constraint_violated" && last.worstViolation; added++) {
    const v = last.worstViolation;
    const augmented = augmentStructure(structure, v, last, sol);
    if (augmented.signature === structure.signature) break;
    structure = augmented;
    let next: RefineReport | null = null;
    for (const segs of [segments, 2 * segments]) {
      next = attempt(`structure ${structure.signature} (boundary arc of ${v.name} added)`, structure, segs, 0);
      if (next.converged) return finish(next, `after adding a boundary arc of ${v.name}`);
      if (next.status === "constraint_violated") break;
    }
    if (!next || next.newtonStatus !== "converged") break;
    last = next;
  }
  const second = attempt(`structure ${detected.signature}`, detected, 2 * segments, 0);
  if (second.converged) return finish(second, `with ${2 * segments} segments after ${first.status} with ${segments}`);
  // When the bang points could not tell the scheme's costate sign convention, try the other one.
  if (detected.costateSign === 0) {
    const third = attempt(`structure ${detected.signature}, costate estimates negated`, detected, segments, -1);
    if (third.converged) return finish(third, "with the costate estimates negated");
  }
  return finish(first, `${attempts.length} attempts, none converged`);
}

/**
 * The refined structure (the arcs Newton converged on, which may differ from the detected ones:
 * junctions move) with a boundary arc of the violated constraint on the interval where the refined
 * trajectory exceeded it. Times are mapped to the direct solution's by normalised time (a free
 * final time differs between the two). Every control's arcs are clipped to [t0, t_in] and
 * [t_out, tf] and a boundary arc fills the gap.
 */
export function augmentStructure(s: ArcStructure, v: ConstraintViolation, refined: RefineReport, sol: Solution): ArcStructure {
  const T0 = refined.arcs.length ? refined.arcs[0].t0 : sol.t0;
  const Tf = Number.isFinite(refined.finalTime) ? refined.finalTime : sol.tf;
  const map = (t: number) => sol.t0 + ((t - T0) / (Tf - T0)) * (sol.tf - sol.t0);
  const tIn = map(v.tIn);
  const tOut = map(v.tOut);
  const fromLabel = (label: string, control: string, t0: number, t1: number): Arc =>
    label.startsWith("boundary:")
      ? { kind: "boundary", control, constraint: label.slice(9), t0, t1 }
      : { kind: label as Arc["kind"], control, t0, t1 };
  const controls = s.controls.map((c, j) => {
    const source: Arc[] = refined.arcs.length
      ? refined.arcs.map((a) => fromLabel(a.kinds[j], c.control, map(a.t0), map(a.t1)))
      : c.arcs;
    const arcs: Arc[] = [];
    for (const a of source) if (a.t1 > sol.t0 && a.t0 < tIn) arcs.push({ ...a, t1: Math.min(a.t1, tIn) });
    arcs.push({ kind: "boundary", control: c.control, constraint: v.name, t0: tIn, t1: tOut });
    for (const a of source) if (a.t1 > tOut) arcs.push({ ...a, t0: Math.max(a.t0, tOut) });
    const merged: Arc[] = [];
    for (const a of arcs) {
      const prev = merged[merged.length - 1];
      if (prev && prev.kind === a.kind && prev.constraint === a.constraint) prev.t1 = a.t1;
      else if (a.t1 > a.t0) merged.push(a);
    }
    merged[0].t0 = sol.t0;
    merged[merged.length - 1].t1 = sol.tf;
    return { control: c.control, arcs: merged, junctions: merged.slice(1).map((a) => a.t0) };
  });
  return { ...s, controls, signature: structureSignature(controls), notes: [...s.notes, `boundary arc of ${v.name} added where the refinement exceeded it`] };
}

function setupFailure(problem: CompiledProblem, message: string, detectedSignature: string, seconds: number): RefineReport {
  return {
    problemId: problem.id,
    problemVersion: problem.versionHash,
    history: [],
    endpointMultipliers: {},
    jumps: [],
    trajectory: null,
    violations: [],
    worstViolation: null,
    attempts: [],
    rhsEvaluations: 0,
    jacobianCondition: NaN,
    status: "setup_failed",
    newtonStatus: "setup_failed",
    converged: false,
    message,
    residual: Infinity,
    iterations: 0,
    objective: NaN,
    finalTime: NaN,
    junctions: [],
    arcs: [],
    signature: "",
    detectedSignature,
    structureConfirmed: false,
    seconds,
  };
}

/** One refinement; forcedSign ±1 overrides the costate sign convention (0: from arc detection). */
function refineOnce(problem: CompiledProblem, sol: Solution, options: RefineOptions, forcedSign: -1 | 0 | 1): RefineReport {
  const started = performance.now();
  const base = {
    problemId: problem.id,
    problemVersion: problem.versionHash,
    history: [] as NewtonRecord[],
    endpointMultipliers: {} as Record<string, number>,
    jumps: [] as number[],
    trajectory: null as RefinedTrajectory | null,
    violations: [] as string[],
    worstViolation: null as ConstraintViolation | null,
    attempts: [] as string[],
    rhsEvaluations: 0,
  };
  const structure = options.structure ?? detectArcs(problem, sol, options.arcOptions);
  const sign = forcedSign !== 0 ? forcedSign : structure.costateSign === -1 ? -1 : 1;
  const failed = (message: string): RefineReport => setupFailure(problem, message, structure.signature, (performance.now() - started) / 1000);
  if (!sol.costates) return failed("the direct solution has no costate estimates to start from");
  let ms: MultipleShooting;
  let oc: OptimalityConditions;
  try {
    oc = new OptimalityConditions(problem);
    oc.samples = samples(problem, sol, sign, oc.nW);
    const minFraction = options.arcOptions?.minFraction ?? arcDefaults.minFraction;
    const combined = combineStructure(problem, sol, structure, 0.5 * minFraction * (sol.tf - sol.t0));
    ms = new MultipleShooting(problem, oc, {
      arcs: combined.arcs,
      junctions: combined.junctions,
      tf: sol.tf,
      state: (t, out) => sol.stateAt(t, out),
      costate: costateGuess(sol, sign),
      control: (t, out) => sol.controlAt(t, out),
    }, options);
  } catch (err) {
    return failed(err instanceof Error ? err.message : String(err));
  }
  const result = dampedNewton(
    (z) => ms.evaluate(z),
    (z, Fz) => {
      // evaluate() refreshed the flows at z on the accepted trial; refresh once more to be safe.
      const F = ms.evaluate(z);
      return F ? ms.jacobian(z, F ?? Fz) : null;
    },
    ms.z0,
    // Tolerance relative to the size of the unknowns (states of 1500 m and costates of 1e-3 share
    // one residual vector): ‖F‖∞ ≤ tol · (1 + ‖z0‖∞).
    { tol: (options.tol ?? 1e-11) * (1 + maxAbs(ms.z0)), maxIter: options.maxIter ?? 40, onIteration: options.onIteration },
  );
  const z = result.z;
  const T = ms.times(z);
  const newtonConverged = result.status === "converged";
  const signature = combinedSignature(problem, ms.arcs);
  const arcs: RefinedArc[] = ms.arcs.map((arc, a) => ({
    kinds: arc.kinds.map((_, j) => arcControlLabel(arc, j)),
    t0: T[a],
    t1: T[a + 1],
  }));
  const Fz = ms.evaluate(z);
  const traj = ms.trajectory(z);
  const confirmation = traj ? confirmStructure(problem, oc, ms, traj) : { messages: ["the refined trajectory could not be integrated"], constraints: [] };
  const violations = confirmation.messages;
  const worstViolation = confirmation.constraints[0] ?? null;
  // Well-posedness: as many conditions as unknowns, and a Jacobian of full rank at the solution.
  let jacobianCondition = NaN;
  if (Fz) {
    // More equations than unknowns is fine when they are consistent (Newton's least-squares step
    // drove all of them to the tolerance, e.g. a singular arc running to a fixed tf); fewer leaves
    // a family of solutions.
    if (Fz.length < ms.nz) violations.push(`the shooting conditions are ${Fz.length} equations for ${ms.nz} unknowns`);
    ms.evaluate(z);
    const J = ms.jacobian(z, Fz);
    if (J) {
      const sv = new SingularValueDecomposition(J, { autoTranspose: true }).diagonal;
      const smax = Math.max(...sv);
      const smin = Math.min(...sv);
      jacobianCondition = smin > 0 ? smax / smin : Infinity;
      // The Jacobian carries errors near 1e-10 relative (central differences of the assembly) to
      // 1e-6 (forward differences of the flows for time columns), so a condition number above 1e10
      // is read as a missing condition (common practice, no source).
      if (!(jacobianCondition <= 1e10)) violations.push(`the shooting Jacobian is (nearly) singular at the solution (condition ${jacobianCondition.toExponential(1)})`);
    }
  }
  const objective = traj ? objectiveValue(problem, ms, z, T) : NaN;
  const endpointMultipliers: Record<string, number> = {};
  ms.active.forEach((r, q) => (endpointMultipliers[problem.endpointInfo[r.row].name] = z[ms.offNu + q]));
  const jumps = Array.from(z.subarray(ms.offPi));
  const trajectory: RefinedTrajectory | null = traj
    ? {
        t: traj.t,
        states: Object.fromEntries(problem.states.map((s, i) => [s.name, traj.x.map((v) => v[i])])),
        controls: Object.fromEntries(problem.controls.map((c, j) => [c.name, traj.u.map((v) => v[j])])),
        costates: Object.fromEntries(problem.states.map((s, i) => [s.name, traj.lambda.map((v) => v[i])])),
      }
    : null;
  const confirmed = newtonConverged && violations.length === 0;
  const status: RefineStatus = !newtonConverged ? result.status : confirmed ? "converged" : worstViolation ? "constraint_violated" : "structure_not_confirmed";
  const iterationsText = `${result.history.length - 1} Newton iterations`;
  const message = !newtonConverged
    ? `Newton stopped: ${result.status}`
    : confirmed
      ? `converged in ${iterationsText}`
      : worstViolation
        ? `Newton converged in ${iterationsText} on ${signature}, but the solution is not optimal: ${describeViolation(worstViolation)}`
        : `Newton converged in ${iterationsText} on ${signature}, but the structure is not confirmed: ${violations[0]}`;
  return {
    ...base,
    status,
    newtonStatus: result.status,
    converged: confirmed,
    message,
    residual: result.residual,
    iterations: Math.max(0, result.history.length - 1),
    history: result.history,
    objective,
    finalTime: T[T.length - 1],
    junctions: T.slice(1, -1),
    arcs,
    signature,
    detectedSignature: structure.signature,
    structureConfirmed: confirmed,
    violations,
    worstViolation,
    endpointMultipliers,
    jumps,
    trajectory,
    seconds: (performance.now() - started) / 1000,
    rhsEvaluations: ms.nEvalTotal,
    jacobianCondition,
  };
}

function maxAbs(v: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < v.length; i++) m = Math.max(m, Math.abs(v[i]));
  return m;
}

/** Sample inputs w = [t, x, u, λ, 0] at a few grid points of the direct solution. */
function samples(problem: CompiledProblem, sol: Solution, sign: number, nW: number): Float64Array[] {
  const { nx, nu } = problem;
  const out: Float64Array[] = [];
  const lam = costateGuess(sol, sign);
  const x = new Float64Array(nx);
  const u = new Float64Array(nu);
  const l = new Float64Array(nx);
  for (const f of [0.13, 0.37, 0.61, 0.89]) {
    const t = sol.t0 + f * (sol.tf - sol.t0);
    sol.stateAt(t, x);
    sol.controlAt(t, u);
    lam(t, l);
    const w = new Float64Array(nW);
    w[0] = t;
    w.set(x, 1);
    w.set(u, 1 + nx);
    w.set(l, 1 + nx + nu);
    out.push(w);
  }
  return out;
}

/** φ(e) + ∫L dt along the refined solution (quadrature by ODEX on q̇ = L, per segment). */
function objectiveValue(problem: CompiledProblem, ms: MultipleShooting, z: Float64Array, T: number[]): number {
  const { nx, nu } = problem;
  let integral = 0;
  const L = problem.runningCost;
  const n2 = 2 * nx;
  const e = new Float64Array(2 + 2 * nx);
  e[0] = T[0];
  e.set(z.subarray(0, nx), 1);
  let yEnd: Float64Array | null = null;
  for (let k = 0; k < ms.K; k++) {
    const a = ms.segArc[k];
    const w = new Float64Array(ms.oc.nW);
    const dy = new Float64Array(n2);
    const zL = new Float64Array(1 + nx + nu);
    const lv = new Float64Array(1);
    const ta = T[a] + (ms.segIndex[k] / ms.segCount[a]) * (T[a + 1] - T[a]);
    const tb = T[a] + ((ms.segIndex[k] + 1) / ms.segCount[a]) * (T[a + 1] - T[a]);
    const y0 = new Float64Array(n2 + 1);
    y0.set(z.subarray(n2 * k, n2 * (k + 1)));
    const r = integrateSegment(
      (t, y, out) => {
        if (!ms.rhs(a, w, dy, t, y.subarray(0, n2))) return false;
        out.set(dy);
        if (L) {
          zL.set(w.subarray(0, 1 + nx + nu));
          L.eval(zL, lv);
          out[n2] = lv[0];
        } else out[n2] = 0;
        return true;
      },
      ta, y0, tb, { tol: ms.tol },
    );
    if (!r.ok) return NaN;
    integral += r.y[n2];
    yEnd = r.y;
  }
  e[1 + nx] = T[T.length - 1];
  e.set(yEnd!.subarray(0, nx), 2 + nx);
  let phi = 0;
  if (problem.terminalCost) {
    const v = new Float64Array(1);
    problem.terminalCost.eval(e, v);
    phi = v[0];
  }
  return phi + integral;
}
