/**
 * Matching of the constrained nodes of a symmetric pattern (e.g. the constraint rows of a KKT
 * matrix) to distinct unconstrained neighbours (its primal variables): a maximum transversal of
 * the bipartite graph "constraint row c — variable j with J_cj ≠ 0".
 *
 * Use: if every constrained node c is eliminated after its partner μ(c), then for every leading
 * block of the ordered KKT matrix [[H, Jᵀ], [J, 0]] the eliminated constraint rows have distinct
 * eliminated partners, so the leading J block has (structurally) full row rank and, with H ≻ 0,
 * the leading principal submatrix is nonsingular: LDLᵀ without pivoting meets no zero pivot for
 * generic values (the saddle-point argument of Benzi, Golub and Liesen, "Numerical solution of
 * saddle point problems", Acta Numerica 14, 2005, §3.1 (section recalled from memory), applied to each leading block).
 *
 * Algorithm: depth-first augmenting paths with a cheap assignment first (Duff, "On algorithms for
 * obtaining a maximum transversal", ACM TOMS 7(3), 1981, MC21), iterative so that long paths do
 * not overflow the call stack. Worst case O(n·nnz), about O(nnz) on banded KKT matrices.
 *
 * Input: G the full symmetric pattern without diagonal (csc.symmetricAdjacency), constrained
 * Uint8Array(n) (1 = constrained). Output: partner Int32Array(n): partner[c] = μ(c) for a matched
 * constrained node, −1 for an unmatched or unconstrained one.
 */
import type { CscPattern } from "./csc";

export function matchConstrained(G: CscPattern, constrained: Uint8Array): Int32Array {
  const { n, colPtr, rowIdx } = G;
  const partner = new Int32Array(n).fill(-1); // constrained c → variable
  const owner = new Int32Array(n).fill(-1); // variable j → constrained c
  const cheap = new Int32Array(n); // next position to try in the cheap assignment of c
  const visited = new Int32Array(n).fill(-1); // variable j visited in the search for root c
  const stackNode = new Int32Array(n); // constrained nodes on the current path
  const stackPos = new Int32Array(n); // next neighbour position to explore for each of them
  for (let c = 0; c < n; c++) cheap[c] = colPtr[c];

  for (let root = 0; root < n; root++) {
    if (constrained[root] !== 1) continue;
    let top = 0;
    stackNode[0] = root;
    stackPos[0] = colPtr[root];
    let found = -1;
    while (top >= 0 && found < 0) {
      const c = stackNode[top];
      // cheap assignment: an unowned variable neighbour of c
      for (let p = cheap[c]; p < colPtr[c + 1]; p++) {
        const j = rowIdx[p];
        if (constrained[j] === 0 && owner[j] === -1) {
          cheap[c] = p + 1;
          found = j;
          break;
        }
      }
      if (found >= 0) break;
      cheap[c] = colPtr[c + 1];
      // otherwise go deeper through an owned, not yet visited variable
      let advanced = false;
      for (let p = stackPos[top]; p < colPtr[c + 1]; p++) {
        const j = rowIdx[p];
        if (constrained[j] !== 0 || visited[j] === root) continue;
        visited[j] = root;
        stackPos[top] = p + 1;
        stackNode[++top] = owner[j];
        stackPos[top] = colPtr[owner[j]];
        advanced = true;
        break;
      }
      if (!advanced) top--;
    }
    if (found < 0) continue; // root stays unmatched
    // augment along the path: stackNode[top] takes `found`, each earlier node takes the variable
    // through which the path went on
    for (let level = top; level >= 0; level--) {
      const c = stackNode[level];
      const previous = partner[c];
      partner[c] = found;
      owner[found] = c;
      found = previous;
    }
  }
  return partner;
}

/**
 * The adjacency G with each constrained node's neighbour list reordered by preference for its
 * partner, so that matchConstrained (which tries neighbours in list order) pairs a constraint row
 * c preferably with a variable j whose diagonal is small against the coupling:
 *   key(j) = |a_jj| / |a_cj|   ascending   (a variable with a zero diagonal first; ties: larger |a_cj|)
 * This is the variable that would give a zero 1×1 pivot and that a 2×2 pivot with c makes safe,
 * with the best-conditioned block (det = a_jj a_cc − a_cj²). Heuristic (common practice for
 * matching-based 2×2 pivots, no single source); values are those of one factorisation.
 * A: upper-stored symmetric matrix with values Ax (rows sorted, diagonal last in each column);
 * G: full adjacency of A without diagonal. Returns a new pattern; G is not modified.
 */
export function preferPartners(A: CscPattern, Ax: Float64Array, G: CscPattern, constrained: Uint8Array): CscPattern {
  const { n, colPtr: Ap, rowIdx: Ai } = A;
  const rowIdx = G.rowIdx.slice();
  const entry = (i: number, j: number): number => {
    // value of a_ij, i < j, by binary search in column j of A
    let lo = Ap[j];
    let hi = Ap[j + 1] - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      const r = Ai[mid];
      if (r === i) return Ax[mid];
      if (r < i) lo = mid + 1;
      else hi = mid - 1;
    }
    return 0;
  };
  // Per row: keys and couplings of its neighbours, then a stable insertion sort (rows are short;
  // the same order as a stable sort by (key ascending, coupling descending)).
  let maxLen = 0;
  for (let c = 0; c < n; c++) maxLen = Math.max(maxLen, G.colPtr[c + 1] - G.colPtr[c]);
  const keys = new Float64Array(maxLen);
  const coupling = new Float64Array(maxLen);
  const idx = new Int32Array(maxLen);
  for (let c = 0; c < n; c++) {
    if (constrained[c] !== 1) continue;
    const start = G.colPtr[c];
    const end = G.colPtr[c + 1];
    const len = end - start;
    for (let q = 0; q < len; q++) {
      const j = rowIdx[start + q];
      const acj = Math.abs(j < c ? entry(j, c) : entry(c, j));
      const ajj = Math.abs(Ax[Ap[j + 1] - 1]);
      const key = ajj / acj;
      let at = q;
      const kq = key >= 0 ? key : Infinity; // a zero coupling or a non-finite value: last choice
      const cq = acj === acj ? acj : 0;
      // insert after every element that does not compare greater (stable)
      while (at > 0 && outranks(kq, cq, keys[at - 1], coupling[at - 1])) {
        keys[at] = keys[at - 1];
        coupling[at] = coupling[at - 1];
        idx[at] = idx[at - 1];
        at--;
      }
      keys[at] = kq;
      coupling[at] = cq;
      idx[at] = j;
    }
    for (let q = 0; q < len; q++) rowIdx[start + q] = idx[q];
  }
  return { n, colPtr: G.colPtr, rowIdx };
}

/** True when (key a, coupling a) sorts strictly before (key b, coupling b). */
function outranks(ka: number, ca: number, kb: number, cb: number): boolean {
  if (ka !== kb) return ka < kb;
  return ca > cb;
}
