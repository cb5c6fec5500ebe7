/**
 * Contract of the sparse symmetric indefinite solver used by the interior-point method.
 * Implemented in sparse/ldl.ts (LDLᵀ, no pivoting, AMD ordering) — see that file.
 *
 *   const s = new SymmetricSolver(n, rows, cols)   // symbolic analysis once per pattern
 *   const inertia = s.factor(values)               // numeric factorisation, values in triplet order
 *   s.solve(b, x)                                  // x = A⁻¹ b, with iterative refinement
 *
 * Pattern: triplets of the LOWER or UPPER triangle (either; an entry and its mirror must not
 * both be given), duplicates summed, structurally missing diagonal entries added by the solver.
 */
export interface Inertia {
  /** true when every pivot was nonzero (|d| > pivot tolerance) and the factorisation is usable. */
  ok: boolean;
  positive: number;
  negative: number;
  zero: number;
}

export interface SymmetricSolverLike {
  readonly n: number;
  /** Nonzeros of the factor L (for statistics). */
  readonly nnzL: number;
  factor(values: Float64Array): Inertia;
  /** Solve A x = b using the last factorisation; refinementSteps default 1 (residual-checked). */
  solve(b: Float64Array, x: Float64Array, refinementSteps?: number): void;
}
