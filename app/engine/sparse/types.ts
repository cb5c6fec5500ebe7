/**
 * Contract of the sparse symmetric indefinite solver used by the interior-point method.
 * Implemented by SymmetricSolver in sparse/index.ts (LDLᵀ without pivoting, AMD ordering) — see
 * sparse/ldl.ts. For a KKT matrix pass `signs` (+1 for the primal rows, −1 for the constraint rows,
 * see kktSigns) so that zero pivots caused by the zero (2,2) block are avoided by the ordering and,
 * where still tiny, regularised and corrected by refinement (DEVELOPERS.md, Decisions).
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
  /**
   * Pivots replaced by signed dynamic regularisation (only when the solver was given expected
   * signs); they are counted in positive/negative by their expected sign. Absent or 0 otherwise.
   */
  regularized?: number;
  /**
   * Of those, the ones with expected sign −1 (the constraint rows of a KKT matrix). A regularised
   * +1 pivot is the usual sign of a zero row of W with δw = 0, which a 1×1-pivot LDLᵀ cannot avoid
   * and refinement corrects; a regularised −1 pivot (with the matched ordering) points to
   * dependent constraint rows.
   */
  regularizedNegative?: number;
}

export interface SymmetricSolverLike {
  readonly n: number;
  /** Nonzeros of the factor L (for statistics). */
  readonly nnzL: number;
  factor(values: Float64Array): Inertia;
  /** Solve A x = b using the last factorisation; refinementSteps default 1 (residual-checked). */
  solve(b: Float64Array, x: Float64Array, refinementSteps?: number): void;
  /**
   * Optional direct assembly: once the symbolic analysis has run, `slots[t]` is the position of
   * triplet t in `values`, the matrix in the factor's own (permuted) storage order, and
   * factorAssembled() factors what the caller has summed into `values` (zero it first). Null
   * before the analysis (a solver whose ordering depends on the values analyses in its first
   * factor()). Equivalent to factor(v) with v[t] summed into values[slots[t]] in triplet order.
   */
  assembly?(): { slots: Int32Array; values: Float64Array } | null;
  factorAssembled?(): Inertia;
}
