/**
 * Test helpers for app/engine/sparse: a seeded generator, symmetric test matrices as lower
 * triplets together with their dense ml-matrix copies (the independent reference), and a dense
 * structural elimination used to check symbolic counts.
 */
import { EigenvalueDecomposition, Matrix } from "ml-matrix";

/** mulberry32 pseudo-random generator in [0, 1) (common practice, no source). */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export interface SymTriplets {
  n: number;
  rows: Int32Array;
  cols: Int32Array;
  values: Float64Array;
  dense: Matrix;
}

/** Builds triplets from (i, j, v) entries of one triangle (duplicates allowed) and the dense matrix. */
export function fromEntries(n: number, entries: Array<[number, number, number]>): SymTriplets {
  const dense = Matrix.zeros(n, n);
  for (const [i, j, v] of entries) {
    dense.set(i, j, dense.get(i, j) + v);
    if (i !== j) dense.set(j, i, dense.get(j, i) + v);
  }
  return {
    n,
    rows: Int32Array.from(entries.map((e) => e[0])),
    cols: Int32Array.from(entries.map((e) => e[1])),
    values: Float64Array.from(entries.map((e) => e[2])),
    dense,
  };
}

/**
 * Random sparse symmetric indefinite matrix, strictly diagonally dominant with diagonal signs
 * chosen at random, so that elimination without pivoting in ANY order stays stable (every Schur
 * complement of a diagonally dominant matrix is diagonally dominant: Golub and Van Loan, "Matrix
 * Computations", 4th ed., 2013, §3.4.3 / §4.1.1, section numbers recalled from memory). Entries are given in a random mix of lower and
 * upper triangle, some split into duplicate triplets.
 */
export function randomDominant(n: number, offDiagPerRow: number, seed: number): SymTriplets {
  const r = rng(seed);
  const entries: Array<[number, number, number]> = [];
  const rowSum = new Float64Array(n);
  const seen = new Set<number>();
  for (let t = 0; t < offDiagPerRow * n; t++) {
    const i = Math.floor(r() * n);
    const j = Math.floor(r() * n);
    if (i === j) continue;
    const lo = Math.min(i, j);
    const hi = Math.max(i, j);
    const key = lo * n + hi;
    if (seen.has(key)) continue;
    seen.add(key);
    const v = 2 * r() - 1;
    rowSum[lo] += Math.abs(v);
    rowSum[hi] += Math.abs(v);
    const [a, b] = r() < 0.5 ? [hi, lo] : [lo, hi];
    if (r() < 0.2) {
      entries.push([a, b, 0.3 * v], [a, b, 0.7 * v]); // duplicates are summed
    } else {
      entries.push([a, b, v]);
    }
  }
  for (let i = 0; i < n; i++) {
    const sign = r() < 0.5 ? -1 : 1;
    entries.push([i, i, sign * (rowSum[i] + 0.5 + r())]);
  }
  return fromEntries(n, entries);
}

/**
 * Random symmetric quasi-definite matrix [[H, Bᵀ], [B, −G]] with H, G sparse strictly diagonally
 * dominant with positive diagonals: inertia (n1, n2, 0) for every symmetric ordering
 * (Vanderbei, "Symmetric quasidefinite matrices", SIAM J. Optim. 5(1), 1995, Theorem 2.1, recalled from memory).
 */
export function randomQuasiDefinite(n1: number, n2: number, seed: number): SymTriplets {
  const r = rng(seed);
  const n = n1 + n2;
  const entries: Array<[number, number, number]> = [];
  const rowSum = new Float64Array(n);
  const add = (i: number, j: number, v: number) => {
    entries.push([Math.max(i, j), Math.min(i, j), v]);
    rowSum[i] += Math.abs(v);
    rowSum[j] += Math.abs(v);
  };
  for (let i = 1; i < n1; i++) if (r() < 0.5) add(i, Math.floor(r() * i), r() - 0.5);
  for (let i = 1; i < n2; i++) if (r() < 0.3) add(n1 + i, n1 + Math.floor(r() * i), r() - 0.5);
  for (let k = 0; k < n2; k++) {
    for (let c = 0; c < 3; c++) {
      const j = Math.floor(r() * n1);
      entries.push([n1 + k, j, 4 * r() - 2]); // B block: no dominance needed
    }
  }
  for (let i = 0; i < n1; i++) entries.push([i, i, rowSum[i] + 0.1 + r()]);
  for (let i = n1; i < n; i++) entries.push([i, i, -(rowSum[i] + 0.1 + r())]);
  return fromEntries(n, entries);
}

/** Counts of positive, negative and (|λ| ≤ zeroTol) zero eigenvalues of a symmetric dense matrix. */
export function eigenInertia(A: Matrix, zeroTol: number): { positive: number; negative: number; zero: number } {
  const ev = new EigenvalueDecomposition(A, { assumeSymmetric: true }).realEigenvalues;
  let positive = 0;
  let negative = 0;
  let zero = 0;
  for (const l of ev) {
    if (l > zeroTol) positive++;
    else if (l < -zeroTol) negative++;
    else zero++;
  }
  return { positive, negative, zero };
}

/**
 * Structural nonzero count of the strictly lower factor of P A Pᵀ by dense symbolic elimination
 * (eliminating k connects all its later neighbours: Parter's rule, Rose, "A graph-theoretic study of
 * the numerical solution of sparse positive definite systems", 1972). O(n³): small n only.
 */
export function denseSymbolicNnzL(n: number, rows: Int32Array, cols: Int32Array, perm: Int32Array): number {
  const pinv = new Int32Array(n);
  for (let k = 0; k < n; k++) pinv[perm[k]] = k;
  const S: Uint8Array[] = Array.from({ length: n }, () => new Uint8Array(n));
  for (let t = 0; t < rows.length; t++) {
    const i = pinv[rows[t]];
    const j = pinv[cols[t]];
    S[i][j] = 1;
    S[j][i] = 1;
  }
  let count = 0;
  for (let k = 0; k < n; k++) {
    const below: number[] = [];
    for (let i = k + 1; i < n; i++) if (S[i][k]) below.push(i);
    count += below.length;
    for (const a of below) for (const b of below) S[a][b] = 1;
  }
  return count;
}

/** m random pattern entries of an n×n symmetric matrix as lower triplets (row ≥ col), drawn from r. */
export function randomLowerPattern(n: number, m: number, r: () => number): { rows: Int32Array; cols: Int32Array } {
  const rows = new Int32Array(n > 0 ? m : 0);
  const cols = new Int32Array(n > 0 ? m : 0);
  for (let t = 0; t < rows.length; t++) {
    const a = Math.floor(r() * n);
    const b = Math.floor(r() * n);
    rows[t] = Math.max(a, b);
    cols[t] = Math.min(a, b);
  }
  return { rows, cols };
}

/** A uniformly random permutation of 0..n−1 (Fisher–Yates) drawn from r. */
export function randomPermutation(n: number, r: () => number): Int32Array {
  const perm = Int32Array.from({ length: n }, (_, i) => i);
  for (let i = n - 1; i > 0; i--) {
    const j = Math.floor(r() * (i + 1));
    [perm[i], perm[j]] = [perm[j], perm[i]];
  }
  return perm;
}

/**
 * Elimination tree and column counts of the factor of P A Pᵀ (identity P without perm) by dense
 * symbolic elimination: parent(j) = min{ i > j : l_ij ≠ 0 }, Lnz[j] = #{ i > j : l_ij ≠ 0 } (Liu,
 * "The role of elimination trees in sparse factorization", SIAM J. Matrix Anal. Appl. 11(1), 1990),
 * eliminating k joining its later neighbours (Parter's rule). O(n³): small n only.
 */
export function denseEliminationTree(n: number, rows: Int32Array, cols: Int32Array, perm?: Int32Array): { parent: Int32Array; Lnz: Int32Array } {
  const pinv = new Int32Array(n);
  for (let k = 0; k < n; k++) pinv[perm ? perm[k] : k] = k;
  const S = Array.from({ length: n }, () => new Uint8Array(n));
  for (let t = 0; t < rows.length; t++) S[pinv[rows[t]]][pinv[cols[t]]] = S[pinv[cols[t]]][pinv[rows[t]]] = 1;
  const parent = new Int32Array(n).fill(-1);
  const Lnz = new Int32Array(n);
  for (let k = 0; k < n; k++) {
    const below: number[] = [];
    for (let i = k + 1; i < n; i++) if (S[i][k]) below.push(i);
    Lnz[k] = below.length;
    if (below.length) parent[k] = below[0];
    for (const a of below) for (const b of below) S[a][b] = 1;
  }
  return { parent, Lnz };
}

export function maxAbs(v: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < v.length; i++) m = Math.max(m, Math.abs(v[i]));
  return m;
}

/**
 * Exact minimum degree on an explicit elimination graph (the method AMD approximates: Tinney and
 * Walker's scheme 2, as described by George and Liu, "The evolution of the minimum degree ordering
 * algorithm", SIAM Review 31(1), 1989). Ties: lowest index. Returns nnz(L) = Σ degrees at
 * elimination. O(n · fill): small n only.
 */
export function exactMinimumDegreeNnzL(n: number, rows: Int32Array, cols: Int32Array): number {
  const adj: Set<number>[] = Array.from({ length: n }, () => new Set<number>());
  for (let t = 0; t < rows.length; t++) {
    if (rows[t] === cols[t]) continue;
    adj[rows[t]].add(cols[t]);
    adj[cols[t]].add(rows[t]);
  }
  const alive = new Uint8Array(n).fill(1);
  let nnzL = 0;
  for (let step = 0; step < n; step++) {
    let best = -1;
    for (let i = 0; i < n; i++) if (alive[i] && (best < 0 || adj[i].size < adj[best].size)) best = i;
    const nb = [...adj[best]];
    nnzL += nb.length;
    for (const a of nb) {
      adj[a].delete(best);
      for (const b of nb) if (a !== b) adj[a].add(b);
    }
    alive[best] = 0;
    adj[best].clear();
  }
  return nnzL;
}

/**
 * KKT matrix [[W + Σ, Jᵀ], [J, 0]] of the trapezoidal transcription of the swing-trolley problem
 * of bench/ldl.bench.ts (N intervals, states θ, ω, c, control u), δw = δc = 0. W is zero in the ω
 * and c rows. Lower triplets with values, and the dense copy.
 */
export function trolleyKkt(N: number): SymTriplets & { nVar: number; nCon: number } {
  const h = 5 / N;
  const nVar = 4 * (N + 1);
  const nCon = 3 * N + 3;
  const e: Array<[number, number, number]> = [];
  const theta = (k: number) => 0.8 * Math.sin((2 * Math.PI * k) / N);
  const u = (k: number) => 1.5 * Math.cos((3 * Math.PI * k) / N);
  for (let k = 0; k <= N; k++) {
    const wgt = k === 0 || k === N ? h / 2 : h;
    const b = 4 * k;
    e.push([b, b, wgt * (0.3 * Math.sin(theta(k)) + 2)], [b + 1, b + 1, 0], [b + 2, b + 2, 0]);
    e.push([b + 3, b + 3, wgt * 2 + 0.1 / (u(k) + 2) + 0.1 / (2 - u(k))]);
  }
  for (let s = 0; s < 3; s++) e.push([nVar + s, s, 1]);
  for (let k = 0; k < N; k++) {
    for (const [side, node] of [[-1, k], [1, k + 1]] as const) {
      const b = 4 * node;
      const r0 = nVar + 3 + 3 * k;
      e.push([r0, b, side], [r0, b + 1, -h / 2]);
      e.push([r0 + 1, b, (h / 2) * Math.cos(theta(node))], [r0 + 1, b + 1, side + (h / 2) * 0.2], [r0 + 1, b + 3, -h / 2]);
      e.push([r0 + 2, b, -h * theta(node)], [r0 + 2, b + 2, side], [r0 + 2, b + 3, -h * u(node)]);
    }
  }
  for (let r = 0; r < nCon; r++) e.push([nVar + r, nVar + r, 0]);
  return { ...fromEntries(nVar + nCon, e), nVar, nCon };
}
