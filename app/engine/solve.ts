/**
 * One solve of one problem with one scheme and mesh: transcribe, run the interior-point solver,
 * map back, re-simulate and compare with the reference. Used by the solve command (bench/solve.ts),
 * the benchmark runner and the server. Never throws for a solver or mesh failure: a failure is a
 * report with a status and a message.
 */
import type { CompiledProblem } from "./problem/types";
import type { IterationRecord, NlpOptions, NlpResult, NlpStatus } from "./nlp/types";
import type { Mesh, SchemeId, Solution } from "./schemes/types";
import { solveNlp } from "./nlp/index";
import { getScheme } from "./schemes/index";
import { DEFAULT_LGR_DEGREE } from "./schemes/lgr";
import { resimulate } from "./analysis/resimulate";
import { solutionErrors, type SolutionErrors } from "./analysis/errors";
import { detectArcs, type ArcStructure } from "./arcs/index";
import { estimateErrors, type EstimateMethod } from "./mesh/estimate";

export interface SolveTrajectory {
  t: number[];
  states: Record<string, number[]>;
  tu: number[];
  controls: Record<string, number[]>;
  tLambda: number[] | null;
  costates: Record<string, number[]> | null;
}

export interface SolveReport {
  problemId: string;
  versionHash: string;
  scheme: SchemeId;
  intervals: number;
  degree: number | null;
  variant: string | null;
  status: NlpStatus;
  message: string;
  objective: number | null;
  finalTime: number | null;
  iterations: number;
  solveSeconds: number;
  transcribeSeconds: number;
  nlpSize: { n: number; m: number; jacNnz: number; hessNnz: number };
  resim: { finalMiss: number; maxPathViolation: number } | null;
  /** Largest violation of the NLP's (row-scaled) constraints and variable bounds at the returned point. */
  constraintViolation: number | null;
  errors: SolutionErrors;
  /**
   * How much of the objective error is the solver's: `solver` bounds f − f* of the NLP at the
   * returned point (total duality gap Σ s z + |λᵀc|, app/engine/nlp/gap.ts, objective units);
   * `discretisation` is the rest of the measured objective error (objectiveAbs − solver, ≥ 0),
   * null without a reference or when the solver share is not smaller than the error itself.
   */
  errorSplit: { solver: number | null; discretisation: number | null };
  trajectory: SolveTrajectory | null;
  /** Arc structure of a converged solution, from the scheme's own Solution (path multipliers included). */
  arcs: ArcStructure | null;
  /** Per-interval relative error estimate of a converged solution (app/engine/mesh/estimate.ts). */
  meshEstimate: MeshEstimateSummary | null;
  log: IterationRecord[];
}

/** What a report keeps of a mesh error estimate: the breakpoints in time and one error per interval. */
export interface MeshEstimateSummary {
  method: EstimateMethod;
  /** Mesh breakpoints in time (intervals + 1). */
  t: number[];
  /** Relative error estimate per interval. */
  error: number[];
  max: number;
}

export interface SolveOptions {
  nlp?: NlpOptions;
  /** Re-simulate converged solutions with odex (default true). */
  resimulate?: boolean;
  /** Include the trajectory in the report (default true). */
  keepTrajectory?: boolean;
  /** Detect the arc structure of converged solutions (default true). */
  arcs?: boolean;
  /** Estimate the error per mesh interval of converged solutions (default true). */
  estimate?: boolean;
}

/** One solve's report and, when recovery worked, its Solution (for mesh refinement's warm start). */
export interface SolveAttempt {
  report: SolveReport;
  solution: Solution | null;
}

const NO_ERRORS: SolutionErrors = {
  objectiveAbs: null, objectiveRel: null, finalTimeAbs: null, stateMax: null, controlMax: null, costateMax: null, switchingTimes: null,
};

export function isConverged(status: NlpStatus): boolean {
  return status === "optimal" || status === "acceptable";
}

export function solveProblem(problem: CompiledProblem, scheme: SchemeId, mesh: Mesh, options: SolveOptions = {}): SolveReport {
  const attempt = solveAttempt(problem, scheme, mesh, options);
  if (attempt.solution) analyseSolution(problem, mesh, attempt.solution, attempt.report, options);
  return attempt.report;
}

/** Transcribe, solve and recover: the report up to the objective, and the Solution when recovered. */
export function solveAttempt(problem: CompiledProblem, scheme: SchemeId, mesh: Mesh, options: SolveOptions = {}): SolveAttempt {
  const report: SolveReport = {
    problemId: problem.id,
    versionHash: problem.versionHash,
    scheme,
    intervals: mesh.intervals,
    // one degree for the whole mesh; an hp mesh (mesh.degrees) has none
    degree: scheme === "lgr" && !mesh.degrees ? (mesh.degree ?? DEFAULT_LGR_DEGREE) : null,
    variant: mesh.variant ?? null,
    status: "invalid_model",
    message: "",
    objective: null,
    finalTime: null,
    iterations: 0,
    solveSeconds: 0,
    transcribeSeconds: 0,
    nlpSize: { n: 0, m: 0, jacNnz: 0, hessNnz: 0 },
    resim: null,
    constraintViolation: null,
    errors: { ...NO_ERRORS },
    errorSplit: { solver: null, discretisation: null },
    trajectory: null,
    arcs: null,
    meshEstimate: null,
    log: [],
  };
  const tA = performance.now();
  let tr;
  try {
    tr = getScheme(scheme).transcribe(problem, mesh);
  } catch (e) {
    report.message = `transcription failed: ${(e as Error).message}`;
    return { report, solution: null };
  }
  report.transcribeSeconds = (performance.now() - tA) / 1000;
  const nlp = tr.nlp;
  report.nlpSize = { n: nlp.n, m: nlp.m, jacNnz: nlp.jacRows.length, hessNnz: nlp.hessRows.length };
  const tB = performance.now();
  let result: NlpResult;
  try {
    result = solveNlp(nlp, options.nlp);
  } catch (e) {
    report.status = "numerical_trouble";
    report.message = `solver raised an error: ${(e as Error).message}`;
    report.solveSeconds = (performance.now() - tB) / 1000;
    return { report, solution: null };
  }
  report.solveSeconds = (performance.now() - tB) / 1000;
  report.status = result.status;
  report.message = result.message;
  report.iterations = result.iterations;
  report.log = result.log;
  // invalid_model: the solver stopped before its first iterate, so x is the starting guess;
  // its objective, final time, violation and trajectory would be the guess's, not a result.
  if (result.status === "invalid_model") return { report, solution: null };
  // the solver's share of the objective error; split from the discretisation's in analyseSolution
  report.errorSplit = { solver: Number.isFinite(result.solverErrorEstimate) ? result.solverErrorEstimate : null, discretisation: null };
  report.constraintViolation = violation(nlp, result);
  let sol: Solution;
  try {
    sol = tr.recover(result);
  } catch (e) {
    report.message += `; recovery failed: ${(e as Error).message}`;
    return { report, solution: null };
  }
  report.objective = Number.isFinite(sol.objective) ? sol.objective : null;
  report.finalTime = Number.isFinite(sol.tf) ? sol.tf : null;
  return { report, solution: sol };
}

/**
 * The analysis of a recovered solution, in place on its report: errors against the reference,
 * re-simulation, arcs and the mesh error estimate (converged solutions only), and the trajectory.
 */
export function analyseSolution(problem: CompiledProblem, mesh: Mesh, sol: Solution, report: SolveReport, options: SolveOptions = {}): void {
  if (isConverged(report.status)) {
    report.errors = solutionErrors(problem, sol);
    report.errorSplit = errorSplitOf(report.errorSplit.solver ?? Number.NaN, report.errors.objectiveAbs);
    if (options.resimulate !== false) {
      const r = resimulate(problem, sol);
      report.resim = { finalMiss: r.finalMiss, maxPathViolation: r.maxPathViolation };
    }
    if (options.arcs !== false) {
      try {
        report.arcs = detectArcs(problem, sol);
      } catch (e) {
        report.message += `; arc detection failed: ${(e as Error).message}`;
      }
    }
    if (options.estimate !== false) {
      try {
        const est = estimateErrors(problem, sol, mesh);
        report.meshEstimate = { method: est.method, t: est.t, error: est.error, max: est.max };
      } catch (e) {
        report.message += `; mesh error estimate failed: ${(e as Error).message}`;
      }
    }
  }
  if (options.keepTrajectory !== false) report.trajectory = trajectoryOf(problem, sol);
}

function errorSplitOf(solverEst: number, objectiveAbs: number | null): SolveReport["errorSplit"] {
  const solver = Number.isFinite(solverEst) ? solverEst : null;
  if (solver === null || objectiveAbs === null || !(objectiveAbs > solver)) return { solver, discretisation: null };
  return { solver, discretisation: objectiveAbs - solver };
}

function violation(nlp: { n: number; m: number; xL: Float64Array; xU: Float64Array; gL: Float64Array; gU: Float64Array; g(x: Float64Array, out: Float64Array): void }, result: NlpResult): number | null {
  const x = result.x;
  if (!x || x.length !== nlp.n) return null;
  let v = 0;
  for (let i = 0; i < nlp.n; i++) v = Math.max(v, nlp.xL[i] - x[i], x[i] - nlp.xU[i]);
  const g = new Float64Array(nlp.m);
  try {
    nlp.g(x, g);
  } catch {
    return null;
  }
  for (let j = 0; j < nlp.m; j++) v = Math.max(v, nlp.gL[j] - g[j], g[j] - nlp.gU[j]);
  return Number.isFinite(v) ? v : null;
}

function trajectoryOf(problem: CompiledProblem, sol: Solution): SolveTrajectory {
  const named = (names: string[], series: Float64Array[]) => {
    const o: Record<string, number[]> = {};
    names.forEach((n, i) => (o[n] = Array.from(series[i])));
    return o;
  };
  const sn = problem.states.map((s) => s.name);
  return {
    t: Array.from(sol.t),
    states: named(sn, sol.states),
    tu: Array.from(sol.tu),
    controls: named(problem.controls.map((c) => c.name), sol.controls),
    tLambda: sol.tLambda ? Array.from(sol.tLambda) : null,
    costates: sol.costates ? named(sn, sol.costates) : null,
  };
}
