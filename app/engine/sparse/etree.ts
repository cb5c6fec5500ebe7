/**
 * Elimination tree and column counts of the factor L of A = L D Lᵀ (symbolic analysis).
 *
 * For an upper-stored symmetric A (column k holds rows i ≤ k), row k of L has its nonzeros at the
 * nodes reached from each i with a_ik ≠ 0 by walking up the elimination tree until a node already
 * visited for row k (Liu, "The role of elimination trees in sparse factorization", SIAM J. Matrix
 * Anal. Appl. 11(1), 1990; Davis, "Algorithm 849: A concise sparse Cholesky factorization package",
 * ACM TOMS 31(4), 2005, LDL_symbolic). Each visited node i gains one entry (row k) in column i of L,
 * and the first time a node has no parent its parent becomes k:
 *
 *   for k = 0..n−1:  flag[k] = k
 *     for each i < k with a_ik ≠ 0:
 *       while flag[i] ≠ k:  if parent[i] = −1 then parent[i] = k;  Lnz[i]++;  flag[i] = k;  i = parent[i]
 *
 * Cost O(nnz(L)) time, O(n) memory. Outputs (caller-owned, length n):
 *   parent[i]  parent of i in the elimination tree (−1 for a root)
 *   Lnz[i]     number of strictly-lower nonzeros in column i of L
 * flag: Int32Array(n) workspace. Returns nnz(L) = Σ Lnz[i] (strictly lower part).
 */
import type { CscPattern } from "./csc";

export function eliminationTree(A: CscPattern, parent: Int32Array, Lnz: Int32Array, flag: Int32Array): number {
  return walkTree(A, null, null, parent, Lnz, flag, Infinity);
}

/**
 * eliminationTree of the permuted matrix C = P A Pᵀ (pivot k is node perm[k]) without forming C:
 * row k of C's upper part is {pinv[i] < k : i a neighbour of perm[k] in G}, G the full adjacency
 * of A without diagonal. The same parent and Lnz as eliminationTree(C) (the tree and the counts
 * do not depend on the order in which a row's entries are walked). Returns nnz(L), or −1 as soon
 * as it exceeds `limit` (parent and Lnz are then incomplete): the cost of the walk is O(nnz(L)), so
 * a caller comparing orderings bounds it by what the best one so far would allow.
 */
export function permutedEliminationTree(
  G: CscPattern, perm: Int32Array, pinv: Int32Array, parent: Int32Array, Lnz: Int32Array, flag: Int32Array, limit = Infinity,
): number {
  return walkTree(G, perm, pinv, parent, Lnz, flag, limit);
}

/** Both of the above: without perm, A is upper-stored and an entry below the diagonal is an error; with it, such entries are the other half of the full G. */
function walkTree(A: CscPattern, perm: Int32Array | null, pinv: Int32Array | null, parent: Int32Array, Lnz: Int32Array, flag: Int32Array, limit: number): number {
  const { n, colPtr, rowIdx } = A;
  let nnzL = 0;
  for (let k = 0; k < n; k++) {
    parent[k] = -1;
    Lnz[k] = 0;
  }
  for (let k = 0; k < n; k++) {
    flag[k] = k;
    const node = perm === null ? k : perm[k];
    for (let p = colPtr[node]; p < colPtr[node + 1]; p++) {
      let i = pinv === null ? rowIdx[p] : pinv[rowIdx[p]];
      if (i > k) {
        if (perm === null) throw new Error(`sparse/etree: entry (${i}, ${k}) lies below the diagonal; the matrix must be upper-stored`);
        continue;
      }
      while (flag[i] !== k) {
        if (parent[i] === -1) parent[i] = k;
        Lnz[i]++;
        nnzL++;
        flag[i] = k;
        i = parent[i];
      }
    }
    if (nnzL > limit) return -1;
  }
  if (nnzL > 0x7fffffff) throw new Error(`sparse/etree: the factor would have ${nnzL} nonzeros, more than an Int32Array can index`);
  return nnzL;
}
