/**
 * Up-looking sparse LDLᵀ factorisation A = L D Lᵀ of a symmetric (indefinite) matrix, without
 * pivoting, with its inertia; and the triangular solves.
 *
 * Method: row k of L solves the sparse triangular system L₀:k−1,0:k−1 y = a_0:k−1,k (unit lower L),
 * where the nonzero pattern of y is the reach of {i : a_ik ≠ 0} in the elimination tree, taken in
 * topological order; then  l_kj = y_j / d_j  and  d_k = a_kk − Σ_j y_j l_kj
 * (Davis, "Algorithm 849: A concise sparse Cholesky factorization package", ACM TOMS 31(4), 2005;
 *  the row-by-row variant with column fill pointers of QDLDL, Stellato et al., "OSQP: an operator
 *  splitting solver for quadratic programs", Math. Program. Comput. 12, 2020). Unlike QDLDL the
 *  row patterns, and the slot of each of their entries in column storage (where QDLDL keeps a fill
 *  pointer per column), are computed once in the symbolic phase (ldlSymbolic), since the
 *  interior-point method refactors the same pattern every iteration.
 *
 * Inertia: by Sylvester's law of inertia the signs of d_k are the signs of the eigenvalues of A
 * (valid whenever every d_k ≠ 0). A pivot with |d_k| ≤ pivotTolerance (or NaN, ±∞) is counted as zero and
 * makes the factorisation unusable (ok = false); it is then replaced by a decoupled pivot
 * (1/d_k := 0, so column k of L is zero) and the factorisation continues, so that the counts of the
 * remaining pivots are still reported. Without pivoting the factorisation exists for every
 * symmetric quasi-definite matrix [[H, Jᵀ], [J, −C]] with H ≻ 0, C ≻ 0, in any symmetric order
 * (Vanderbei, "Symmetric quasidefinite matrices", SIAM J. Optim. 5(1), 1995, Theorem 2.1; theorem number recalled from memory).
 *
 * Signed dynamic regularisation (optional, `signs` given, s_k = ±1 the expected sign of pivot k):
 * a pivot with |d_k| ≤ pivotTolerance is replaced by s_k·δ (δ = `regularization`). Changing d_k
 * by Δ is the exact factorisation of A + Δ e_k e_kᵀ, so the factor is that of A + E with E diagonal
 * and |E_kk| ≤ δ + pivotTolerance; iterative refinement against A then removes E's effect
 * (Altman and Gondzio, "Regularized symmetric indefinite systems in interior point methods for
 * linear and quadratic optimization", Optim. Methods Softw. 11, 1999; Goulart and Chen, "Clarabel:
 * an interior-point solver for conic programs with quadratic objectives", arXiv:2405.12762, 2024).
 *
 * 2×2 pairs as width-2 supernodes: a pair's two columns have one pattern below the pair, so a later
 * row's update by both columns, and the forward solve's, run in one pass over it (the operations
 * and their order unchanged: factors bit-identical to one column at a time). Wider supernodes
 * (dense blocks) were not added: a local transcription's L has ≤ 10–16 entries per column and
 * about 2.3 columns per fundamental supernode (COPS Goddard, N = 3,200), too little to amortise.
 *
 * Sizes: A upper-stored CSC (n, colPtr n+1, rowIdx/values nnz(A)); L strictly lower, column-stored:
 * Lp Int32Array(n+1), Li Int32Array(nnz(L)), Lx Float64Array(nnz(L)); D, Dinv Float64Array(n).
 */
import type { CscPattern } from "./csc";
import type { Inertia } from "./types";

/**
 * Symbolic factor: elimination tree, column counts (sparse/etree.ts) and the full pattern of L,
 * both by columns (Li, for the solves) and by rows (rowPtr/rowCols, for the up-looking numeric
 * phase). The pattern of row k of L is the reach of {i < k : a_ik ≠ 0} in the elimination tree
 * (Davis 2005, §2); it does not depend on the values, so it is found once here and each numeric
 * factorisation walks no tree.
 */
export interface LdlSymbolic {
  n: number;
  /** parent[i] in the elimination tree, −1 for roots. Int32Array(n). */
  parent: Int32Array;
  /** Lnz[i] = strictly lower nonzeros of column i. Int32Array(n). */
  Lnz: Int32Array;
  /** Column pointers of L: Lp[0] = 0, Lp[i+1] = Lp[i] + Lnz[i]. Int32Array(n+1). */
  Lp: Int32Array;
  /** Row indices of L by column, increasing within each column. Int32Array(nnz(L)). */
  Li: Int32Array;
  /** Row k of L has its nonzeros in columns rowCols[rowPtr[k] .. rowPtr[k+1]−1], increasing. */
  rowPtr: Int32Array;
  rowCols: Int32Array;
  /**
   * rowSlot[q]: where the entry (k, rowCols[q]) of row k sits in column storage (Li/Lx). Columns
   * fill top-down as the rows are factored, so it is the column's next free slot when row k
   * reaches it; found here once, the numeric phase neither loads nor advances such pointers.
   */
  rowSlot: Int32Array;
  /** 2×2 pivot pairs: kind[k] = 1 and kind[k+1] = 2 for a pair; 0 for a 1×1 pivot; null if none. */
  kind: Uint8Array | null;
}

/**
 * Numeric factor storage, allocated once per pattern (Li is the symbolic pattern, shared).
 * A 2×2 pair (k, k+1) has the block [[D[k], E[k]], [E[k], D[k+1]]] and its inverse
 * [[Dinv[k], Einv[k]], [Einv[k], Dinv[k+1]]]; L[k+1][k] is kept as an explicit 0.
 */
export interface LdlFactor {
  Li: Int32Array;
  Lx: Float64Array;
  D: Float64Array;
  Dinv: Float64Array;
  E: Float64Array;
  Einv: Float64Array;
}

/** Workspace of the numeric phase, allocated once per pattern (length n). */
export interface LdlWorkspace {
  /** Dense values of the current row (zero between rows). */
  yVals: Float64Array;
}

/**
 * Pattern of L from the elimination tree: for each row k, walk up from every i with a_ik ≠ 0
 * until a node already visited for row k (flag), collecting the row's columns; sorted increasing,
 * which is a topological order of the tree (parent[j] > j). Cost O(nnz(L) log) once per pattern.
 */
export function ldlSymbolic(A: CscPattern, parent: Int32Array, Lnz: Int32Array, kind: Uint8Array | null = null): LdlSymbolic {
  const { n, colPtr: Ap, rowIdx: Ai } = A;
  const flag = new Int32Array(n).fill(-1);
  // Row k's pattern: rowReach (below).
  let colCount = Lnz;
  if (kind !== null) {
    if (kind.length !== n) throw new Error(`sparse/ldl: kind has length ${kind.length}, expected ${n}`);
    for (let j = 0; j < n; j++) {
      if (kind[j] === 1 && (j + 1 >= n || kind[j + 1] !== 2 || parent[j] !== j + 1)) {
        throw new Error(`sparse/ldl: 2×2 pair at ${j}, ${j + 1} is not a parent–child pair of the elimination tree`);
      }
    }
    // A pair's first column gets the second's pattern plus the second itself, and nothing else
    // changes: struct(L_j) ⊆ {p} ∪ struct(L_p) for p = parent(j) = j + 1 (Liu, SIAM J. Matrix
    // Anal. Appl. 11(1), 1990), so rowReach adds j exactly where j + 1 appears. The counts follow
    // from the tree's own (O(n)).
    colCount = Int32Array.from(Lnz);
    for (let j = 0; j < n; j++) if (kind[j] === 1) colCount[j] = Lnz[j + 1] + 1;
  }
  const Lp = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) Lp[i + 1] = Lp[i] + colCount[i];
  const nnzL = Lp[n];
  const Li = new Int32Array(nnzL);
  const rowPtr = new Int32Array(n + 1);
  const rowCols = new Int32Array(nnzL);
  const rowSlot = new Int32Array(nnzL);
  const next = Lp.slice(0, n);
  let count = 0;
  for (let k = 0; k < n; k++) {
    const start = count;
    count = rowReach(Ap, Ai, parent, kind, flag, k, rowCols, start);
    sortRange(rowCols, start, count);
    for (let q = start; q < count; q++) {
      const slot = next[rowCols[q]]++;
      Li[slot] = k;
      rowSlot[q] = slot;
    }
    rowPtr[k + 1] = count;
  }
  if (count !== nnzL) throw new Error(`sparse/ldl: pattern has ${count} entries, column counts say ${nnzL}`);
  for (let j = 0; j < n; j++) {
    if (next[j] !== Lp[j + 1]) throw new Error(`sparse/ldl: column ${j} has ${next[j] - Lp[j]} entries, its count says ${colCount[j]}`);
  }
  return { n, parent, Lnz: colCount, Lp, Li, rowPtr, rowCols, rowSlot, kind };
}

/**
 * Row k's pattern: the tree reach of {i : a_ik ≠ 0}; with 2×2 pairs (kind 1 at j, 2 at j+1) also
 * column j wherever column j+1 appears, so that the pair's two columns share one pattern. Writes
 * the columns (unsorted) into out from position `at`; returns the position after the last.
 */
function rowReach(Ap: Int32Array, Ai: Int32Array, parent: Int32Array, kind: Uint8Array | null, flag: Int32Array, k: number, out: Int32Array, at: number): number {
  let q = at;
  flag[k] = k;
  for (let p = Ap[k]; p < Ap[k + 1]; p++) {
    for (let i = Ai[p]; flag[i] !== k; i = parent[i]) {
      flag[i] = k;
      out[q++] = i;
      if (kind !== null && kind[i] === 2 && flag[i - 1] !== k) {
        flag[i - 1] = k;
        out[q++] = i - 1;
      }
    }
  }
  return q;
}

/** Sorts a[start..end) increasing: insertion sort for short rows, the typed-array sort otherwise. */
function sortRange(a: Int32Array, start: number, end: number): void {
  if (end - start > 32) {
    a.subarray(start, end).sort();
    return;
  }
  for (let i = start + 1; i < end; i++) {
    const v = a[i];
    let j = i - 1;
    while (j >= start && a[j] > v) {
      a[j + 1] = a[j];
      j--;
    }
    a[j + 1] = v;
  }
}

export function allocateLdlFactor(sym: LdlSymbolic): LdlFactor {
  const nnzL = sym.Lp[sym.n];
  const n = sym.n;
  return { Li: sym.Li, Lx: new Float64Array(nnzL), D: new Float64Array(n), Dinv: new Float64Array(n), E: new Float64Array(n), Einv: new Float64Array(n) };
}

export function allocateLdlWorkspace(n: number): LdlWorkspace {
  return { yVals: new Float64Array(n) };
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
  const { Lp, Li, rowPtr, rowCols, rowSlot, kind } = sym;
  const { Lx, D, Dinv, E, Einv } = fac;
  const { yVals } = ws;
  let positive = 0;
  let negative = 0;
  let zero = 0;
  let regularized = 0;
  let regularizedNegative = 0;

  yVals.fill(0, 0, n);

  for (let k = 0; k < n; k++) {
    // Scatter column k of A (rows ≤ k) into y.
    let dk = 0;
    for (let p = Ap[k]; p < Ap[k + 1]; p++) {
      const i = Ai[p];
      if (i === k) dk += Ax[p];
      else yVals[i] += Ax[p];
    }
    // Sparse triangular solve for row k over its precomputed pattern, in increasing
    // (topological) order: y_c is final when column c is reached. Column c holds rows < k in
    // Lp[c] .. end − 1, and row k's entry goes to end.
    const qEnd = rowPtr[k + 1];
    for (let q = rowPtr[k]; q < qEnd; q++) {
      const c = rowCols[q];
      const end = rowSlot[q];
      const yc = yVals[c];
      if (kind !== null && kind[c] === 1 && c + 1 !== k) {
        // A 2×2 pair (c, c+1) met in a later row: its two columns share one pattern (column c has
        // row c+1 first, an explicit 0), so both updates run in one pass over that pattern — a
        // supernode of width 2. The same operations in the same order as column c then column c+1
        // one at a time: bit-identical values, half the index loads and loop overhead.
        const c2 = c + 1;
        const end2 = rowSlot[q + 1]; // column c+1 is the next entry of the row's pattern
        const p1 = Lp[c];
        const y2 = yVals[c2] - Lx[p1] * yc; // L[c+1][c] = 0: column c's update of row c+1
        const shift = p1 + 1 - Lp[c2];
        for (let p = Lp[c2]; p < end2; p++) {
          const i = Li[p];
          yVals[i] = yVals[i] - Lx[p + shift] * yc - Lx[p] * y2;
        }
        yVals[c] = 0;
        yVals[c2] = 0;
        // [l_{k,c}, l_{k,c+1}] = B⁻¹ [y_c, y_{c+1}]
        const l1 = Dinv[c] * yc + Einv[c] * y2;
        const l2 = Einv[c] * yc + Dinv[c2] * y2;
        Lx[end] = l1;
        Lx[end2] = l2;
        dk -= yc * l1 + y2 * l2;
        q++;
        continue;
      }
      for (let p = Lp[c]; p < end; p++) yVals[Li[p]] -= Lx[p] * yc;
      yVals[c] = 0;
      const kc = kind === null ? 0 : kind[c];
      if (kc === 0) {
        const lkc = yc * Dinv[c];
        Lx[end] = lkc;
        dk -= yc * lkc;
      } else if (kc === 1) {
        if (c + 1 === k) {
          E[c] = yc; // off-diagonal of the pair (c, k): L[k][c] stays 0
          Lx[end] = 0;
        } else {
          Lx[end] = yc; // y_c kept until y_{c+1} is known
        }
      } else {
        // second column of the pair (c−1, c): [l_{k,c−1}, l_{k,c}] = B⁻¹ [y_{c−1}, y_c]
        // (y_{c−1} was kept at row k's slot of column c−1, the previous entry of the row)
        const s1 = rowSlot[q - 1];
        const y1 = Lx[s1];
        const l1 = Dinv[c - 1] * y1 + Einv[c - 1] * yc;
        const l2 = Einv[c - 1] * y1 + Dinv[c] * yc;
        Lx[s1] = l1;
        Lx[end] = l2;
        dk -= y1 * l1 + yc * l2;
      }
    }

    if (kind !== null && kind[k] !== 0) {
      if (kind[k] === 1) {
        D[k] = dk; // the pair is classified with its second row
        continue;
      }
      // 2×2 pivot block of the pair (k−1, k)
      let d1 = D[k - 1];
      let d2 = dk;
      const e = E[k - 1];
      let det = d1 * d2 - e * e;
      // |λ_min(B)| ≥ |det| / (|d1| + |d2| + |e|): the block counts as singular below the tolerance
      let singular = !(Math.abs(det) > pivotTolerance * (Math.abs(d1) + Math.abs(d2) + Math.abs(e)));
      if (singular && signs !== null && det - det === 0) {
        d1 += signs[k - 1] * regularization;
        d2 += signs[k] * regularization;
        det = d1 * d2 - e * e;
        regularized += 2;
        if (signs[k - 1] < 0) regularizedNegative++;
        if (signs[k] < 0) regularizedNegative++;
        singular = !(Math.abs(det) > pivotTolerance * (Math.abs(d1) + Math.abs(d2) + Math.abs(e)));
      }
      D[k - 1] = d1;
      D[k] = d2;
      if (det - det !== 0) {
        zero += 2;
      } else if (singular) {
        zero++;
        const t = d1 + d2;
        if (t > pivotTolerance) positive++;
        else if (t < -pivotTolerance) negative++;
        else zero++;
      } else if (det < 0) {
        positive++;
        negative++;
      } else if (d1 + d2 > 0) {
        positive += 2;
      } else {
        negative += 2;
      }
      if (singular || det - det !== 0) {
        Dinv[k - 1] = 0;
        Dinv[k] = 0;
        Einv[k - 1] = 0;
      } else {
        Dinv[k - 1] = d2 / det;
        Dinv[k] = d1 / det;
        Einv[k - 1] = -e / det;
      }
      continue;
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
  const { Li, Lx, Dinv, Einv } = fac;
  const kind = sym.kind;
  for (let j = 0; j < n; j++) {
    const xj = x[j];
    if (kind !== null && kind[j] === 1) {
      // a 2×2 pair: columns j and j+1 in one pass over their shared pattern (see ldlNumeric);
      // the same operations in the same order as one column after the other
      const j2 = j + 1;
      const p1 = Lp[j];
      let x2 = x[j2];
      if (xj !== 0) x2 -= Lx[p1] * xj; // L[j+1][j] = 0
      x[j2] = x2;
      const shift = p1 + 1 - Lp[j2];
      const pEnd = Lp[j2 + 1];
      if (xj !== 0 && x2 !== 0) {
        for (let p = Lp[j2]; p < pEnd; p++) {
          const i = Li[p];
          x[i] = x[i] - Lx[p + shift] * xj - Lx[p] * x2;
        }
      } else if (xj !== 0) {
        for (let p = Lp[j2]; p < pEnd; p++) x[Li[p]] -= Lx[p + shift] * xj;
      } else if (x2 !== 0) {
        for (let p = Lp[j2]; p < pEnd; p++) x[Li[p]] -= Lx[p] * x2;
      }
      j++;
      continue;
    }
    if (xj !== 0) for (let p = Lp[j]; p < Lp[j + 1]; p++) x[Li[p]] -= Lx[p] * xj;
  }
  for (let j = 0; j < n; j++) {
    if (kind !== null && kind[j] === 1) {
      const x1 = x[j];
      const x2 = x[j + 1];
      x[j] = Dinv[j] * x1 + Einv[j] * x2;
      x[j + 1] = Einv[j] * x1 + Dinv[j + 1] * x2;
      j++;
    } else {
      x[j] *= Dinv[j];
    }
  }
  for (let j = n - 1; j >= 0; j--) {
    if (kind !== null && kind[j] === 2) {
      // The pair (j−1, j) in one pass over its shared pattern: two independent sums, each in
      // the order of the column-at-a-time loop, so each waits only on its own latency (the
      // single sum of a column is bound by the latency of its subtractions).
      const j1 = j - 1;
      const p1 = Lp[j1]; // row j of column j−1: the pair's explicit 0 (ldlNumeric)
      const shift = p1 + 1 - Lp[j];
      let s1 = x[j1];
      let s2 = x[j];
      for (let p = Lp[j]; p < Lp[j + 1]; p++) {
        const xi = x[Li[p]];
        s2 -= Lx[p] * xi;
        s1 -= Lx[p + shift] * xi;
      }
      x[j] = s2;
      // Column j−1 subtracts L[j][j−1]·x_j first. That term is an exact 0·x_j, which changes no
      // nonzero sum; a zero sum (sign of zero) or a non-finite x_j takes the column's own order.
      if (s1 === 0 || s2 - s2 !== 0 || Lx[p1] !== 0) s1 = backwardColumn(Lp, Li, Lx, x, j1);
      x[j1] = s1;
      j--;
      continue;
    }
    x[j] = backwardColumn(Lp, Li, Lx, x, j);
  }
}

/** x_j − Σ_p L[Li[p]][j] · x[Li[p]] over column j of L, in storage order (the backward solve's row j). */
function backwardColumn(Lp: Int32Array, Li: Int32Array, Lx: Float64Array, x: Float64Array, j: number): number {
  let s = x[j];
  for (let p = Lp[j]; p < Lp[j + 1]; p++) s -= Lx[p] * x[Li[p]];
  return s;
}
