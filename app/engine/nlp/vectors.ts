/**
 * Small vector kernels of the interior-point iteration, kept as separate functions so that each
 * hot loop is optimised on its own (the main loop in ipm.ts is large). All arrays are caller-owned;
 * n is the loop length.
 */

/**
 * Loops over all variables or rows that carry a running sum or product (kktError, solverGap,
 * barrierValue, norm1, dot) run in blocks of LOOP_BLOCK entries through a kernel that takes and
 * returns the running values, instead of as one long loop. Such a loop, called a few dozen times
 * per solve, was compiled in some runs with its running values boxed, a heap number per element
 * (10–12 MB a solve at trapezoidal N = 1,600 in kktError or barrierValue, bench/allocation.bench.ts);
 * a kernel called for every block is an ordinary hot function. The values pass from block to block,
 * so the operations and their order are those of the single loop.
 */
export const LOOP_BLOCK = 1024;

/** out = x + a·d (n). */
export function axpyInto(n: number, out: Float64Array, x: Float64Array, a: number, d: Float64Array): void {
  for (let i = 0; i < n; i++) out[i] = x[i] + a * d[i];
}

/** y += a·x (n). */
export function addScaled(n: number, y: Float64Array, a: number, x: Float64Array): void {
  for (let i = 0; i < n; i++) y[i] += a * x[i];
}

/** Σ_i |x_i| (n), in blocks (LOOP_BLOCK). */
export function norm1(n: number, x: Float64Array): number {
  let s = 0;
  for (let i0 = 0; i0 < n; i0 += LOOP_BLOCK) s = absSumRange(i0, Math.min(n, i0 + LOOP_BLOCK), x, s);
  return s;
}

/** sum + Σ_{i0 ≤ i < i1} |x_i|, added in order: one block of norm1. */
function absSumRange(i0: number, i1: number, x: Float64Array, sum: number): number {
  for (let i = i0; i < i1; i++) sum += Math.abs(x[i]);
  return sum;
}

/** max_i |a·x_i| (n). */
export function normInfScaled(n: number, a: number, x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) { const v = Math.abs(a * x[i]); if (v > s) s = v; }
  return s;
}

/** Σ_i x_i y_i (n), in blocks (LOOP_BLOCK). */
export function dot(n: number, x: Float64Array, y: Float64Array): number {
  let s = 0;
  for (let i0 = 0; i0 < n; i0 += LOOP_BLOCK) s = dotRange(i0, Math.min(n, i0 + LOOP_BLOCK), x, y, s);
  return s;
}

/** sum + Σ_{i0 ≤ i < i1} x_i y_i, added in order: one block of dot (and of solverGap's λᵀc). */
export function dotRange(i0: number, i1: number, x: Float64Array, y: Float64Array, sum: number): number {
  for (let i = i0; i < i1; i++) sum += x[i] * y[i];
  return sum;
}

/** max_i |d_i| / (1 + |w_i|) (n): relative size of a step. */
export function relativeStep(n: number, d: Float64Array, w: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) { const v = Math.abs(d[i]) / (1 + Math.abs(w[i])); if (v > s) s = v; }
  return s;
}

/** true when every entry of x (n) is finite. */
export function allFinite(n: number, x: Float64Array): boolean {
  for (let i = 0; i < n; i++) if (!Number.isFinite(x[i])) return false;
  return true;
}

/** s_L = w − w_L, s_U = w_U − w where the bound exists, 1 elsewhere (N). */
export function boundSlacks(N: number, w: Float64Array, wL: Float64Array, wU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, sL: Float64Array, sU: Float64Array): void {
  for (let i = 0; i < N; i++) {
    sL[i] = hasL[i] ? w[i] - wL[i] : 1;
    sU[i] = hasU[i] ? wU[i] - w[i] : 1;
  }
}

/** out = Jᵀλ for J in triplets (nnz), out of length N. */
export function jacTransposeTimes(nnz: number, jR: Int32Array, jC: Int32Array, jv: Float64Array, lam: Float64Array, out: Float64Array): void {
  out.fill(0);
  for (let k = 0; k < nnz; k++) out[jC[k]] += jv[k] * lam[jR[k]];
}

/**
 * The triplets of J grouped by column for Jᵀλ as a gather (jacTransposeGather): colPtr (N + 1),
 * the triplet index of each entry and its row, stably ordered by column, so that each column's
 * terms keep the triplet order of jacTransposeTimes. O(nnz + N), once per solve.
 */
export interface ColumnOrder {
  colPtr: Int32Array;
  entry: Int32Array;
  row: Int32Array;
}
export function columnOrder(N: number, nnz: number, jR: Int32Array, jC: Int32Array): ColumnOrder {
  const colPtr = new Int32Array(N + 1);
  for (let k = 0; k < nnz; k++) colPtr[jC[k] + 1]++;
  for (let j = 0; j < N; j++) colPtr[j + 1] += colPtr[j];
  const next = colPtr.slice(0, N);
  const entry = new Int32Array(nnz), row = new Int32Array(nnz);
  for (let k = 0; k < nnz; k++) {
    const q = next[jC[k]]++;
    entry[q] = k;
    row[q] = jR[k];
  }
  return { colPtr, entry, row };
}

/**
 * out = Jᵀλ by columns: each out_j summed from 0 over column j's terms in triplet order, the same
 * sums in the same order as jacTransposeTimes (the same numbers to the bit), without its fill and
 * its scattered read–modify–write of out.
 */
export function jacTransposeGather(N: number, order: ColumnOrder, jv: Float64Array, lam: Float64Array, out: Float64Array): void {
  const { colPtr, entry, row } = order;
  for (let j = 0; j < N; j++) {
    let s = 0;
    for (let q = colPtr[j]; q < colPtr[j + 1]; q++) s += jv[entry[q]] * lam[row[q]];
    out[j] = s;
  }
}

/** gradL = ∇f + Jᵀλ − z_L + z_U (N). */
export function lagrangianGradient(N: number, grad: Float64Array, JtL: Float64Array, zL: Float64Array, zU: Float64Array, gradL: Float64Array): void {
  for (let i = 0; i < N; i++) gradL[i] = grad[i] + JtL[i] - zL[i] + zU[i];
}

/** Σ = Z_L S_L⁻¹ + Z_U S_U⁻¹ (N), W&B eq. (13). */
export function primalDualSigma(N: number, zL: Float64Array, zU: Float64Array, sL: Float64Array, sU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, diag: Float64Array): void {
  for (let i = 0; i < N; i++) diag[i] = (hasL[i] ? zL[i] / sL[i] : 0) + (hasU[i] ? zU[i] / sU[i] : 0);
}

/** rhs = −(∇φ_μ + Jᵀλ ; c) (N + m), W&B eq. (13). */
export function kktRightHandSide(N: number, m: number, gradPhi: Float64Array, JtL: Float64Array, c: Float64Array, rhs: Float64Array): void {
  for (let i = 0; i < N; i++) rhs[i] = -(gradPhi[i] + JtL[i]);
  for (let j = 0; j < m; j++) rhs[N + j] = -c[j];
}

/** Split sol (N + m) into d_w (N) and d_λ (m). */
export function splitSolution(N: number, m: number, sol: Float64Array, dw: Float64Array, dlam: Float64Array): void {
  for (let i = 0; i < N; i++) dw[i] = sol[i];
  for (let j = 0; j < m; j++) dlam[j] = sol[N + j];
}

/** max_i |x_i| (n), NaN if an entry is NaN (as a fold of Math.max). */
export function maxAbs(n: number, x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(x[i]);
    if (v > s) s = v;
    else if (v !== v) return NaN;
  }
  return s;
}

/**
 * The final steps' step length: the largest α ≤ alphaMax along dw that leaves each bound's slack at
 * least floorUlps·max(1, |bound|) (floorUlps = a few hundred ulps, see ipm.ts) (N).
 */
export function finalStepLength(
  N: number, alphaMax: number, dw: Float64Array, sL: Float64Array, sU: Float64Array,
  wL: Float64Array, wU: Float64Array, hasL: Uint8Array, hasU: Uint8Array, floorUlps: number,
): number {
  for (let i = 0; i < N; i++) {
    if (hasL[i] && dw[i] < 0) {
      const floor = floorUlps * Math.max(1, Math.abs(wL[i]));
      if (sL[i] + alphaMax * dw[i] < floor) alphaMax = Math.max(0, (floor - sL[i]) / dw[i]);
    }
    if (hasU[i] && dw[i] > 0) {
      const floor = floorUlps * Math.max(1, Math.abs(wU[i]));
      if (sU[i] - alphaMax * dw[i] < floor) alphaMax = Math.max(0, (sU[i] - floor) / dw[i]);
    }
  }
  return alphaMax;
}

/**
 * Bound relaxations r shrunk to keep·r, the bounds moved with them, and w kept at least 1 % of its
 * old slack inside each moved bound (N).
 */
export function shrinkRelaxation(
  N: number, keep: number, w: Float64Array, wL: Float64Array, wU: Float64Array,
  rL: Float64Array, rU: Float64Array, hasL: Uint8Array, hasU: Uint8Array,
): void {
  for (let i = 0; i < N; i++) {
    if (hasL[i] && rL[i] > 0) {
      const shift = rL[i] * keep, sOld = w[i] - wL[i];
      wL[i] += shift; rL[i] -= shift;
      if (w[i] - wL[i] < 1e-2 * sOld) w[i] = wL[i] + 1e-2 * sOld;
    }
    if (hasU[i] && rU[i] > 0) {
      const shift = rU[i] * keep, sOld = wU[i] - w[i];
      wU[i] -= shift; rU[i] -= shift;
      if (wU[i] - w[i] < 1e-2 * sOld) w[i] = wU[i] - 1e-2 * sOld;
    }
  }
}
