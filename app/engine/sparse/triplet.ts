/**
 * Triplet (coordinate) form of a symmetric matrix and its conversion to upper-stored CSC.
 *
 * A symmetric A (n × n) is given as triplets (rows[t], cols[t]), t = 0..nT−1, of ONE triangle
 * (lower or upper; the two may even be mixed, but an off-diagonal entry and its mirror must not
 * both appear). Repeated triplets are summed, as in assembling finite-element or Jacobian blocks.
 *
 * The conversion is symbolic (pattern only) and done once per sparsity pattern. It returns the
 * map slot[t] from each triplet to its CSC position, so a numeric matrix is assembled with
 *   Ax.fill(0);  for t: Ax[slot[t]] += values[t]
 * in O(nT) with no sorting per call (Davis, "Direct Methods for Sparse Linear Systems", SIAM 2006,
 * §2.4 cs_compress / §2.7 cs_dupl, here fused and with the triplet→slot map kept; section numbers recalled from memory).
 */
import type { CscPattern } from "./csc";

/**
 * Checks that (rows, cols) are a valid symmetric triplet pattern of order n.
 * Throws an Error naming `where`, the field and the first offending position.
 */
export function validateTriplets(n: number, rows: Int32Array, cols: Int32Array, where = "sparse/triplet"): void {
  if (!Number.isInteger(n) || n < 0) throw new Error(`${where}: n must be a non-negative integer, got ${n}`);
  if (rows.length !== cols.length) {
    throw new Error(`${where}: rows has ${rows.length} entries but cols has ${cols.length}`);
  }
  for (let t = 0; t < rows.length; t++) {
    const i = rows[t];
    const j = cols[t];
    if (i < 0 || i >= n) throw new Error(`${where}: rows[${t}] = ${i} is outside 0..${n - 1}`);
    if (j < 0 || j >= n) throw new Error(`${where}: cols[${t}] = ${j} is outside 0..${n - 1}`);
  }
}

export interface UpperCsc {
  /** Pattern of the upper triangle, rows sorted within each column, every diagonal entry present. */
  A: CscPattern;
  /** slot[t] = position in A.rowIdx of triplet t (Int32Array(nT)). */
  slot: Int32Array;
}

/**
 * Upper-stored CSC pattern of the symmetric matrix given by triplets, duplicates merged,
 * every diagonal entry a_kk included (structurally zero ones added, since the LDLᵀ needs a slot
 * for every pivot and the interior-point method adds δ·I to the diagonal).
 *
 * Triplet (i, j) is folded to (min(i,j), max(i,j)). Two bucket passes (by row, then by column)
 * give sorted rows per column, so duplicates are adjacent and are merged in one sweep.
 * Throws when an off-diagonal entry is given in both orientations (a mirror pair), because
 * summing the two would double the entry of the symmetric matrix.
 * Cost O(nT + n) time and memory.
 */
export function tripletsToUpperCsc(n: number, rows: Int32Array, cols: Int32Array, where = "sparse/triplet"): UpperCsc {
  validateTriplets(n, rows, cols, where);
  const nT = rows.length;
  const total = nT + n; // the n extra entries are the diagonal
  // folded (row, col) of entry e: e < nT is triplet e, e = nT + k is the diagonal (k, k)
  const rowCount = new Int32Array(n + 1);
  for (let t = 0; t < nT; t++) {
    const i = rows[t];
    const j = cols[t];
    rowCount[(i < j ? i : j) + 1]++;
  }
  for (let k = 0; k < n; k++) rowCount[k + 1]++;
  for (let k = 0; k < n; k++) rowCount[k + 1] += rowCount[k];
  const rowNext = rowCount.slice(0, n);
  const byRow = new Int32Array(total);
  for (let k = 0; k < n; k++) byRow[rowNext[k]++] = nT + k; // diagonal first in its row
  for (let t = 0; t < nT; t++) {
    const i = rows[t];
    const j = cols[t];
    byRow[rowNext[i < j ? i : j]++] = t;
  }

  const colCount = new Int32Array(n + 1);
  for (let t = 0; t < nT; t++) {
    const i = rows[t];
    const j = cols[t];
    colCount[(i < j ? j : i) + 1]++;
  }
  for (let k = 0; k < n; k++) colCount[k + 1]++;
  for (let k = 0; k < n; k++) colCount[k + 1] += colCount[k];
  const colNext = colCount.slice(0, n);
  const tmpRow = new Int32Array(total);
  const tmpSrc = new Int32Array(total);
  for (let r = 0; r < n; r++) {
    for (let q = rowCount[r]; q < rowCount[r + 1]; q++) {
      const e = byRow[q];
      const c = e >= nT ? e - nT : rows[e] < cols[e] ? cols[e] : rows[e];
      const pos = colNext[c]++;
      tmpRow[pos] = r;
      tmpSrc[pos] = e;
    }
  }

  // Merge duplicates (adjacent after sorting) and record each triplet's slot.
  const colPtr = new Int32Array(n + 1);
  const rowIdx = new Int32Array(total);
  const slot = new Int32Array(nT);
  const orientation = new Uint8Array(total); // bit 1: given as i < j, bit 2: given as i > j
  let nnz = 0;
  for (let c = 0; c < n; c++) {
    colPtr[c] = nnz;
    let prevRow = -1;
    for (let q = colCount[c]; q < colCount[c + 1]; q++) {
      const r = tmpRow[q];
      if (r !== prevRow) {
        rowIdx[nnz++] = r;
        prevRow = r;
      }
      const e = tmpSrc[q];
      if (e < nT) {
        const s = nnz - 1;
        slot[e] = s;
        if (r !== c) {
          const bit = rows[e] < cols[e] ? 1 : 2;
          orientation[s] |= bit;
          if (orientation[s] === 3) {
            throw new Error(
              `${where}: triplet ${e} (rows[${e}] = ${rows[e]}, cols[${e}] = ${cols[e]}) is the mirror of an entry ` +
                `already given in the other triangle; give each off-diagonal entry of the symmetric matrix once`,
            );
          }
        }
      }
    }
  }
  colPtr[n] = nnz;
  return { A: { n, colPtr, rowIdx: rowIdx.slice(0, nnz) }, slot };
}
