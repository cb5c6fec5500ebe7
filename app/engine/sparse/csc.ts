/**
 * Compressed sparse column (CSC) storage of a symmetric matrix, and the operations on it that
 * do not depend on the factorisation: symmetric permutation, symmetric matrix–vector product,
 * and the adjacency structure of the full matrix (for the ordering).
 *
 * A symmetric matrix A (n × n) is stored by ONE triangle. Column j holds the rows
 *   colPtr[j] ≤ p < colPtr[j+1],  rowIdx[p] = i,  value at p = a_ij
 * colPtr: Int32Array(n+1), rowIdx: Int32Array(nnz). "Upper" means every i ≤ j.
 * Numerical values live in a separate Float64Array (same length as rowIdx), so that one pattern
 * serves every numeric factorisation (Davis, "Direct Methods for Sparse Linear Systems",
 * SIAM 2006, §2.2; section numbers in this file recalled from memory).
 */
export interface CscPattern {
  n: number;
  colPtr: Int32Array;
  rowIdx: Int32Array;
}

/** Number of stored entries. */
export function cscNnz(A: CscPattern): number {
  return A.colPtr[A.n];
}

/**
 * y = A x for a symmetric A stored by one triangle (upper or lower, diagonal included once):
 *   y_i += a_ij x_j  and, for i ≠ j,  y_j += a_ij x_i.
 * x, y: Float64Array(n), caller-owned; y is overwritten. No allocation.
 */
export function symmetricMatVec(A: CscPattern, values: Float64Array, x: Float64Array, y: Float64Array): void {
  const { n, colPtr, rowIdx } = A;
  y.fill(0, 0, n);
  for (let j = 0; j < n; j++) {
    const xj = x[j];
    let yj = 0;
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const i = rowIdx[p];
      const a = values[p];
      y[i] += a * xj;
      if (i !== j) yj += a * x[i];
    }
    y[j] += yj;
  }
}

/**
 * r = b − A x and returns ‖r‖∞ (A symmetric, one triangle stored). Used by iterative refinement.
 * b, x, r: Float64Array(n), caller-owned.
 */
export function symmetricResidual(
  A: CscPattern,
  values: Float64Array,
  x: Float64Array,
  b: Float64Array,
  r: Float64Array,
): number {
  symmetricMatVec(A, values, x, r);
  return subtractFromRhs(A.n, b, r);
}

/** r ← b − r (r holding A x) and returns ‖r‖∞, NaN if an entry is not a number. */
function subtractFromRhs(n: number, b: Float64Array, r: Float64Array): number {
  let norm = 0;
  let finite = true;
  for (let i = 0; i < n; i++) {
    const ri = b[i] - r[i];
    r[i] = ri;
    const a = Math.abs(ri);
    if (a > norm) norm = a;
    else if (!(a === a)) finite = false;
  }
  return finite ? norm : NaN;
}

/**
 * The upper triangle of an upper-stored symmetric A by rows: for each row i, the stored entries
 * (i, j) with j > i, in increasing j, as their positions in A's storage (pos) and their columns
 * (col). With A's own column i (the entries (k, i), k < i, then the diagonal) this gives every
 * row of the full matrix, for symmetricResidualByRows. O(nnz) once per pattern.
 */
export interface UpperRows {
  rowPtr: Int32Array;
  pos: Int32Array;
  col: Int32Array;
}
export function upperRows(A: CscPattern): UpperRows {
  const { n, colPtr, rowIdx } = A;
  const rowPtr = new Int32Array(n + 1);
  for (let j = 0; j < n; j++) for (let p = colPtr[j]; p < colPtr[j + 1]; p++) if (rowIdx[p] !== j) rowPtr[rowIdx[p] + 1]++;
  for (let i = 0; i < n; i++) rowPtr[i + 1] += rowPtr[i];
  const next = rowPtr.slice(0, n);
  const pos = new Int32Array(rowPtr[n]), col = new Int32Array(rowPtr[n]);
  for (let j = 0; j < n; j++) {
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const i = rowIdx[p];
      if (i === j) continue;
      const q = next[i]++;
      pos[q] = p;
      col[q] = j;
    }
  }
  return { rowPtr, pos, col };
}

/**
 * r = b − A x with the norms of the backward error, for an upper-stored A whose columns each end
 * with their diagonal (the first solve after a factorisation needs ‖A‖∞ as well): returns ‖r‖∞
 * (NaN if an entry is not a number) and leaves ‖A‖∞ (the largest absolute row sum, NaN rows
 * ignored) in normOut[0] and ‖x‖∞ (NaN entries ignored) in normOut[1]. Each row is summed in
 * registers, in the order symmetricResidual's column-wise pass adds its terms (the diagonal's, then
 * the row's entries left of it as one partial sum, then those right of it by increasing column), so
 * r is that residual to the bit; nothing is scattered, where the column-wise pass reads, adds and
 * stores r_i (and, as it did for ‖A‖∞, a row sum) once per entry. Replaced a column-wise pass with
 * the row sums scattered beside r (2026-12-04): a first solve at Hermite–Simpson N = 1,600 1.60 →
 * 1.46 ms.
 */
export function symmetricResidualByRows(
  A: CscPattern, values: Float64Array, upper: UpperRows, x: Float64Array, b: Float64Array, r: Float64Array, normOut: Float64Array,
): number {
  const { n, colPtr, rowIdx } = A;
  const { rowPtr: uPtr, pos: uPos, col: uCol } = upper;
  let norm = 0;
  let finite = true;
  let normA = 0;
  let normX = 0;
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    const ax = Math.abs(xi);
    if (ax > normX) normX = ax;
    const c0 = colPtr[i];
    const c1 = colPtr[i + 1];
    const hasDiag = c1 > c0 && rowIdx[c1 - 1] === i;
    const lowEnd = hasDiag ? c1 - 1 : c1;
    let y = 0, ya = 0;
    for (let p = c0; p < lowEnd; p++) {
      const a = values[p];
      y += a * x[rowIdx[p]];
      ya += Math.abs(a);
    }
    let s = 0, sa = 0;
    if (hasDiag) {
      const a = values[c1 - 1];
      s += a * xi;
      sa += Math.abs(a);
    }
    s += y;
    sa += ya;
    for (let q = uPtr[i]; q < uPtr[i + 1]; q++) {
      const a = values[uPos[q]];
      s += a * x[uCol[q]];
      sa += Math.abs(a);
    }
    const ri = b[i] - s;
    r[i] = ri;
    const ar = Math.abs(ri);
    if (ar > norm) norm = ar;
    else if (!(ar === ar)) finite = false;
    if (sa > normA) normA = sa;
  }
  normOut[0] = normA;
  normOut[1] = normX;
  return finite ? norm : NaN;
}

/**
 * Symmetric permutation C = P A Pᵀ of an upper-stored symmetric A, result upper-stored:
 *   entry a_ij (i ≤ j) goes to (i', j') = (pinv[i], pinv[j]), stored at column max(i', j'),
 *   row min(i', j')   (Davis 2006, §2.8, cs_symperm; here with row indices sorted in each column).
 * pinv: Int32Array(n), pinv[old] = new position.
 * Returns the pattern of C and slotMap: Int32Array(nnz(A)), slotMap[p] = position in C of A's entry p,
 * so that numeric values are moved with  Cx[slotMap[p]] = Ax[p]  in O(nnz) per factorisation.
 */
export function symmetricPermute(A: CscPattern, pinv: Int32Array): { C: CscPattern; slotMap: Int32Array } {
  const { n, colPtr, rowIdx } = A;
  const nnz = colPtr[n];
  // Pass 1: bucket the entries by their new row, so that pass 2 (bucketing by new column,
  // visiting rows in increasing order) leaves each column's rows sorted.
  const rowCount = new Int32Array(n + 1);
  const newRow = new Int32Array(nnz);
  const newCol = new Int32Array(nnz);
  for (let j = 0; j < n; j++) {
    const jj = pinv[j];
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const ii = pinv[rowIdx[p]];
      const r = ii < jj ? ii : jj;
      const c = ii < jj ? jj : ii;
      newRow[p] = r;
      newCol[p] = c;
      rowCount[r + 1]++;
    }
  }
  for (let i = 0; i < n; i++) rowCount[i + 1] += rowCount[i];
  const byRow = new Int32Array(nnz); // entry indices p grouped by new row
  const rowNext = rowCount.slice(0, n);
  for (let p = 0; p < nnz; p++) byRow[rowNext[newRow[p]]++] = p;

  const cColPtr = new Int32Array(n + 1);
  for (let p = 0; p < nnz; p++) cColPtr[newCol[p] + 1]++;
  for (let j = 0; j < n; j++) cColPtr[j + 1] += cColPtr[j];
  const colNext = cColPtr.slice(0, n);
  const cRowIdx = new Int32Array(nnz);
  const slotMap = new Int32Array(nnz);
  for (let q = 0; q < nnz; q++) {
    const p = byRow[q];
    const slot = colNext[newCol[p]]++;
    cRowIdx[slot] = newRow[p];
    slotMap[p] = slot;
  }
  return { C: { n, colPtr: cColPtr, rowIdx: cRowIdx }, slotMap };
}

/**
 * Pattern of the full symmetric matrix A + Aᵀ without its diagonal, from an upper- (or lower-)
 * stored A without duplicate entries: the graph G(A) on which the ordering works.
 * Column j lists every i ≠ j with a_ij ≠ 0 (structurally). Size 2·(nnz − diagonal entries).
 */
export function symmetricAdjacency(A: CscPattern): CscPattern {
  const { n, colPtr, rowIdx } = A;
  const count = new Int32Array(n + 1);
  for (let j = 0; j < n; j++) {
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const i = rowIdx[p];
      if (i === j) continue;
      count[i + 1]++;
      count[j + 1]++;
    }
  }
  for (let i = 0; i < n; i++) count[i + 1] += count[i];
  const next = count.slice(0, n);
  const adj = new Int32Array(count[n]);
  for (let j = 0; j < n; j++) {
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const i = rowIdx[p];
      if (i === j) continue;
      adj[next[i]++] = j;
      adj[next[j]++] = i;
    }
  }
  return { n, colPtr: count, rowIdx: adj };
}
