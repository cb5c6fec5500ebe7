/**
 * The direct solve that seeds a refinement: transcribe with one scheme, solve the NLP, recover
 * the Solution (with the scheme's costate estimates). Unlike solve.ts (which reports), this keeps
 * the Solution object itself, whose stateAt/controlAt the shooting seed interpolates.
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpOptions, NlpStatus } from "../nlp/types";
import type { Mesh, SchemeId, Solution } from "../schemes/types";
import { getScheme } from "../schemes/index";
import { solveNlp } from "../nlp/index";

export interface DirectSolve {
  status: NlpStatus | "transcription_failed" | "recovery_failed";
  message: string;
  solution: Solution | null;
  iterations: number;
  seconds: number;
}

export function directSolve(problem: CompiledProblem, scheme: SchemeId, mesh: Mesh, nlp: NlpOptions = {}): DirectSolve {
  const t0 = performance.now();
  const done = (d: Omit<DirectSolve, "seconds">): DirectSolve => ({ ...d, seconds: (performance.now() - t0) / 1000 });
  let tr;
  try {
    tr = getScheme(scheme).transcribe(problem, mesh);
  } catch (e) {
    return done({ status: "transcription_failed", message: (e as Error).message, solution: null, iterations: 0 });
  }
  let result;
  try {
    result = solveNlp(tr.nlp, nlp);
  } catch (e) {
    return done({ status: "numerical_trouble", message: `solver raised an error: ${(e as Error).message}`, solution: null, iterations: 0 });
  }
  if (result.status !== "optimal" && result.status !== "acceptable") {
    return done({ status: result.status, message: result.message, solution: null, iterations: result.iterations });
  }
  try {
    return done({ status: result.status, message: result.message, solution: tr.recover(result), iterations: result.iterations });
  } catch (e) {
    return done({ status: "recovery_failed", message: (e as Error).message, solution: null, iterations: result.iterations });
  }
}
