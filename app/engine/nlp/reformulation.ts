/**
 * From the user's NLP (types.ts) to the internal form of internal.ts:
 *  - fixed variables (xL = xU) become parameters and leave the iteration;
 *  - one slack s_k per inequality row: c_j = d_j g_j(x) − s_k, d_j gL_j ≤ s_k ≤ d_j gU_j;
 *    equality rows: c_j = d_j (g_j(x) − gL_j);
 *  - objective d_f f(x), with d_f, d_j from the gradient-based scaling (scaling.ts, W&B §3.8);
 *  - bounds relaxed by ε_relax max(1, |bound|) (common practice, no source: keeps the interior
 *    of an active bound non-empty after rounding).
 * Every callback result is checked for NaN/±Infinity: a ModelError names function and index.
 *
 * Sizes: n user variables, nF free ones, m rows of which mI inequalities, N = nF + mI.
 */
import type { NlpProblem } from "./types";
import { ModelError, type InternalProblem } from "./internal";
import { gradientScaling } from "./scaling";

export class NlpReformulation implements InternalProblem {
  readonly N: number;
  readonly m: number;
  readonly nX: number;
  readonly wL: Float64Array;
  readonly wU: Float64Array;
  readonly jRows: Int32Array;
  readonly jCols: Int32Array;
  readonly hRows: Int32Array;
  readonly hCols: Int32Array;
  /** d_f and d_c (m). */
  readonly df: number;
  readonly dc: Float64Array;
  readonly dualUnscale: number;
  /** How far each bound was relaxed (w_L = bound − relaxL, w_U = bound + relaxU; 0 when absent). */
  readonly relaxL: Float64Array;
  readonly relaxU: Float64Array;
  /** free[k] = user index of internal variable k (k < nF); posFree[i] = k or −1 when fixed. */
  readonly free: Int32Array;
  readonly posFree: Int32Array;
  /** slackOf[j] = internal index of user row j's slack, or −1 (equality row or row not kept). */
  readonly slackOf: Int32Array;
  /** rowMap[r] = user row of internal row r; rowPos[j] = internal row of user row j, or −1. */
  readonly rowMap: Int32Array;
  readonly rowPos: Int32Array;
  /** singletonOf[j] = variable fixed by presolving row j (−1 if none), singletonCoef[j] its a_j. */
  readonly singletonOf: Int32Array;
  readonly singletonCoef: Float64Array;
  /** Constant violation of the rows outside the iteration, and the worst of them (−1 if none). */
  readonly removedViolation: number;
  readonly worstRemovedRow: number;
  /** Full user x with fixed values in place (workspace, n). */
  readonly xFull: Float64Array;
  private readonly gradUser: Float64Array;
  private readonly gUser: Float64Array;
  private readonly jUser: Float64Array;
  private readonly hUser: Float64Array;
  private readonly lamUser: Float64Array;
  private readonly jKeep: Int32Array;
  /** d_j of each kept Jacobian entry's row (jKeep order). */
  private readonly jScale: Float64Array;
  /** User Jacobian entries left out of the iteration (fixed column or row not kept). */
  private readonly jDrop: Int32Array;
  private readonly hKeep: Int32Array;
  /** Every kept entry's row scale d_j is 1 (the usual case: the transcription scales its rows itself), so jac() copies. */
  private readonly unitRows: boolean;

  constructor(readonly p: NlpProblem, relax: number, gMax: number, presolve = true) {
    const { n, m } = p;
    this.xFull = clippedStart(p);
    this.gradUser = new Float64Array(n);
    this.gUser = new Float64Array(m);
    this.jUser = new Float64Array(p.jacRows.length);
    this.hUser = new Float64Array(p.hessRows.length);
    this.lamUser = new Float64Array(m);
    const fixed = new Uint8Array(n);
    for (let i = 0; i < n; i++) if (p.xL[i] === p.xU[i]) fixed[i] = 1;
    this.singletonOf = new Int32Array(m).fill(-1);
    this.singletonCoef = new Float64Array(m);
    if (presolve) this.presolveSingletons(fixed);

    const { posFree, free } = freeIndex(fixed);
    this.posFree = posFree;
    this.free = free;
    const nF = free.length;
    this.nX = nF;
    const rows = keptRows(p, posFree, this.singletonOf, nF);
    this.rowPos = rows.rowPos;
    this.rowMap = rows.rowMap;
    this.slackOf = rows.slackOf;
    this.m = rows.rowMap.length;
    const mI = rows.inequalities;
    this.N = nF + mI;

    // Scaling at the (clipped, presolved) starting point, W&B §3.8.
    this.userGradF(this.xFull);
    this.userJac(this.xFull);
    this.dc = new Float64Array(m);
    this.df = gradientScaling(gMax, this.gradUser, p.jacRows, p.jacCols, this.jUser, this.posFree, this.dc);
    // Rows that left the iteration depend on fixed variables only: their violation is a constant.
    const removed = worstRemovedRow(p, this.userG(this.xFull), this.rowPos);
    this.removedViolation = removed.violation;
    this.worstRemovedRow = removed.row;

    this.dualUnscale = 1 / this.df;
    const bounds = relaxedBounds(p, relax, free, this.slackOf, this.dc, this.N);
    this.wL = bounds.wL;
    this.wU = bounds.wU;
    this.relaxL = bounds.relaxL;
    this.relaxU = bounds.relaxU;

    const jac = keptJacobian(p, posFree, this.rowPos, this.slackOf, this.dc, mI);
    this.jKeep = jac.keep;
    this.jRows = jac.rows;
    this.jCols = jac.cols;
    this.jScale = jac.scale;
    this.jDrop = jac.drop;
    this.unitRows = jac.scale.every((d) => d === 1);
    const hess = keptHessian(p, posFree);
    this.hKeep = hess.keep;
    this.hRows = hess.rows;
    this.hCols = hess.cols;
  }

  private vName(i: number): string {
    const nm = this.p.variableName?.(i);
    return nm ? `x[${i}] (${nm})` : `x[${i}]`;
  }
  private cName(j: number): string {
    const nm = this.p.constraintName?.(j);
    return nm ? `g[${j}] (${nm})` : `g[${j}]`;
  }
  private call(fn: string, body: () => void): void {
    try {
      body();
    } catch (e) {
      if (e instanceof ModelError) throw e;
      throw new ModelError(`${fn} threw: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  /** Scatter w[0..nF) into xFull. */
  scatter(w: Float64Array): Float64Array {
    const x = this.xFull;
    for (let k = 0; k < this.nX; k++) x[this.free[k]] = w[k];
    return x;
  }

  userGradF(x: Float64Array): Float64Array {
    const out = this.gradUser;
    this.call("gradF", () => this.p.gradF(x, out));
    for (let i = 0; i < out.length; i++) if (!Number.isFinite(out[i])) throw new ModelError(`gradF: component ${this.vName(i)} is ${out[i]}`);
    return out;
  }
  userG(x: Float64Array): Float64Array {
    const out = this.gUser;
    this.call("g", () => this.p.g(x, out));
    for (let j = 0; j < out.length; j++) if (!Number.isFinite(out[j])) throw new ModelError(`g: ${this.cName(j)} is ${out[j]}`);
    return out;
  }
  userJac(x: Float64Array): Float64Array {
    const out = this.jUser;
    this.call("jacValues", () => this.p.jacValues(x, out));
    this.checkJac(out);
    return out;
  }
  /** Throws the ModelError naming the first Jacobian entry that is not finite. */
  private checkJac(out: Float64Array): void {
    for (let k = 0; k < out.length; k++)
      if (!Number.isFinite(out[k])) throw new ModelError(`jacValues: entry ${k}, d${this.cName(this.p.jacRows[k])}/d${this.vName(this.p.jacCols[k])} is ${out[k]}`);
  }
  userF(x: Float64Array): number {
    let v = NaN;
    this.call("f", () => { v = this.p.f(x); });
    if (!Number.isFinite(v)) throw new ModelError(`f: objective is ${v}`);
    return v;
  }

  f(w: Float64Array): number {
    return this.df * this.userF(this.scatter(w));
  }
  gradF(w: Float64Array, out: Float64Array): void {
    const gu = this.userGradF(this.scatter(w));
    for (let k = 0; k < this.nX; k++) out[k] = this.df * gu[this.free[k]];
    for (let k = this.nX; k < this.N; k++) out[k] = 0;
  }
  c(w: Float64Array, out: Float64Array): void {
    const g = this.userG(this.scatter(w));
    const rowMap = this.rowMap, slackOf = this.slackOf, dc = this.dc, gL = this.p.gL;
    for (let r = 0; r < this.m; r++) {
      const j = rowMap[r], s = slackOf[j];
      out[r] = s < 0 ? dc[j] * (g[j] - gL[j]) : dc[j] * g[j] - w[s];
    }
  }
  jac(w: Float64Array, out: Float64Array): void {
    const x = this.scatter(w);
    const ju = this.jUser;
    this.call("jacValues", () => this.p.jacValues(x, ju));
    // One pass over the kept entries scales and checks them, a second checks the few others
    // (fixed columns, rows outside the iteration): the checks of userJac without its own pass.
    const jk = this.jKeep, sc = this.jScale, drop = this.jDrop;
    let finite = true;
    if (this.unitRows) {
      // 1 · v is v to the bit (NaN, ±0 and ±∞ included): the copy without the multiply
      for (let t = 0; t < jk.length; t++) {
        const v = ju[jk[t]];
        if (v - v !== 0) finite = false;
        out[t] = v;
      }
    } else {
      for (let t = 0; t < jk.length; t++) {
        const v = ju[jk[t]];
        if (v - v !== 0) finite = false;
        out[t] = sc[t] * v;
      }
    }
    for (let t = 0; t < drop.length; t++) if (ju[drop[t]] - ju[drop[t]] !== 0) finite = false;
    if (!finite) this.checkJac(ju);
    for (let t = jk.length; t < this.jRows.length; t++) out[t] = -1;
  }
  hess(w: Float64Array, sigma: number, lambda: Float64Array, out: Float64Array): void {
    const x = this.scatter(w);
    const lu = this.lamUser;
    lu.fill(0); // rows outside the iteration are linear in fixed variables (presolve) or constant
    for (let r = 0; r < this.m; r++) { const j = this.rowMap[r]; lu[j] = this.dc[j] * lambda[r]; }
    const hu = this.hUser;
    this.call("hessValues", () => this.p.hessValues(x, sigma * this.df, lu, hu));
    const hk = this.hKeep;
    for (let t = 0; t < hk.length; t++) {
      const v = hu[hk[t]];
      if (!Number.isFinite(v)) {
        const k = hk[t];
        throw new ModelError(`hessValues: entry ${k}, (${this.vName(this.p.hessRows[k])}, ${this.vName(this.p.hessCols[k])}) is ${v}`);
      }
      out[t] = v;
    }
  }
  reportF(_w: Float64Array, fw: number): number {
    return fw / this.df;
  }
  /**
   * max over rows of |g_j − gL_j| (equality) or the violation of [gL_j, gU_j] by
   * g_j = (c_r + s)/d_j, and the constant violation of the rows outside the iteration.
   */
  reportInfPr(w: Float64Array, cw: Float64Array): number {
    // The running maximum starts from 0, not from the field, and changes only on a new maximum (or a
    // NaN, which it keeps, as Math.max would): V8 (Node 20) boxed it on every row when it was
    // `v = Math.max(v, …)` from the field (2 MB a solve at trapezoidal N = 1,600). removedViolation
    // ≥ 0, so max(removedViolation, max(0, …)) is the same value.
    const { rowMap, slackOf, dc } = this;
    const gL = this.p.gL, gU = this.p.gU;
    let v = 0;
    for (let r = 0; r < this.m; r++) {
      const j = rowMap[r], s = slackOf[j];
      if (s < 0) {
        const a = Math.abs(cw[r]) / dc[j];
        if (a > v || a !== a) v = a;
      } else {
        const g = (cw[r] + w[s]) / dc[j];
        const a = gL[j] - g, b = g - gU[j];
        if (a > v || a !== a) v = a;
        if (b > v || b !== b) v = b;
      }
      if (v !== v) break; // NaN: the maximum stays NaN
    }
    return Math.max(this.removedViolation, v);
  }

  /** Internal starting point: free x and slacks s_k = d_j g_j(x₀) (pushed inside later). */
  initialW(out: Float64Array): void {
    for (let k = 0; k < this.nX; k++) out[k] = this.xFull[this.free[k]];
    const g = this.userG(this.xFull);
    for (let j = 0; j < this.p.m; j++) {
      const s = this.slackOf[j];
      if (s >= 0) out[s] = this.dc[j] * g[j];
    }
  }

  /**
   * User-space multipliers: λ_j = d_j λ̃_j / d_f, z = z̃ / d_f for free variables; for a fixed
   * variable the reduced gradient r_i = ∂f/∂x_i + Σ_j λ_j ∂g_j/∂x_i gives zL = max(0, r_i),
   * zU = max(0, −r_i) (stationarity ∇f + Jᵀλ − zL + zU = 0).
   */
  recoverMultipliers(lamW: Float64Array, zLW: Float64Array, zUW: Float64Array, lambda: Float64Array, zL: Float64Array, zU: Float64Array): void {
    const p = this.p;
    lambda.fill(0);
    for (let r = 0; r < this.m; r++) { const j = this.rowMap[r]; lambda[j] = (this.dc[j] * lamW[r]) / this.df; }
    zL.fill(0);
    zU.fill(0);
    for (let k = 0; k < this.nX; k++) {
      zL[this.free[k]] = zLW[k] / this.df;
      zU[this.free[k]] = zUW[k] / this.df;
    }
    if (this.nX === p.n) return;
    const red = new Float64Array(p.n);
    const gr = this.userGradF(this.xFull);
    const jv = this.userJac(this.xFull);
    for (let i = 0; i < p.n; i++) if (this.posFree[i] < 0) red[i] = gr[i];
    for (let k = 0; k < jv.length; k++) {
      const i = p.jacCols[k];
      if (this.posFree[i] < 0) red[i] += lambda[p.jacRows[k]] * jv[k];
    }
    // A presolved row x_i = b carries the whole reduced gradient: λ_j = −r_i / a_j.
    for (let j = 0; j < p.m; j++) {
      const i = this.singletonOf[j];
      if (i < 0) continue;
      lambda[j] = -red[i] / this.singletonCoef[j];
      red[i] = 0;
    }
    for (let i = 0; i < p.n; i++) if (this.posFree[i] < 0) { zL[i] = Math.max(0, red[i]); zU[i] = Math.max(0, -red[i]); }
  }

  /**
   * Presolve (the analogue of a modelling language's presolve; common practice, no source):
   * an equality row with a single Jacobian entry a_j at column i that is linear (same a_j and
   * g_j(x + δ e_i) − g_j(x) = a_j δ at a second point, no Hessian contribution) fixes
   * x_i = x_i⁰ − (g_j(x⁰) − gL_j)/a_j. The variable becomes a parameter and the row leaves the
   * iteration. Keeps boundary conditions written as rows (h(0) = 1 next to h ≥ 1) from making
   * the KKT system degenerate (DEVELOPERS.md, Decisions). Skipped when the fixed value would
   * violate the variable's bounds (the row then stays and the solver reports what it finds).
   */
  private presolveSingletons(fixed: Uint8Array): void {
    const p = this.p;
    const { n, m } = p;
    const { start, byRow } = rowGroups(p.jacRows, m);
    try {
      const x0 = this.xFull;
      const J0 = Float64Array.from(this.userJac(x0));
      const g0 = Float64Array.from(this.userG(x0));
      const colOf = new Int32Array(m).fill(-1), kOf = new Int32Array(m).fill(-1);
      const cand = singletonCandidates(p, start, byRow, J0, fixed, colOf, kOf);
      if (cand.length === 0) return;
      const x1 = Float64Array.from(x0);
      const delta = new Float64Array(n);
      for (const j of cand) {
        const i = colOf[j];
        let d = 1e-3 * Math.max(1, Math.abs(x0[i]));
        if (x0[i] + d > p.xU[i]) d = -d;
        delta[i] = d;
        x1[i] = x0[i] + d;
      }
      const J1 = this.userJac(x1);
      const g1 = this.userG(x1);
      // Σ of the candidates' Hessians: a column touched by a nonzero entry disqualifies every
      // candidate row whose pattern contains it (a linear row contributes nothing).
      const lam = new Float64Array(m);
      for (const j of cand) lam[j] = 1;
      const H = this.hUser;
      this.call("hessValues", () => p.hessValues(x0, 0, lam, H));
      const touched = touchedColumns(H, p.hessRows, p.hessCols, n);
      for (const j of cand) {
        const k = kOf[j], i = colOf[j], a = J0[k];
        let linear = true;
        for (let t = start[j]; t < start[j + 1] && linear; t++) {
          const kk = byRow[t];
          if (touched[p.jacCols[kk]]) linear = false;
          else if (kk !== k && J1[kk] !== 0) linear = false;
        }
        if (!linear) continue;
        if (Math.abs(J1[k] - a) > 1e-12 * Math.abs(a)) continue;
        if (Math.abs(g1[j] - g0[j] - a * delta[i]) > 1e-10 * Math.max(1, Math.abs(g0[j]), Math.abs(a * delta[i]))) continue;
        const b = x0[i] - (g0[j] - p.gL[j]) / a;
        if (!(b >= p.xL[i] && b <= p.xU[i])) continue;
        fixed[i] = 1;
        this.xFull[i] = b;
        this.singletonOf[j] = i;
        this.singletonCoef[j] = a;
      }
    } catch (e) {
      if (!(e instanceof ModelError)) throw e;
      // A model that cannot be evaluated at the probe point is simply not presolved.
    }
  }
}

// The presolve's loops, each in a small function of its own: V8 compiles a loop that runs hot on its
// own, not presolveSingletons whole with the model's evaluation calls inlined into it (30 ms of
// optimising compilation in a first trapezoidal N = 1,600 solve; DEVELOPERS.md, "The one-shot code
// in small functions").

/** The triplets (rows[k], ·) grouped by row: row j's entries are byRow[start[j] … start[j+1]). */
function rowGroups(rows: Int32Array, m: number): { start: Int32Array; byRow: Int32Array } {
  const nnz = rows.length;
  const start = new Int32Array(m + 1);
  for (let k = 0; k < nnz; k++) start[rows[k] + 1]++;
  for (let j = 0; j < m; j++) start[j + 1] += start[j];
  const byRow = new Int32Array(nnz), fill = start.slice(0, m);
  for (let k = 0; k < nnz; k++) byRow[fill[rows[k]]++] = k;
  return { start, byRow };
}

/**
 * Equality rows whose Jacobian at x₀ has exactly one nonzero, on a free column no other candidate
 * has taken; sets colOf[j] (the column) and kOf[j] (the triplet) of each.
 */
function singletonCandidates(
  p: NlpProblem, start: Int32Array, byRow: Int32Array, J0: Float64Array, fixed: Uint8Array, colOf: Int32Array, kOf: Int32Array,
): number[] {
  const cand: number[] = [];
  const taken = new Uint8Array(p.n);
  for (let j = 0; j < p.m; j++) {
    if (p.gL[j] !== p.gU[j]) continue;
    let nzK = -1, count = 0;
    for (let t = start[j]; t < start[j + 1]; t++) if (J0[byRow[t]] !== 0) { count++; nzK = byRow[t]; }
    if (count !== 1) continue;
    const i = p.jacCols[nzK];
    // Duplicated triplets of the same entry are summed by contract: require a single one.
    let dup = 0;
    for (let t = start[j]; t < start[j + 1]; t++) if (p.jacCols[byRow[t]] === i) dup++;
    if (dup !== 1 || fixed[i] || taken[i]) continue;
    taken[i] = 1;
    cand.push(j);
    colOf[j] = i;
    kOf[j] = nzK;
  }
  return cand;
}

/** touched[i] = 1 where a nonzero Hessian entry lies in row or column i. */
function touchedColumns(H: Float64Array, rows: Int32Array, cols: Int32Array, n: number): Uint8Array {
  const touched = new Uint8Array(n);
  for (let k = 0; k < H.length; k++) if (H[k] !== 0) { touched[rows[k]] = 1; touched[cols[k]] = 1; }
  return touched;
}

// The constructor's passes over variables, rows and triplets, each in a function of its own (the
// same reason as the presolve's above).

/** The user's x₀ clipped into its bounds, a fixed variable at its value. */
function clippedStart(p: NlpProblem): Float64Array {
  const x = new Float64Array(p.n);
  for (let i = 0; i < p.n; i++) {
    const lo = p.xL[i], hi = p.xU[i];
    let v = p.x0[i];
    if (v < lo) v = lo;
    if (v > hi) v = hi;
    x[i] = lo === hi ? lo : v;
  }
  return x;
}

/** posFree[i] = internal index of user variable i, or −1 when fixed; free[k] = user index of k. */
function freeIndex(fixed: Uint8Array): { posFree: Int32Array; free: Int32Array } {
  const n = fixed.length;
  const posFree = new Int32Array(n).fill(-1);
  let nF = 0;
  for (let i = 0; i < n; i++) if (!fixed[i]) posFree[i] = nF++;
  const free = new Int32Array(nF);
  for (let i = 0; i < n; i++) if (posFree[i] >= 0) free[posFree[i]] = i;
  return { posFree, free };
}

/**
 * Rows kept in the iteration (not presolved, and with at least one free column): rowPos/rowMap
 * between user and internal rows, and each kept inequality's slack index (nF, nF + 1, …).
 */
function keptRows(
  p: NlpProblem, posFree: Int32Array, singletonOf: Int32Array, nF: number,
): { rowPos: Int32Array; rowMap: Int32Array; slackOf: Int32Array; inequalities: number } {
  const m = p.m;
  const hasFree = new Uint8Array(m);
  for (let k = 0; k < p.jacRows.length; k++) if (posFree[p.jacCols[k]] >= 0) hasFree[p.jacRows[k]] = 1;
  const rowPos = new Int32Array(m).fill(-1);
  let mK = 0;
  for (let j = 0; j < m; j++) if (hasFree[j] && singletonOf[j] < 0) rowPos[j] = mK++;
  const rowMap = new Int32Array(mK);
  for (let j = 0; j < m; j++) if (rowPos[j] >= 0) rowMap[rowPos[j]] = j;
  const slackOf = new Int32Array(m).fill(-1);
  let mI = 0;
  for (let j = 0; j < m; j++) if (rowPos[j] >= 0 && p.gL[j] !== p.gU[j]) slackOf[j] = nF + mI++;
  return { rowPos, rowMap, slackOf, inequalities: mI };
}

/** The largest violation among the rows outside the iteration, and its row (−1 if none). */
function worstRemovedRow(p: NlpProblem, g0: Float64Array, rowPos: Int32Array): { violation: number; row: number } {
  let violation = 0, row = -1;
  for (let j = 0; j < p.m; j++) {
    if (rowPos[j] >= 0) continue;
    const v = Math.max(0, p.gL[j] - g0[j], g0[j] - p.gU[j]);
    if (v > violation) { violation = v; row = j; }
  }
  return { violation, row };
}

/** Bounds of the internal variables (free x, then slacks in scaled units), relaxed by ε max(1, |b|). */
function relaxedBounds(
  p: NlpProblem, relax: number, free: Int32Array, slackOf: Int32Array, dc: Float64Array, N: number,
): { wL: Float64Array; wU: Float64Array; relaxL: Float64Array; relaxU: Float64Array } {
  const wL = new Float64Array(N), wU = new Float64Array(N);
  const relaxL = new Float64Array(N), relaxU = new Float64Array(N);
  const by = (b: number) => relax * Math.max(1, Math.abs(b));
  const set = (k: number, lo: number, hi: number) => {
    wL[k] = Number.isFinite(lo) ? lo - by(lo) : -Infinity;
    wU[k] = Number.isFinite(hi) ? hi + by(hi) : Infinity;
    if (Number.isFinite(lo)) relaxL[k] = by(lo);
    if (Number.isFinite(hi)) relaxU[k] = by(hi);
  };
  for (let k = 0; k < free.length; k++) set(k, p.xL[free[k]], p.xU[free[k]]);
  for (let j = 0; j < p.m; j++) if (slackOf[j] >= 0) set(slackOf[j], dc[j] * p.gL[j], dc[j] * p.gU[j]);
  return { wL, wU, relaxL, relaxU };
}

/**
 * The internal Jacobian's pattern: the kept user entries (keep[t] = user triplet, scale[t] = its
 * row's d_j), then −1 per slack; drop lists the user entries left out (fixed column or row not kept).
 */
function keptJacobian(
  p: NlpProblem, posFree: Int32Array, rowPos: Int32Array, slackOf: Int32Array, dc: Float64Array, mI: number,
): { keep: Int32Array; rows: Int32Array; cols: Int32Array; scale: Float64Array; drop: Int32Array } {
  const nnz = p.jacRows.length, jRows = p.jacRows, jCols = p.jacCols;
  let nKeep = 0;
  for (let k = 0; k < nnz; k++) if (posFree[jCols[k]] >= 0 && rowPos[jRows[k]] >= 0) nKeep++;
  const keep = new Int32Array(nKeep), rows = new Int32Array(nKeep + mI), cols = new Int32Array(nKeep + mI);
  const scale = new Float64Array(nKeep), drop = new Int32Array(nnz - nKeep);
  let t = 0, d = 0;
  for (let k = 0; k < nnz; k++) {
    const col = posFree[jCols[k]], row = rowPos[jRows[k]];
    if (col < 0 || row < 0) { drop[d++] = k; continue; }
    keep[t] = k;
    rows[t] = row;
    cols[t] = col;
    scale[t] = dc[jRows[k]];
    t++;
  }
  for (let j = 0; j < p.m; j++) if (slackOf[j] >= 0) { rows[t] = rowPos[j]; cols[t] = slackOf[j]; t++; }
  return { keep, rows, cols, scale, drop };
}

/** The internal Hessian's pattern: the user entries between free variables, lower triangle. */
function keptHessian(p: NlpProblem, posFree: Int32Array): { keep: Int32Array; rows: Int32Array; cols: Int32Array } {
  const nnz = p.hessRows.length, hRows = p.hessRows, hCols = p.hessCols;
  let nKeep = 0;
  for (let k = 0; k < nnz; k++) if (posFree[hRows[k]] >= 0 && posFree[hCols[k]] >= 0) nKeep++;
  const keep = new Int32Array(nKeep), rows = new Int32Array(nKeep), cols = new Int32Array(nKeep);
  let t = 0;
  for (let k = 0; k < nnz; k++) {
    const a = posFree[hRows[k]], b = posFree[hCols[k]];
    if (a < 0 || b < 0) continue;
    keep[t] = k;
    rows[t] = a > b ? a : b;
    cols[t] = a > b ? b : a;
    t++;
  }
  return { keep, rows, cols };
}
