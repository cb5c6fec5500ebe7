/**
 * Approximate minimum degree (AMD) ordering of a symmetric sparsity pattern.
 *
 * Amestoy, Davis and Duff, "An approximate minimum degree ordering algorithm",
 * SIAM J. Matrix Anal. Appl. 17(4):886–905, 1996 (the paper's Algorithm 2 with the approximate
 * external degree of eq. (4)); the single-array quotient-graph storage with garbage collection is
 * described there in §4 and in Davis, "Direct Methods for Sparse Linear Systems", SIAM 2006, §7.1
 * (section and equation numbers recalled from memory).
 *
 * Elimination is simulated on the QUOTIENT GRAPH: each uneliminated variable i has a list holding
 * first the elements adjacent to it (E_i, elen[i] entries) and then the variables adjacent to it
 * (A_i); each element e (an eliminated pivot) holds its variable list L_e. Eliminating pivot p
 * builds the new element  L_p = (A_p ∪ ⋃_{e∈E_p} L_e) \ {p}  and absorbs every e ∈ E_p into p.
 * Features of the paper used here:
 *   - supervariables: indistinguishable variables (same E_i and A_i) merged, found by hashing;
 *   - mass elimination: a variable with no neighbours outside L_p is eliminated with p;
 *   - element absorption, always with aggressive absorption of any e with L_e ⊆ L_p (§ 3.2; it is
 *     also what guarantees that every element ends absorbed or a root of the assembly tree);
 *   - approximate external degree, eq. (4):
 *       d̄_i = min( n − k,  d̄_i^prev + |L_p \ i|,  |A_i \ i| + |L_p \ i| + Σ_{e∈E_i \ p} |L_e \ L_p| ),
 *     with |L_e \ L_p| computed for all e at once in one scan (the paper's Algorithm 3);
 *   - dense rows: a variable of initial degree > max(16, α√n) (α = 10) is removed before ordering
 *     and placed last (the default of the AMD package, Amestoy, Davis and Duff, ACM TOMS 30(3),
 *     2004, "Algorithm 837: AMD");
 *   - final assembly-tree postorder, which keeps each subtree contiguous.
 * Arcwatch addition for KKT matrices (options `constrained`, `partner`): a constrained node waits
 * outside the degree lists until its partner is eliminated, and is ordered after the
 * unconstrained nodes of its elimination group (see AmdOptions).
 *
 * Input: the pattern of the FULL symmetric matrix (both triangles, from csc.symmetricAdjacency;
 * no duplicate entries); diagonal entries are ignored. Output: perm, Int32Array(n), perm[k] = index of the k-th pivot
 * (so P A Pᵀ has row k equal to row perm[k] of A). Cost: about O(nnz(A)) memory and, for the banded
 * and mesh-like matrices of transcriptions, near-linear time.
 */
import type { CscPattern } from "./csc";

export interface AmdOptions {
  /** α in the dense-row threshold max(16, α√n); a negative value disables dense-row removal. Default 10. */
  dense?: number;
  /**
   * Constrained nodes (Uint8Array(n), 1 = constrained), e.g. the constraint rows of a KKT matrix
   * whose diagonal is (near) zero. Within an elimination group they are ordered after the
   * unconstrained nodes.
   */
  constrained?: Uint8Array;
  /**
   * Precedence partners (Int32Array(n), from matching.ts): a constrained node c with partner[c] ≥ 0
   * is "deferred": kept out of the degree lists, out of supervariables and out of mass elimination
   * until partner[c] has been eliminated; −1 = no precedence. This is a constrained minimum degree
   * in the spirit of Bridson ("An ordering method for the direct solution of saddle-point
   * matrices", 2007): a constraint row is eliminated only after a distinct variable of its own.
   * If only deferred nodes are left (possible only when a partner is itself deferred, which
   * matching.ts never produces), they are released and ordered as usual.
   */
  partner?: Int32Array;
}

export interface AmdInfo {
  /** Rows removed as dense and ordered last. */
  denseRows: number;
  /** Garbage collections of the quotient-graph array. */
  compressions: number;
  /**
   * Times the deferred constrained nodes had to be released because nothing else was left.
   * Required, like the others, so that a caller's object has all three fields from the start:
   * adding one here would be a map transition, whose feedback V8 drops once the transitioned map
   * is collected between two orderings, and the optimised ordering would then deoptimise on
   * every call (measured: 45–100 ms instead of 6–7 ms at Hermite–Simpson N = 3,200).
   */
  releases: number;
}

/** Encodes "absorbed into / child of j" in a pointer slot; flip(flip(j)) = j and flip(−1) = −1. */
const flip = (j: number): number => -j - 2;

/** w values stay below this bound; the marker is reset before it would exceed it. */
const MARK_LIMIT = 0x3fffffff;

export function amdOrder(G: CscPattern, options: AmdOptions = {}, info?: AmdInfo): Int32Array {
  const n = G.n;
  const perm = new Int32Array(n);
  if (n === 0) return perm;
  const alpha = options.dense ?? 10;
  const constrained = options.constrained ?? null;
  if (constrained !== null && constrained.length !== n) {
    throw new Error(`sparse/amd: options.constrained has length ${constrained.length}, expected ${n}`);
  }
  const partner = options.partner ?? null;
  if (partner !== null && (constrained === null || partner.length !== n)) {
    throw new Error(`sparse/amd: options.partner needs options.constrained and length ${n}`);
  }
  // deferred[i] = 1 while constrained node i waits, outside the degree lists, for partner[i]
  const deferred = partner === null ? null : new Uint8Array(n);
  let releases = 0;
  // a row adjacent to all others (degree n − 1) counts as dense too, unless removal is disabled
  const denseThreshold = alpha < 0 ? n : Math.min(n - 2, Math.max(16, Math.floor(alpha * Math.sqrt(n))));

  // --- quotient graph storage: iw holds every list, with elbow room for new elements ---------
  const Gp = G.colPtr;
  const Gi = G.rowIdx;
  let nnz = 0;
  for (let j = 0; j < n; j++) for (let p = Gp[j]; p < Gp[j + 1]; p++) if (Gi[p] !== j) nnz++;
  const iwlen = nnz + Math.floor(nnz / 5) + 2 * n + 1;
  const iw = new Int32Array(iwlen);
  // Node arrays have one extra slot, index n: the pseudo-element that absorbs dense rows.
  const pe = new Int32Array(n + 1); // start of the list of i; flip(parent) once absorbed
  const len = new Int32Array(n + 1); // length of the list of i
  const elen = new Int32Array(n + 1); // |E_i| for a variable; −2 element; −1 dead variable
  const nv = new Int32Array(n + 1); // supervariable size (negated while in L_p); 0 if absorbed
  const degree = new Int32Array(n + 1); // approximate external degree d̄_i; |L_e| for element e
  const w = new Int32Array(n + 1); // |L_e \ L_p| + mark during a step; 0 for a dead element
  const head = new Int32Array(n + 1); // degree lists: head[d]
  const next = new Int32Array(n + 1); // degree list / hash bucket links
  const last = new Int32Array(n + 1); // degree list back links / hash key
  const hhead = new Int32Array(n + 1); // hash buckets

  let pfree = 0;
  for (let j = 0; j < n; j++) {
    pe[j] = pfree;
    for (let p = Gp[j]; p < Gp[j + 1]; p++) {
      const i = Gi[p];
      if (i !== j) iw[pfree++] = i;
    }
    len[j] = pfree - pe[j];
  }
  len[n] = 0;
  for (let i = 0; i <= n; i++) {
    head[i] = -1;
    last[i] = -1;
    next[i] = -1;
    hhead[i] = -1;
    nv[i] = 1;
    w[i] = 1;
    elen[i] = 0;
    degree[i] = len[i];
  }
  let mark = clearMarks(0, 0, w, n);
  elen[n] = -2; // the dense pseudo-element is a dead element and a root
  pe[n] = -1;
  w[n] = 0;

  if (deferred !== null && partner !== null) {
    for (let i = 0; i < n; i++) {
      const q = partner[i];
      // no precedence towards or from a dense or isolated row
      if (q >= 0 && len[i] > 0 && len[i] <= denseThreshold && len[q] <= denseThreshold) deferred[i] = 1;
    }
  }

  let nel = 0; // variables eliminated so far (weighted)
  let denseRows = 0;
  let compressions = 0;
  for (let i = 0; i < n; i++) {
    const d = degree[i];
    if (d === 0) {
      // isolated variable: an element with an empty list, a root of the assembly tree
      elen[i] = -2;
      nel++;
      pe[i] = -1;
      w[i] = 0;
    } else if (d > denseThreshold) {
      nv[i] = 0;
      elen[i] = -1;
      nel++;
      pe[i] = flip(n);
      nv[n]++;
      denseRows++;
    } else if (deferred !== null && deferred[i] === 1) {
      // waits for its partner, outside the degree lists
    } else {
      if (head[d] !== -1) last[head[d]] = i;
      next[i] = head[d];
      head[d] = i;
    }
  }

  let mindeg = 0;
  let lemax = 0;
  while (nel < n) {
    // --- pivot p: a variable of minimum approximate degree ---------------------------------
    let p = -1;
    for (; mindeg < n; mindeg++) {
      p = head[mindeg];
      if (p !== -1) break;
    }
    if (p === -1 && deferred !== null) {
      // only deferred nodes are left: release them
      releases++;
      mindeg = n;
      for (let i = 0; i < n; i++) {
        if (deferred[i] === 0) continue;
        deferred[i] = 0;
        if (nv[i] <= 0 || elen[i] < 0) continue;
        const d = degree[i];
        if (head[d] !== -1) last[head[d]] = i;
        next[i] = head[d];
        last[i] = -1;
        head[d] = i;
        if (d < mindeg) mindeg = d;
      }
      for (; mindeg < n; mindeg++) {
        p = head[mindeg];
        if (p !== -1) break;
      }
    }
    if (p === -1) throw new Error(`sparse/amd: internal error, no pivot left with ${n - nel} nodes to order`);
    if (next[p] !== -1) last[next[p]] = -1;
    head[mindeg] = next[p];
    const elenp = elen[p];
    let nvp = nv[p];
    nel += nvp;

    // --- compress iw when the new element may not fit at its end ----------------------------
    if (elenp > 0 && pfree + mindeg >= iwlen) {
      for (let j = 0; j < n; j++) {
        const q = pe[j];
        if (q >= 0) {
          // mark the list start with flip(j), keeping its first entry in pe[j]
          pe[j] = iw[q];
          iw[q] = flip(j);
        }
      }
      let dst = 0;
      for (let src = 0; src < pfree; ) {
        const j = flip(iw[src++]);
        if (j >= 0) {
          iw[dst] = pe[j];
          pe[j] = dst++;
          for (let t = 0; t < len[j] - 1; t++) iw[dst++] = iw[src++];
        }
      }
      pfree = dst;
      compressions++;
    }

    // --- new element L_p = (A_p ∪ ⋃ L_e) \ p, absorbing e ∈ E_p -----------------------------
    let dp = 0; // |L_p| weighted
    nv[p] = -nvp; // p is in L_p (so it is skipped)
    let pp = pe[p];
    const pk1 = elenp === 0 ? pp : pfree; // in place when p has no elements
    let pk2 = pk1;
    for (let k1 = 1; k1 <= elenp + 1; k1++) {
      let e: number;
      let pj: number;
      let ln: number;
      if (k1 > elenp) {
        e = p; // finally the variables A_p
        pj = pp;
        ln = len[p] - elenp;
      } else {
        e = iw[pp++];
        pj = pe[e];
        ln = len[e];
      }
      for (let k2 = 1; k2 <= ln; k2++) {
        const i = iw[pj++];
        const nvi = nv[i];
        if (nvi <= 0) continue; // absorbed, or already in L_p
        dp += nvi;
        nv[i] = -nvi;
        iw[pk2++] = i;
        // remove i from its degree list (a deferred node is in none)
        if (deferred === null || deferred[i] === 0) {
          if (next[i] !== -1) last[next[i]] = last[i];
          if (last[i] !== -1) next[last[i]] = next[i];
          else head[degree[i]] = next[i];
        }
      }
      if (e !== p) {
        pe[e] = flip(p); // e absorbed into p
        w[e] = 0;
      }
    }
    if (elenp !== 0) pfree = pk2;
    degree[p] = dp;
    pe[p] = pk1;
    len[p] = pk2 - pk1;
    elen[p] = -2;

    // --- scan 1: w[e] − mark = |L_e \ L_p| for every element e adjacent to L_p --------------
    mark = clearMarks(mark, lemax, w, n);
    for (let pk = pk1; pk < pk2; pk++) {
      const i = iw[pk];
      const eln = elen[i];
      if (eln <= 0) continue;
      const nvi = -nv[i];
      const wnvi = mark - nvi;
      for (let q = pe[i]; q < pe[i] + eln; q++) {
        const e = iw[q];
        if (w[e] >= mark) w[e] -= nvi;
        else if (w[e] !== 0) w[e] = degree[e] + wnvi; // first visit: |L_e| − |i|
      }
    }

    // --- scan 2: approximate degrees, pruning, mass elimination, hash keys -----------------
    for (let pk = pk1; pk < pk2; pk++) {
      const i = iw[pk];
      const p1 = pe[i];
      const p2 = p1 + elen[i] - 1;
      let pn = p1;
      let h = 0;
      let d = 0;
      for (let q = p1; q <= p2; q++) {
        const e = iw[q];
        if (w[e] !== 0) {
          const dext = w[e] - mark; // |L_e \ L_p|
          if (dext > 0) {
            d += dext;
            iw[pn++] = e;
            h += e;
          } else {
            pe[e] = flip(p); // aggressive absorption: L_e ⊆ L_p, absorb e into p
            w[e] = 0;
          }
        }
      }
      elen[i] = pn - p1 + 1; // + the new element p
      const p3 = pn;
      const p4 = p1 + len[i];
      for (let q = p2 + 1; q < p4; q++) {
        const j = iw[q];
        const nvj = nv[j];
        if (nvj <= 0) continue; // absorbed, or in L_p (then covered by element p)
        d += nvj;
        iw[pn++] = j;
        h += j;
      }
      if (d === 0 && (deferred === null || deferred[i] === 0)) {
        // mass elimination: i is adjacent only to p
        pe[i] = flip(p);
        const nvi = -nv[i];
        dp -= nvi;
        nvp += nvi;
        nel += nvi;
        nv[i] = 0;
        elen[i] = -1;
      } else {
        degree[i] = Math.min(degree[i], d);
        // put p first in E_i: the first variable moves to the end, the first element to p3
        iw[pn] = iw[p3];
        iw[p3] = iw[p1];
        iw[p1] = p;
        len[i] = pn - p1 + 1;
        h %= n;
        next[i] = hhead[h];
        hhead[h] = i;
        last[i] = h; // hash key kept in last[i]
      }
    }
    degree[p] = dp;
    if (dp > lemax) lemax = dp;
    mark = clearMarks(mark + lemax, lemax, w, n);

    // --- supervariable detection: compare the variables of each hash bucket -----------------
    for (let pk = pk1; pk < pk2; pk++) {
      let i = iw[pk];
      if (nv[i] >= 0) continue; // absorbed
      const h = last[i];
      i = hhead[h];
      hhead[h] = -1;
      for (; i !== -1 && next[i] !== -1; i = next[i], mark++) {
        const ln = len[i];
        const eln = elen[i];
        for (let q = pe[i] + 1; q <= pe[i] + ln - 1; q++) w[iw[q]] = mark;
        let jlast = i;
        for (let j = next[i]; j !== -1; ) {
          let same = len[j] === ln && elen[j] === eln && (deferred === null || (deferred[i] === 0 && deferred[j] === 0));
          for (let q = pe[j] + 1; same && q <= pe[j] + ln - 1; q++) if (w[iw[q]] !== mark) same = false;
          if (same) {
            pe[j] = flip(i); // j merged into supervariable i
            nv[i] += nv[j];
            nv[j] = 0;
            elen[j] = -1;
            j = next[j];
            next[jlast] = j;
          } else {
            jlast = j;
            j = next[j];
          }
        }
      }
    }

    // --- finalise L_p: external degrees d̄_i = min(d̄_i + |L_p \ i|, n − nel − |i|) -----------
    let q = pk1;
    for (let pk = pk1; pk < pk2; pk++) {
      const i = iw[pk];
      const nvi = -nv[i];
      if (nvi <= 0) continue;
      nv[i] = nvi;
      let d = degree[i] + dp - nvi;
      const bound = n - nel - nvi;
      if (d > bound) d = bound;
      degree[i] = d;
      iw[q++] = i;
      if (deferred !== null && deferred[i] === 1 && partner !== null) {
        // eligible once the partner is eliminated: follow absorptions up to a live node or element
        let r = partner[i];
        while (nv[r] === 0) r = flip(pe[r]);
        if (elen[r] !== -2) continue; // still waiting: stays out of the degree lists
        deferred[i] = 0;
      }
      if (head[d] !== -1) last[head[d]] = i;
      next[i] = head[d];
      last[i] = -1;
      head[d] = i;
      if (d < mindeg) mindeg = d;
    }
    nv[p] = nvp;
    len[p] = q - pk1;
    if (len[p] === 0) {
      pe[p] = -1; // root of the assembly tree
      w[p] = 0;
    }
    if (elenp !== 0) pfree = q;
  }

  // --- postorder of the assembly tree (its own function: a one-shot tail inside the function
  // that the main loop's on-stack replacement compiles would run without type feedback) ---------
  postorderGroups(n, pe, nv, head, next, last, constrained, perm);
  if (info) {
    info.denseRows = denseRows;
    info.compressions = compressions;
    info.releases = releases;
  }
  return perm;
}

/**
 * Postorder of the assembly tree, written into perm. On entry pe[i] holds flip(parent) (or −1 for a
 * root), nv[i] > 0 marks a principal variable or element; head, next and last are free workspaces
 * of length n + 1.
 */
function postorderGroups(
  n: number,
  pe: Int32Array,
  nv: Int32Array,
  head: Int32Array,
  next: Int32Array,
  last: Int32Array,
  constrained: Uint8Array | null,
  perm: Int32Array,
): void {
  // Parent links: flip back, so pe[i] is the parent (−1 for a root; the pseudo-element n is a root).
  for (let i = 0; i < n; i++) pe[i] = flip(pe[i]);
  // Elimination groups: an absorbed variable (nv = 0) is eliminated together with the element it
  // ends in (supervariable members, mass-eliminated and dense rows); follow the links up to that
  // element, compressing paths. Within a group any order gives the same fill.
  const group = new Int32Array(n + 1);
  for (let j = 0; j <= n; j++) group[j] = j === n || nv[j] > 0 ? j : -1;
  for (let j = 0; j < n; j++) {
    if (group[j] !== -1) continue;
    let r = j;
    while (group[r] === -1) r = pe[r];
    const g = group[r];
    for (let s = j; group[s] === -1; ) {
      const up = pe[s];
      group[s] = g;
      s = up;
    }
  }
  const memberHead = new Int32Array(n + 1).fill(-1);
  const memberNext = new Int32Array(n + 1);
  for (let j = n - 1; j >= 0; j--) {
    if (group[j] === j) continue;
    memberNext[j] = memberHead[group[j]];
    memberHead[group[j]] = j;
  }
  // children lists of the elements (head/next reused)
  for (let j = 0; j <= n; j++) head[j] = -1;
  for (let e = n - 1; e >= 0; e--) {
    if (group[e] !== e || pe[e] === -1) continue;
    next[e] = head[pe[e]];
    head[pe[e]] = e;
  }
  // depth-first postorder from every root, the pseudo-element n last; `last` is the stack.
  // A finished element emits its group: unconstrained nodes first, then constrained ones.
  let k = 0;
  for (let r = 0; r <= n; r++) {
    if (group[r] !== r || pe[r] !== -1) continue;
    let top = 0;
    last[0] = r;
    while (top >= 0) {
      const node = last[top];
      const child = head[node];
      if (child === -1) {
        top--;
        k = emitGroup(node, 0, n, constrained, memberHead, memberNext, perm, k);
        if (constrained !== null) k = emitGroup(node, 1, n, constrained, memberHead, memberNext, perm, k);
      } else {
        head[node] = next[child];
        last[++top] = child;
      }
    }
  }
  if (k !== n) throw new Error(`sparse/amd: internal error, ordered ${k} of ${n} nodes`);
}

/** Emits an elimination group into perm from position k: unconstrained (0) or constrained (1) members. */
function emitGroup(
  e: number,
  wantConstrained: number,
  n: number,
  constrained: Uint8Array | null,
  memberHead: Int32Array,
  memberNext: Int32Array,
  perm: Int32Array,
  k: number,
): number {
  if (e < n && (constrained === null ? 0 : constrained[e]) === wantConstrained) perm[k++] = e;
  for (let j = memberHead[e]; j !== -1; j = memberNext[j]) {
    if ((constrained === null ? 0 : constrained[j]) === wantConstrained) perm[k++] = j;
  }
  return k;
}

/**
 * Returns a marker value larger than every live w[e]; resets w (keeping 0 = dead element) when the
 * next marker plus the largest possible decrement could overflow.
 */
function clearMarks(mark: number, lemax: number, w: Int32Array, n: number): number {
  if (mark < 2 || mark + lemax >= MARK_LIMIT) {
    for (let k = 0; k < n; k++) if (w[k] !== 0) w[k] = 1;
    return 2;
  }
  return mark;
}
