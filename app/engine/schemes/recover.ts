/**
 * Mapping an NLP result back to physical time, states, controls and multipliers — the parts every
 * scheme shares. Scheme-specific costate mappings and interpolants live in each scheme file.
 *
 * Costate sign: with the NLP Lagrangian f + λᵀg (nlp/types.ts) and a defect row written as a
 * discretisation of ∫(ẋ − f) dt, stationarity of the discrete Lagrangian matches the adjoint
 * equation ṗ = −H_x of H = objectiveSign·L + pᵀf when p ≈ −λ / (quadrature weight of the row).
 * So costates reported by Arcwatch are those of the minimisation of objectiveSign·(φ + ∫L).
 */
import type { NlpResult } from "../nlp/types";
import type { CompiledProblem } from "../problem/types";
import type { Assembly } from "./assembly";
import type { TranscriptionBuilder } from "./builder";

export interface Recovered {
  problem: CompiledProblem;
  /** Physical decision vector. */
  X: Float64Array;
  /** Physical (unscaled-row) constraint multipliers. */
  lambda: Float64Array;
  t0: number;
  tf: number;
  T: number;
  /** φ + ∫L as written in the file. */
  objective: number;
  /** t(τ). */
  time(tau: number): number;
  /** Copy nx values starting at variable index start. */
  block(start: number, count: number): Float64Array;
  /** Dynamics f(t, x, u) into out. */
  dynamics(t: number, x: ArrayLike<number>, u: ArrayLike<number>, out: Float64Array): void;
}

export function recoverCommon(problem: CompiledProblem, asm: Assembly, b: TranscriptionBuilder, result: NlpResult): Recovered {
  const X = new Float64Array(asm.n);
  asm.toPhysical(result.x, X);
  const lambda = new Float64Array(asm.m);
  if (result.lambda && result.lambda.length === asm.m) asm.multipliersPhys(result.lambda, lambda);
  const T = asm.span(X);
  const t0 = b.t0;
  const objective = problem.objectiveSign * asm.objectivePhys(X);
  const z = new Float64Array(1 + problem.nx + problem.nu);
  return {
    problem,
    X,
    lambda,
    t0,
    tf: t0 + T,
    T,
    objective,
    time: (tau) => t0 + tau * T,
    block: (start, count) => X.slice(start, start + count),
    dynamics(t, x, u, out) {
      z[0] = t;
      for (let i = 0; i < problem.nx; i++) z[1 + i] = x[i];
      for (let i = 0; i < problem.nu; i++) z[1 + problem.nx + i] = u[i];
      problem.dynamics.eval(z, out);
    },
  };
}

/** Series storage: series[i][k] for component i at grid point k. */
export function allocSeries(count: number, length: number): Float64Array[] {
  return Array.from({ length: count }, () => new Float64Array(length));
}

/** Multipliers of the path rows (first row of each point in rows0) as one array per path constraint. */
export function pathMultipliers(problem: CompiledProblem, rows0: number[], lambda: Float64Array): Float64Array[] | null {
  const np = problem.pathInfo.length;
  if (np === 0) return null;
  const out = allocSeries(np, rows0.length);
  rows0.forEach((r0, k) => {
    for (let i = 0; i < np; i++) out[i][k] = lambda[r0 + i];
  });
  return out;
}
