/**
 * Up-looking sparse LDLᵀ factorisation A = L D Lᵀ of a symmetric (indefinite) matrix, without
 * pivoting, with its inertia; and the triangular solves.
 *
 * Method: row k of L solves the sparse triangular system L₀:k−1,0:k−1 D y = a_0:k−1,k, where the
 * nonzero pattern of y is the reach of {i : a_ik ≠ 0} in the elimination tree, taken in topological
 * order; then  l_kj = y_j / d_j  and  d_k = a_kk − Σ_j y_j l_kj
 * (Davis, "Algorithm 849: A concise sparse Cholesky factorization package", ACM TOMS 31(4), 2005;
 *  the row-by-row variant with column fill pointers of QDLDL, Stellato et al., "OSQP: an operator
 *  splitting solver for quadratic programs", Math. Program. Comput. 12, 2020).
 *
 * Inertia: by Sylvester's law of inertia the signs of d_k are the signs of the eigenvalues of A
 * (valid whenever every d_k ≠ 0). A pivot with |d_k| ≤ pivotTolerance (or NaN, ±∞) is counted as zero and
 * makes the factorisation unusable (ok = false); it is then replaced by a decoupled pivot
 * (1/d_k := 0, so column k of L is zero) and the factorisation continues, so that the counts of the
 * remaining pivots are still reported. Without pivoting the factorisation exists for every
 * symmetric quasi-definite matrix [[H, Jᵀ], [J, −C]] with H ≻ 0, C ≻ 0, in any symmetric order
 * (Vanderbei, "Symmetric quasidefinite matrices", SIAM J. Optim. 5(1), 1995, Theorem 2.1).
 *
 * Signed dynamic regularisation (optional, `signs` given, s_k = ±1 the expected sign of pivot k):
 * a pivot with |d_k| ≤ pivotTolerance is replaced by s_k·δ (δ = `regularization`). Changing d_k
 * by Δ is the exact factorisation of A + Δ e_k e_kᵀ, so the factor is that of A + E with E diagonal
 * and |E_kk| ≤ δ + pivotTolerance; iterative refinement against A then removes E's effect
 * (Altman and Gondzio, "Regularized symmetric indefinite systems in interior point methods for
 * linear and quadratic optimization", Optim. Methods Softw. 11, 1999; Goulart and Chen, "Clarabel:
 * an interior-point solver for conic programs with quadratic objectives", arXiv:2405.12762, 2024).
 *
 * Sizes: A upper-stored CSC (n, colPtr n+1, rowIdx/values nnz(A)); L strictly lower, column-stored:
 * Lp Int32Array(n+1), Li Int32Array(nnz(L)), Lx Float64Array(nnz(L)); D, Dinv Float64Array(n).
 */
import type { CscPattern } from "./csc";
import type { Inertia } from "./types";

/** Symbolic factor: elimination tree and the column pointers of L (from sparse/etree.ts). */
export interface LdlSymbolic {
  n: number;
  /** parent[i] in the elimination tree, −1 for roots. Int32Array(n). */
  parent: Int32Array;
  /** Lnz[i] = strictly lower nonzeros of column i. Int32Array(n). */
  Lnz: Int32Array;
  /** Column pointers of L: Lp[0] = 0, Lp[i+1] = Lp[i] + Lnz[i]. Int32Array(n+1). */
  Lp: Int32Array;
}

/** Numeric factor storage, allocated once per pattern. */
export interface LdlFactor {
  Li: Int32Array;
  Lx: Float64Array;
  D: Float64Array;
  Dinv: Float64Array;
}

/** Workspace of the numeric phase, allocated once per pattern (all length n). */
export interface LdlWorkspace {
  /** 1 when node i is already in the pattern of the current row. */
  yMarkers: Uint8Array;
  /** Pattern of the current row, topological order. */
  yIdx: Int32Array;
  /** Stack for one elimination-tree path. */
  elimBuffer: Int32Array;
  /** Dense values of the current row (zero between rows). */
  yVals: Float64Array;
  /** Next free slot of each column of L during the factorisation. */
  LNextSpaceInCol: Int32Array;
}

export function ldlSymbolicFromCounts(n: number, parent: Int32Array, Lnz: Int32Array): LdlSymbolic {
  const Lp = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) Lp[i + 1] = Lp[i] + Lnz[i];
  return { n, parent, Lnz, Lp };
}

export function allocateLdlFactor(sym: LdlSymbolic): LdlFactor {
  const nnzL = sym.Lp[sym.n];
  return { Li: new Int32Array(nnzL), Lx: new Float64Array(nnzL), D: new Float64Array(sym.n), Dinv: new Float64Array(sym.n) };
}

export function allocateLdlWorkspace(n: number): LdlWorkspace {
  return {
    yMarkers: new Uint8Array(n),
    yIdx: new Int32Array(n),
    elimBuffer: new Int32Array(n),
    yVals: new Float64Array(n),
    LNextSpaceInCol: new Int32Array(n),
  };
}

/**
 * Numeric factorisation of the upper-stored A (values Ax) into fac, using the symbolic factor sym.
 * Writes the pivot counts into `inertia` and returns it. No allocation.
 */
export function ldlNumeric(
  A: CscPattern,
  Ax: Float64Array,
  sym: LdlSymbolic,
  fac: LdlFactor,
  ws: LdlWorkspace,
  pivotTolerance: number,
  inertia: Inertia,
  signs: Int8Array | null = null,
  regularization = 0,
): Inertia {
  const { n, colPtr: Ap, rowIdx: Ai } = A;
  const { parent: etree, Lp } = sym;
  const { Li, Lx, D, Dinv } = fac;
  const { yMarkers, yIdx, elimBuffer, yVals, LNextSpaceInCol } = ws;
  let positive = 0;
  let negative = 0;
  let zero = 0;
  let regularized = 0;
  let regularizedNegative = 0;

  for (let i = 0; i < n; i++) {
    yMarkers[i] = 0;
    yVals[i] = 0;
    D[i] = 0;
    LNextSpaceInCol[i] = Lp[i];
  }

  for (let k = 0; k < n; k++) {
    // Scatter column k of A (rows ≤ k) into y and find the pattern of row k of L.
    let nnzY = 0;
    for (let p = Ap[k]; p < Ap[k + 1]; p++) {
      const bidx = Ai[p];
      if (bidx === k) {
        D[k] += Ax[p];
        continue;
      }
      yVals[bidx] += Ax[p];
      if (yMarkers[bidx] === 0) {
        // Walk up the elimination tree from bidx until a node already in the pattern (or k).
        yMarkers[bidx] = 1;
        elimBuffer[0] = bidx;
        let nnzE = 1;
        let next = etree[bidx];
        while (next !== -1 && next < k) {
          if (yMarkers[next] === 1) break;
          yMarkers[next] = 1;
          elimBuffer[nnzE++] = next;
          next = etree[next];
        }
        // Push the path in reverse, so that yIdx read backwards is a topological order.
        while (nnzE > 0) yIdx[nnzY++] = elimBuffer[--nnzE];
      }
    }

    // Sparse triangular solve for row k, in topological order.
    let dk = D[k];
    for (let q = nnzY - 1; q >= 0; q--) {
      const c = yIdx[q];
      const end = LNextSpaceInCol[c];
      const yc = yVals[c];
      for (let p = Lp[c]; p < end; p++) yVals[Li[p]] -= Lx[p] * yc;
      const lkc = yc * Dinv[c];
      Li[end] = k;
      Lx[end] = lkc;
      dk -= yc * lkc;
      LNextSpaceInCol[c] = end + 1;
      yVals[c] = 0;
      yMarkers[c] = 0;
    }
    if (signs !== null && Math.abs(dk) <= pivotTolerance) {
      // signed dynamic regularisation: a tiny pivot takes its expected sign (NaN stays a zero pivot)
      dk = signs[k] * regularization;
      regularized++;
      if (signs[k] < 0) regularizedNegative++;
    }
    D[k] = dk;

    if (dk - dk !== 0) {
      zero++; // NaN or ±Infinity: not a usable pivot
      Dinv[k] = 0;
    } else if (dk > pivotTolerance) {
      positive++;
      Dinv[k] = 1 / dk;
    } else if (dk < -pivotTolerance) {
      negative++;
      Dinv[k] = 1 / dk;
    } else {
      zero++; // |d_k| ≤ tolerance
      Dinv[k] = 0;
    }
  }
  inertia.ok = zero === 0;
  inertia.positive = positive;
  inertia.negative = negative;
  inertia.zero = zero;
  inertia.regularized = regularized;
  inertia.regularizedNegative = regularizedNegative;
  return inertia;
}

/**
 * Solves L D Lᵀ x = b in place (x holds b on entry):
 *   forward  L z = b  (column-oriented),  diagonal  w = D⁻¹ z,  backward  Lᵀ x = w.
 * A decoupled zero pivot (Dinv = 0) gives x_k from the remaining equations only.
 */
export function ldlSolveInPlace(sym: LdlSymbolic, fac: LdlFactor, x: Float64Array): void {
  const { n, Lp } = sym;
  const { Li, Lx, Dinv } = fac;
  for (let j = 0; j < n; j++) {
    const xj = x[j];
    if (xj !== 0) for (let p = Lp[j]; p < Lp[j + 1]; p++) x[Li[p]] -= Lx[p] * xj;
  }
  for (let j = 0; j < n; j++) x[j] *= Dinv[j];
  for (let j = n - 1; j >= 0; j--) {
    let s = x[j];
    for (let p = Lp[j]; p < Lp[j + 1]; p++) s -= Lx[p] * x[Li[p]];
    x[j] = s;
  }
}
