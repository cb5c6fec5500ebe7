/**
 * Adaptive mesh refinement: solve, estimate the error on every interval, refine where it exceeds the
 * tolerance ε, and solve again from the previous solution, until every interval meets ε.
 *
 *   local schemes  refine-local.ts (Betts 2010 §4.7.3–4.7.4: points added where ε_k > ε, how many
 *                  from the order-reduction model)
 *   LGR            refine-hp.ts (Patterson, Hager and Rao 2015: higher degree or more intervals)
 * Each pass after the first warm-starts from the previous solution interpolated onto the new mesh
 * (warm-start.ts). The record keeps every pass's mesh, its largest estimate and its cost; the final
 * pass is analysed like any solve (errors against the reference, re-simulation, arcs).
 *
 * Stops when the largest estimate is ≤ ε ("met"), when a pass does not converge ("solver"), when the
 * pass limit is reached ("passes") or when the next mesh would exceed the interval limit ("size").
 * A failure is a recorded result, never an exception.
 */
import type { CompiledProblem } from "../problem/types";
import type { Mesh, SchemeId, Solution } from "../schemes/types";
import { meshBreakpoints } from "../schemes/builder";
import { lgrDegrees } from "../schemes/lgr";
import { analyseSolution, isConverged, solveAttempt, type SolveOptions, type SolveReport } from "../solve";
import { estimateErrors, type EstimateMethod } from "./estimate";
import { refineLocal, type IntervalHistory } from "./refine-local";
import { refineHp } from "./refine-hp";
import { warmStarted } from "./warm-start";

export const DEFAULT_MAX_PASSES = 10;
export const DEFAULT_MAX_INTERVALS = 2000;

export interface RefinementPass {
  pass: number;
  intervals: number;
  /** Mesh points: intervals + 1 for local schemes, Σ K_s + 1 for LGR. */
  points: number;
  /** Breakpoints on [0, 1] (normalised time). */
  breakpoints: number[];
  /** LGR: degree per interval; null for local schemes. */
  degrees: number[] | null;
  status: SolveReport["status"];
  iterations: number;
  /** Transcription + solve + estimate, seconds. */
  seconds: number;
  /** Largest relative error estimate (null when the pass did not converge). */
  maxEstimate: number | null;
  /** Estimate per interval (null when the pass did not converge). */
  estimate: number[] | null;
  /** What the pass led to: points added (local), or intervals raised in degree / split (LGR). */
  change: { added: number } | { raised: number; split: number } | null;
}

export type StopReason = "met" | "solver" | "passes" | "size";

export interface AdaptiveReport {
  scheme: SchemeId;
  tolerance: number;
  method: EstimateMethod | null;
  met: boolean;
  stop: StopReason;
  passes: RefinementPass[];
  finalMesh: Mesh;
  /** The last pass's full report (analysed when it converged). */
  final: SolveReport;
  totalIterations: number;
  totalSeconds: number;
}

export interface AdaptiveOptions extends SolveOptions {
  tolerance: number;
  maxPasses?: number;
  maxIntervals?: number;
  /** Safety factor κ of local refinement (refine-local.ts). */
  kappa?: number;
  /** Progress after each pass (terminal and web). */
  onPass?: (pass: RefinementPass) => void;
}

/** Mesh points of a mesh: intervals + 1, or Σ K_s + 1 for LGR. */
export function meshPoints(scheme: SchemeId, mesh: Mesh): number {
  if (scheme !== "lgr") return mesh.intervals + 1;
  return lgrDegrees(mesh).reduce((a, b) => a + b, 0) + 1;
}

export function solveAdaptive(problem: CompiledProblem, scheme: SchemeId, initial: Mesh, options: AdaptiveOptions): AdaptiveReport {
  const eps = options.tolerance;
  if (!(eps > 0)) throw new Error(`adaptive mesh: tolerance must be positive (got ${eps})`);
  const maxPasses = options.maxPasses ?? DEFAULT_MAX_PASSES;
  const maxIntervals = options.maxIntervals ?? DEFAULT_MAX_INTERVALS;
  const passOptions: SolveOptions = { ...options, resimulate: false, arcs: false, keepTrajectory: false, estimate: false };
  const passes: RefinementPass[] = [];
  let mesh: Mesh = { ...initial };
  let current = problem;
  let history: IntervalHistory[] | null = null;
  let last: { report: SolveReport; solution: Solution | null; mesh: Mesh } | null = null;
  let stop: StopReason = "passes";
  let method: EstimateMethod | null = null;
  for (let pass = 1; pass <= maxPasses; pass++) {
    const t0 = performance.now();
    const attempt = solveAttempt(current, scheme, mesh, passOptions);
    const tau = Array.from(meshBreakpoints(mesh));
    const rec: RefinementPass = {
      pass,
      intervals: mesh.intervals,
      points: meshPoints(scheme, mesh),
      breakpoints: tau,
      degrees: scheme === "lgr" ? lgrDegrees(mesh) : null,
      status: attempt.report.status,
      iterations: attempt.report.iterations,
      seconds: 0,
      maxEstimate: null,
      estimate: null,
      change: null,
    };
    passes.push(rec);
    last = { ...attempt, mesh };
    if (!attempt.solution || !isConverged(attempt.report.status)) {
      rec.seconds = (performance.now() - t0) / 1000;
      options.onPass?.(rec);
      stop = "solver";
      break;
    }
    const est = estimateErrors(problem, attempt.solution, mesh);
    method = est.method;
    rec.maxEstimate = est.max;
    rec.estimate = est.error;
    if (est.max <= eps) {
      rec.seconds = (performance.now() - t0) / 1000;
      options.onPass?.(rec);
      stop = "met";
      break;
    }
    let next: Mesh;
    if (scheme === "lgr") {
      const r = refineHp(tau, lgrDegrees(mesh), est.error, eps);
      next = r.mesh;
      rec.change = { raised: r.actions.filter((a) => a === "p").length, split: r.actions.filter((a) => a === "h").length };
    } else {
      const r = refineLocal(scheme, tau, est.error, eps, history, { kappa: options.kappa });
      next = { ...r.mesh, ...(mesh.variant ? { variant: mesh.variant } : {}) };
      history = r.history;
      rec.change = { added: r.added.reduce((a, b) => a + b, 0) };
    }
    rec.seconds = (performance.now() - t0) / 1000;
    options.onPass?.(rec);
    if (pass === maxPasses) break;
    if (next.intervals > maxIntervals) {
      stop = "size";
      break;
    }
    current = warmStarted(problem, attempt.solution);
    mesh = next;
  }
  const final = last!.report;
  // the final pass is analysed against the original problem (its reference; the guess plays no part)
  // (its time is not refinement cost and is not counted)
  if (last!.solution) analyseSolution(problem, last!.mesh, last!.solution, final, options);
  return {
    scheme,
    tolerance: eps,
    method,
    met: stop === "met",
    stop,
    passes,
    finalMesh: last!.mesh,
    final,
    totalIterations: passes.reduce((a, p) => a + p.iterations, 0),
    totalSeconds: passes.reduce((a, p) => a + p.seconds, 0),
  };
}

/** What a stored case keeps of a refinement. */
export interface RefinementSummary {
  tolerance: number;
  met: boolean;
  passes: number;
  /** Mesh points of the final mesh. */
  points: number;
  record: Array<{ pass: number; intervals: number; points: number; status: string; iterations: number; seconds: number; maxEstimate: number | null }>;
}

/**
 * A refinement as one case's report: the final pass's report (its mesh, errors, estimate), with
 * iterations = the NLP iterations of all passes (the cost of reaching ε) and the refinement record.
 */
export function refinedCaseReport(r: AdaptiveReport): SolveReport & { refinement: RefinementSummary } {
  const last = r.passes[r.passes.length - 1]!;
  return {
    ...r.final,
    iterations: r.totalIterations,
    refinement: {
      tolerance: r.tolerance,
      met: r.met,
      passes: r.passes.length,
      points: last.points,
      record: r.passes.map((p) => ({ pass: p.pass, intervals: p.intervals, points: p.points, status: p.status, iterations: p.iterations, seconds: p.seconds, maxEstimate: p.maxEstimate })),
    },
  };
}
