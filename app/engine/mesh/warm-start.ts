/**
 * Warm start of a refinement pass: the previous pass's solution, interpolated onto the new mesh, as
 * the initial guess. The transcriptions take their initial point from problem.guess (values at
 * normalised time τ and the final-time guess; builder.ts), so the new pass solves the same problem
 * with the guess replaced by the solution's own interpolants (Solution.stateAt / controlAt, as the
 * scheme implies). The solver's own warm-start option (multipliers and barrier parameter) is not
 * used: the multipliers of one mesh have no counterpart row by row on another.
 */
import type { CompiledProblem, InitialGuess } from "../problem/types";
import type { Solution } from "../schemes/types";

export function guessFromSolution(problem: CompiledProblem, sol: Solution): InitialGuess {
  const { nx, nu } = problem;
  const x = new Float64Array(nx), u = new Float64Array(nu);
  const T = sol.tf - sol.t0;
  return {
    tf: sol.tf,
    at(tau: number, out: Float64Array): void {
      const t = sol.t0 + Math.min(Math.max(tau, 0), 1) * T;
      sol.stateAt(t, x);
      sol.controlAt(t, u);
      for (let i = 0; i < nx; i++) out[i] = x[i];
      for (let i = 0; i < nu; i++) out[nx + i] = u[i];
    },
  };
}

/** The problem with its initial guess replaced by the solution's interpolants. */
export function warmStarted(problem: CompiledProblem, sol: Solution): CompiledProblem {
  return { ...problem, guess: guessFromSolution(problem, sol) };
}
