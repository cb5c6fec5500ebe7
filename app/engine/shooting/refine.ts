/**
 * Refinement of a direct solution by indirect multiple shooting: arc detection
 * (app/engine/arcs) → combined structure (structure.ts) → optimality conditions from the compiled
 * problem (conditions.ts) → multiple shooting (multiple-shooting.ts) solved by damped Newton
 * (newton.ts), seeded with the direct solution's states, costate estimates and junction times.
 * After convergence the structure is checked against the necessary conditions (structure
 * confirmation): bang arcs have the switching function's sign, singular and interior controls stay
 * within their bounds, constraints hold on every arc, inactive endpoint inequalities hold.
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
import { SingularValueDecomposition } from "ml-matrix";

export interface RefineOptions extends ShootingOptions {
  /** Newton tolerance: ‖F‖∞ ≤ tol · (1 + ‖z0‖∞), z0 the seeded unknowns. Default 1e-11. */
  tol?: number;
  maxIter?: number;
  arcOptions?: ArcDetectionOptions;
  /** Use this structure instead of detecting it (e.g. from the problem's reference arcs). */
  structure?: ArcStructure;
  onIteration?: (rec: NewtonRecord) => void;
  /** Retry once with twice the segments when Newton fails. Default true. */
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
  status: NewtonStatus | "setup_failed";
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
 * Refines a direct solution. When Newton does not converge, or the structure is not confirmed,
 * with the default number of shooting segments, it is tried once more with twice as many
 * (shorter segments tame the growth of the state–costate flow), and, when arc detection could not
 * decide the costate sign convention, with the costate estimates negated; unless options.retry
 * is false.
 */
export function refineFromSolution(problem: CompiledProblem, sol: Solution, options: RefineOptions = {}): RefineReport {
  const good = (r: RefineReport) => r.converged && r.structureConfirmed;
  const first = refineOnce(problem, sol, options, 0);
  if (good(first) || first.status === "setup_failed" || options.retry === false) return first;
  const segments = 2 * (options.segments ?? 12);
  let spent = first.seconds;
  const second = refineOnce(problem, sol, { ...options, segments }, 0);
  spent += second.seconds;
  if (good(second)) {
    return { ...second, message: `${second.message} (with ${segments} segments after ${first.status} with ${options.segments ?? 12})`, seconds: spent };
  }
  // When the bang points could not tell the scheme's costate sign convention, try the other one.
  const structure = options.structure ?? detectArcs(problem, sol, options.arcOptions);
  if (structure.costateSign === 0) {
    const third = refineOnce(problem, sol, { ...options, structure }, -1);
    spent += third.seconds;
    if (good(third)) return { ...third, message: `${third.message} (with the costate estimates negated)`, seconds: spent };
  }
  return { ...first, seconds: spent };
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
    rhsEvaluations: 0,
  };
  const structure = options.structure ?? detectArcs(problem, sol, options.arcOptions);
  const sign = forcedSign !== 0 ? forcedSign : structure.costateSign === -1 ? -1 : 1;
  const failed = (message: string): RefineReport => ({
    ...base,
    jacobianCondition: NaN,
    status: "setup_failed",
    converged: false,
    message,
    residual: Infinity,
    iterations: 0,
    objective: NaN,
    finalTime: NaN,
    junctions: [],
    arcs: [],
    signature: "",
    detectedSignature: structure.signature,
    structureConfirmed: false,
    seconds: (performance.now() - started) / 1000,
  });
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
  const converged = result.status === "converged";
  const signature = combinedSignature(problem, ms.arcs);
  const arcs: RefinedArc[] = ms.arcs.map((arc, a) => ({
    kinds: arc.kinds.map((_, j) => arcControlLabel(arc, j)),
    t0: T[a],
    t1: T[a + 1],
  }));
  const Fz = ms.evaluate(z);
  const traj = ms.trajectory(z);
  const violations = traj ? confirm(problem, oc, ms, traj) : ["the refined trajectory could not be integrated"];
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
      // Forward differences carry errors near 1e-6 relative, so a condition number above 1e10 is
      // read as a missing condition (common practice, no source).
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
  return {
    ...base,
    status: result.status,
    converged,
    message: converged ? `converged in ${result.history.length - 1} Newton iterations` : `Newton stopped: ${result.status}`,
    residual: result.residual,
    iterations: Math.max(0, result.history.length - 1),
    history: result.history,
    objective,
    finalTime: T[T.length - 1],
    junctions: T.slice(1, -1),
    arcs,
    signature,
    detectedSignature: structure.signature,
    structureConfirmed: converged && violations.length === 0,
    violations,
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

/** Violations of the necessary conditions on the refined trajectory (empty: structure confirmed). */
function confirm(
  problem: CompiledProblem,
  oc: OptimalityConditions,
  ms: MultipleShooting,
  traj: { t: number[]; x: number[][]; lambda: number[][]; u: number[][]; arc: number[] },
): string[] {
  const { nx, nu } = problem;
  const out: string[] = [];
  const w = new Float64Array(oc.nW);
  const hu = new Float64Array(nu);
  const huJacBuf = new Float64Array(oc.hu.jacRows.length);
  const huJac = new Float64Array(nu * oc.nW);
  const np = problem.pathInfo.length;
  const c = new Float64Array(np);
  const zc = new Float64Array(1 + nx + nu);
  const T0 = traj.t[0];
  const span = traj.t[traj.t.length - 1] - T0;
  const seen = new Set<string>();
  const report = (key: string, msg: string) => {
    if (!seen.has(key)) {
      seen.add(key);
      out.push(msg);
    }
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
          report(`lc${a}${j}`, `arc ${a + 1}: ∂²H/∂${problem.controls[j].name}² ≤ 0 at t = ${traj.t[p].toPrecision(8)} (a maximum of H, not a minimum)`);
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
      if (k === "lower" && hu[j] < -tolSigma) report(`sigma${a}${j}`, `arc ${a + 1}: ${info.name} on its lower bound but ∂H/∂u < 0 at t = ${traj.t[p].toPrecision(8)}`);
      if (k === "upper" && hu[j] > tolSigma) report(`sigma${a}${j}`, `arc ${a + 1}: ${info.name} on its upper bound but ∂H/∂u > 0 at t = ${traj.t[p].toPrecision(8)}`);
      const u = traj.u[p][j];
      if (!Number.isFinite(u)) report(`nan${a}`, `arc ${a + 1}: control law failed at t = ${traj.t[p].toPrecision(8)}`);
      if (u < info.lower - 1e-9 * range || u > info.upper + 1e-9 * range) {
        report(`bound${a}${j}`, `arc ${a + 1}: ${k} control ${info.name} = ${u.toPrecision(8)} leaves [${info.lower}, ${info.upper}] at t = ${traj.t[p].toPrecision(8)}`);
      }
    }
    zc.set(w.subarray(0, 1 + nx + nu));
    if (np > 0) {
      problem.path.eval(zc, c);
      problem.pathInfo.forEach((info, m) => {
        const scale = 1e-8 * (1 + Math.abs(Number.isFinite(info.upper) ? info.upper : info.lower));
        if (c[m] < info.lower - scale || c[m] > info.upper + scale) report(`path${m}`, `path constraint ${info.name} violated at t = ${traj.t[p].toPrecision(8)} (value ${c[m].toPrecision(10)})`);
      });
    }
    problem.states.forEach((s, i) => {
      const v = traj.x[p][i];
      const scale = 1e-8 * (1 + Math.abs(Number.isFinite(s.upper) ? s.upper : Number.isFinite(s.lower) ? s.lower : 0));
      if (v < s.lower - scale || v > s.upper + scale) report(`state${i}`, `state bound of ${s.name} violated at t = ${traj.t[p].toPrecision(8)} (value ${v.toPrecision(10)})`);
    });
  }
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
  void span;
  return out;
}
