/**
 * refineProblem: the whole refinement of one problem, for the command line (bench/refine.ts) and
 * the server (which stores the result as a reference): direct solve with a scheme and mesh
 * (direct.ts), then refineFromSolution (refine.ts). The result carries what a stored reference
 * needs: objective, final time, junction times, arc labels, trajectory, residual, problem version
 * and the provenance "refined by shooting from <scheme> at <mesh>".
 */
import type { CompiledProblem, Provenance } from "../problem/types";
import type { NlpOptions } from "../nlp/types";
import type { Mesh, SchemeId } from "../schemes/types";
import { DEFAULT_LGR_DEGREE } from "../schemes/lgr";
import { directSolve } from "./direct";
import { refineFromSolution, type RefineOptions, type RefineReport } from "./refine";

export interface RefineProblemOptions extends RefineOptions {
  /** Scheme of the seeding direct solve. Default "hermite-simpson". */
  scheme?: SchemeId;
  /** Mesh intervals. Default: the problem's defaults.intervals, else 50. */
  intervals?: number;
  /** LGR degree. Default: the problem's defaults.degree, else DEFAULT_LGR_DEGREE. */
  degree?: number;
  nlp?: NlpOptions;
}

export interface RefineProblemReport extends RefineReport {
  direct: {
    scheme: SchemeId;
    mesh: Mesh;
    status: string;
    message: string;
    objective: number | null;
    finalTime: number | null;
    seconds: number;
  };
  /** Provenance for a stored reference (kind "shooting", with the residual reached). */
  provenance: Provenance;
  /** Stored-reference shape (ProblemReference fields), present when converged with the structure confirmed. */
  reference: {
    objective: number;
    finalTime: number;
    switchingTimes: number[];
    arcs: string[];
    residual: number;
    problemVersion: string;
  } | null;
}

/** "50 intervals" or "20 intervals of degree 4". */
export function meshLabel(scheme: SchemeId, mesh: Mesh): string {
  return scheme === "lgr" ? `${mesh.intervals} intervals of degree ${mesh.degree ?? DEFAULT_LGR_DEGREE}` : `${mesh.intervals} intervals`;
}

/** Arc labels of a refined sequence: per arc "upper", or "u1=upper,u2=interior" for several controls. */
export function arcLabels(problem: CompiledProblem, report: RefineReport): string[] {
  return report.arcs.map((a) => (problem.nu === 1 ? a.kinds[0] : a.kinds.map((k, j) => `${problem.controls[j].name}=${k}`).join(",")));
}

/**
 * Refinement with fallback seeds: when the refinement from the requested seed does not converge
 * (Newton stalls, or its solution is rejected) and options.retry is not false, it is tried again
 * from a finer seed (the same scheme at twice the intervals) and then from another scheme (LGR, or
 * Hermite–Simpson when LGR was asked) at the requested intervals: a seed closer to the optimum,
 * or with costate estimates of a different quality, puts Newton inside its region of convergence
 * (common practice, no source). The report is the first converged one, else the first; its
 * `attempts` list every seed and attempt and its message says which seed succeeded.
 */
export function refineProblem(problem: CompiledProblem, options: RefineProblemOptions = {}): RefineProblemReport {
  const scheme = options.scheme ?? "hermite-simpson";
  const intervals = options.intervals ?? problem.defaults?.intervals ?? 50;
  const first = refineFromSeed(problem, scheme, intervals, options);
  if (first.converged || options.retry === false) return first;
  const other: SchemeId = scheme === "lgr" ? "hermite-simpson" : "lgr";
  const attempts = first.attempts.map((a) => `seed ${seedLabel(first)}: ${a}`);
  let seconds = first.seconds;
  for (const [s, n] of [[scheme, 2 * intervals], [other, intervals]] as const) {
    const r = refineFromSeed(problem, s, n, options);
    seconds += r.seconds;
    attempts.push(...(r.attempts.length ? r.attempts : [`${r.status}: ${r.message}`]).map((a) => `seed ${seedLabel(r)}: ${a}`));
    if (r.converged) {
      return { ...r, attempts, seconds, message: `${r.message}; seeded from ${seedLabel(r)} after ${first.status} from ${seedLabel(first)}` };
    }
  }
  return { ...first, attempts, seconds, message: `${first.message}; the fallback seeds (${scheme} at ${2 * intervals} intervals, ${other} at ${intervals}) did not converge either` };
}

function seedLabel(r: RefineProblemReport): string {
  return `${r.direct.scheme} at ${meshLabel(r.direct.scheme, r.direct.mesh)}`;
}

function refineFromSeed(problem: CompiledProblem, scheme: SchemeId, intervals: number, options: RefineProblemOptions): RefineProblemReport {
  const mesh: Mesh = { intervals };
  if (scheme === "lgr") mesh.degree = options.degree ?? problem.defaults?.degree ?? DEFAULT_LGR_DEGREE;
  const detail = `refined by shooting from ${scheme} at ${meshLabel(scheme, mesh)}`;
  const d = directSolve(problem, scheme, mesh, options.nlp);
  const direct = {
    scheme,
    mesh,
    status: d.status,
    message: d.message,
    objective: d.solution ? d.solution.objective : null,
    finalTime: d.solution ? d.solution.tf : null,
    seconds: d.seconds,
  };
  if (!d.solution) {
    return {
      problemId: problem.id,
      problemVersion: problem.versionHash,
      status: "setup_failed",
      newtonStatus: "setup_failed",
      converged: false,
      message: `the direct solve failed (${d.status}: ${d.message})`,
      residual: Infinity,
      iterations: 0,
      history: [],
      objective: NaN,
      finalTime: NaN,
      junctions: [],
      arcs: [],
      signature: "",
      detectedSignature: "",
      structureConfirmed: false,
      violations: [],
      worstViolation: null,
      attempts: [],
      endpointMultipliers: {},
      jumps: [],
      trajectory: null,
      seconds: d.seconds,
      rhsEvaluations: 0,
      jacobianCondition: NaN,
      direct,
      provenance: { kind: "shooting", detail },
      reference: null,
    };
  }
  const r = refineFromSolution(problem, d.solution, options);
  const ok = r.converged && r.structureConfirmed;
  return {
    ...r,
    seconds: r.seconds + d.seconds,
    direct,
    provenance: { kind: "shooting", detail, residual: r.residual },
    reference: ok
      ? {
          objective: r.objective,
          finalTime: r.finalTime,
          switchingTimes: r.junctions,
          arcs: arcLabels(problem, r),
          residual: r.residual,
          problemVersion: problem.versionHash,
        }
      : null,
  };
}
