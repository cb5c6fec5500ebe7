/**
 * The primal–dual system of W&B 2006 eq. (13), for the internal problem (internal.ts):
 *
 *   [ W + Σ + δ_w I    Jᵀ    ] [ d_w ]     [ ∇φ_μ(w) + Jᵀλ ]
 *   [ J              −δ_c I  ] [ d_λ ] = − [ c(w)          ]
 *
 * of dimension K = N + m. The pattern (lower triangle) is fixed once per solve, in four
 * consecutive triplet blocks whose values are written in place each iteration, so the
 * triplet → value map is positional and nothing is searched or allocated per iteration:
 *
 *   [0, nnzH)            W (Hessian of the Lagrangian, lower triangle)    rows/cols in [0, N)
 *   [hEnd, hEnd+N)       diagonal Σ + δ_w (+ σ I of the limited-memory Hessian)
 *   [dEnd, dEnd+nnzJ)    J at (N + row, col)
 *   [jEnd, jEnd+m)       −δ_c at (N + j, N + j)
 *
 * Duplicated triplets are summed by the symmetric solver. Once the solver has analysed the
 * pattern and offers direct assembly (sparse SymmetricSolver.assembly), the values are summed
 * straight into its permuted storage through its triplet → slot map instead (no copy, no second
 * pass; same sums in the same order). A retry with other shifts only (refactor(), for the inertia
 * correction) rewrites the diagonal slots alone: each (1,1) diagonal slot is W's part, kept from the
 * last full assembly, plus Σ_i + δ_w, as factor() sums it, and nothing else lands there (J's entries
 * are off the diagonal); each (2,2) diagonal slot holds −δ_c alone.
 */
import type { Inertia, SymmetricSolverLike } from "../sparse/types";

export type SolverFactory = (n: number, rows: Int32Array, cols: Int32Array, signs?: Int8Array) => SymmetricSolverLike;

export class KktSystem {
  readonly N: number;
  readonly m: number;
  readonly dim: number;
  /** Triplet values, for a solver without direct assembly (and for the first factor() of one that analyses on its first values); made on first use. */
  private tripletValues: Float64Array | null = null;
  private readonly nT: number;
  readonly solver: SymmetricSolverLike;
  private readonly hEnd: number;
  private readonly dEnd: number;
  private readonly jEnd: number;
  /** W's part of each (1,1) diagonal slot at the last full direct assembly (refactor()). */
  private wDiag: Float64Array | null = null;
  /** The last factor()'s arrays and whether it assembled directly, for refactor() (fields, not an object per call). */
  private lastH: Float64Array | null = null;
  private lastDiag: Float64Array | null = null;
  private lastJ: Float64Array | null = null;
  private lastDirect = false;

  constructor(N: number, m: number, hRows: Int32Array, hCols: Int32Array, jRows: Int32Array, jCols: Int32Array, factory: SolverFactory) {
    this.N = N;
    this.m = m;
    this.dim = N + m;
    const nnzH = hRows.length, nnzJ = jRows.length;
    this.hEnd = nnzH;
    this.dEnd = nnzH + N;
    this.jEnd = this.dEnd + nnzJ;
    const total = this.jEnd + m;
    const rows = new Int32Array(total);
    const cols = new Int32Array(total);
    rows.set(hRows, 0);
    cols.set(hCols, 0);
    for (let i = 0; i < N; i++) { rows[this.hEnd + i] = i; cols[this.hEnd + i] = i; }
    for (let k = 0; k < nnzJ; k++) { rows[this.dEnd + k] = N + jRows[k]; cols[this.dEnd + k] = jCols[k]; }
    for (let j = 0; j < m; j++) { rows[this.jEnd + j] = N + j; cols[this.jEnd + j] = N + j; }
    this.nT = total;
    const signs = new Int8Array(this.dim);
    signs.fill(1, 0, N);
    signs.fill(-1, N, this.dim);
    this.solver = factory(this.dim, rows, cols, signs);
  }

  /**
   * Write the values: hVals (nnzH, or null for W = 0), diag (N: Σ plus any fixed diagonal),
   * δ_w, jVals (nnzJ), δ_c; then factorise and return the inertia.
   */
  factor(hVals: Float64Array | null, diag: Float64Array, deltaW: number, jVals: Float64Array, deltaC: number): Inertia {
    const direct = this.solver.factorAssembled ? this.solver.assembly?.() : null;
    if (direct) {
      // Straight into the factor's storage through the solver's slot map: the same sums in the
      // same (triplet) order as factor(values), without the triplet array.
      const { slots, values: Cx } = direct;
      Cx.fill(0);
      const { hEnd, dEnd, jEnd, N, m } = this;
      if (hVals) for (let k = 0; k < hEnd; k++) Cx[slots[k]] += hVals[k];
      const wDiag = (this.wDiag ??= new Float64Array(N));
      for (let i = 0; i < N; i++) wDiag[i] = Cx[slots[hEnd + i]];
      for (let i = 0; i < N; i++) Cx[slots[hEnd + i]] += diag[i] + deltaW;
      for (let k = dEnd; k < jEnd; k++) Cx[slots[k]] += jVals[k - dEnd];
      for (let j = 0; j < m; j++) Cx[slots[jEnd + j]] += -deltaC;
      this.remember(hVals, diag, jVals, true);
      return this.solver.factorAssembled!();
    }
    const v = (this.tripletValues ??= new Float64Array(this.nT));
    if (hVals) v.set(hVals, 0);
    else v.fill(0, 0, this.hEnd);
    for (let i = 0; i < this.N; i++) v[this.hEnd + i] = diag[i] + deltaW;
    v.set(jVals, this.dEnd);
    v.fill(-deltaC, this.jEnd, this.jEnd + this.m);
    const inertia = this.solver.factor(v);
    this.remember(hVals, diag, jVals, false);
    // A solver that analyses on its first values offers direct assembly from then on: let go of
    // the triplet values (nT doubles, 2 MB at Hermite–Simpson N = 3,200) while they are young.
    if (this.solver.factorAssembled && this.solver.assembly?.()) this.tripletValues = null;
    return inertia;
  }

  /**
   * factor() again with the last call's values, unchanged since, and other shifts δ_w, δ_c: the same
   * matrix to the bit, written into the diagonal slots only where the values were assembled directly.
   */
  refactor(deltaW: number, deltaC: number): Inertia {
    const diag = this.lastDiag, jVals = this.lastJ;
    if (diag === null || jVals === null) throw new Error("nlp/KktSystem.refactor: no factor() before");
    const direct = this.lastDirect ? this.solver.assembly?.() : null;
    if (!direct || !this.wDiag) return this.factor(this.lastH, diag, deltaW, jVals, deltaC);
    const { slots, values: Cx } = direct;
    const { hEnd, jEnd, N, m } = this;
    const wDiag = this.wDiag;
    for (let i = 0; i < N; i++) Cx[slots[hEnd + i]] = wDiag[i] + (diag[i] + deltaW);
    for (let j = 0; j < m; j++) Cx[slots[jEnd + j]] = 0 + -deltaC;
    return this.solver.factorAssembled!();
  }

  private remember(hVals: Float64Array | null, diag: Float64Array, jVals: Float64Array, direct: boolean): void {
    this.lastH = hVals;
    this.lastDiag = diag;
    this.lastJ = jVals;
    this.lastDirect = direct;
  }

  /** x = K⁻¹ b with the last factorisation (b, x of length N + m). */
  solve(b: Float64Array, x: Float64Array): void {
    this.solver.solve(b, x);
  }
}
