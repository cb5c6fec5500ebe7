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
  /** free[k] = user index of internal variable k (k < nF); posFree[i] = k or −1 when fixed. */
  readonly free: Int32Array;
  readonly posFree: Int32Array;
  /** slackOf[j] = internal index of row j's slack, or −1 for an equality row. */
  readonly slackOf: Int32Array;
  readonly isEq: Uint8Array;
  /** Full user x with fixed values in place (workspace, n). */
  readonly xFull: Float64Array;
  private readonly gradUser: Float64Array;
  private readonly gUser: Float64Array;
  private readonly jUser: Float64Array;
  private readonly hUser: Float64Array;
  private readonly lamUser: Float64Array;
  private readonly jKeep: Int32Array;
  private readonly hKeep: Int32Array;

  constructor(readonly p: NlpProblem, relax: number, gMax: number) {
    const { n, m } = p;
    this.m = m;
    this.xFull = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const lo = p.xL[i], hi = p.xU[i];
      let v = p.x0[i];
      if (v < lo) v = lo;
      if (v > hi) v = hi;
      this.xFull[i] = lo === hi ? lo : v;
    }
    this.posFree = new Int32Array(n).fill(-1);
    let nF = 0;
    for (let i = 0; i < n; i++) if (p.xL[i] !== p.xU[i]) this.posFree[i] = nF++;
    this.free = new Int32Array(nF);
    for (let i = 0; i < n; i++) if (this.posFree[i] >= 0) this.free[this.posFree[i]] = i;
    const free = this.free;
    this.nX = nF;
    this.isEq = new Uint8Array(m);
    this.slackOf = new Int32Array(m).fill(-1);
    let mI = 0;
    for (let j = 0; j < m; j++) {
      if (p.gL[j] === p.gU[j]) this.isEq[j] = 1;
      else this.slackOf[j] = nF + mI++;
    }
    this.N = nF + mI;
    this.gradUser = new Float64Array(n);
    this.gUser = new Float64Array(m);
    this.jUser = new Float64Array(p.jacRows.length);
    this.hUser = new Float64Array(p.hessRows.length);
    this.lamUser = new Float64Array(m);

    // Scaling at the (clipped) starting point, W&B §3.8.
    this.userGradF(this.xFull);
    this.userJac(this.xFull);
    this.dc = new Float64Array(m);
    this.df = gradientScaling(gMax, this.gradUser, p.jacRows, p.jacCols, this.jUser, this.posFree, this.dc);

    this.dualUnscale = 1 / this.df;
    // Bounds (relaxed).
    const rl = (b: number) => b - relax * Math.max(1, Math.abs(b));
    const ru = (b: number) => b + relax * Math.max(1, Math.abs(b));
    this.wL = new Float64Array(this.N);
    this.wU = new Float64Array(this.N);
    for (let k = 0; k < nF; k++) {
      const i = free[k];
      this.wL[k] = Number.isFinite(p.xL[i]) ? rl(p.xL[i]) : -Infinity;
      this.wU[k] = Number.isFinite(p.xU[i]) ? ru(p.xU[i]) : Infinity;
    }
    for (let j = 0; j < m; j++) {
      const s = this.slackOf[j];
      if (s < 0) continue;
      const lo = this.dc[j] * p.gL[j], hi = this.dc[j] * p.gU[j];
      this.wL[s] = Number.isFinite(lo) ? rl(lo) : -Infinity;
      this.wU[s] = Number.isFinite(hi) ? ru(hi) : Infinity;
    }

    // Jacobian pattern: kept user entries, then −1 per slack (two passes, typed arrays).
    const nnzJU = p.jacRows.length, jRowsU = p.jacRows, jColsU = p.jacCols, posFree = this.posFree;
    let nKeep = 0;
    for (let k = 0; k < nnzJU; k++) if (posFree[jColsU[k]] >= 0) nKeep++;
    this.jKeep = new Int32Array(nKeep);
    this.jRows = new Int32Array(nKeep + mI);
    this.jCols = new Int32Array(nKeep + mI);
    let t = 0;
    for (let k = 0; k < nnzJU; k++) {
      const col = posFree[jColsU[k]];
      if (col < 0) continue;
      this.jKeep[t] = k;
      this.jRows[t] = jRowsU[k];
      this.jCols[t] = col;
      t++;
    }
    for (let j = 0; j < m; j++) if (this.slackOf[j] >= 0) { this.jRows[t] = j; this.jCols[t] = this.slackOf[j]; t++; }

    // Hessian pattern: entries between free variables, lower triangle.
    const nnzHU = p.hessRows.length, hRowsU = p.hessRows, hColsU = p.hessCols;
    let hKeep = 0;
    for (let k = 0; k < nnzHU; k++) if (posFree[hRowsU[k]] >= 0 && posFree[hColsU[k]] >= 0) hKeep++;
    this.hKeep = new Int32Array(hKeep);
    this.hRows = new Int32Array(hKeep);
    this.hCols = new Int32Array(hKeep);
    t = 0;
    for (let k = 0; k < nnzHU; k++) {
      const a = posFree[hRowsU[k]], b = posFree[hColsU[k]];
      if (a < 0 || b < 0) continue;
      this.hKeep[t] = k;
      this.hRows[t] = a > b ? a : b;
      this.hCols[t] = a > b ? b : a;
      t++;
    }
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
    for (let k = 0; k < out.length; k++)
      if (!Number.isFinite(out[k])) throw new ModelError(`jacValues: entry ${k}, d${this.cName(this.p.jacRows[k])}/d${this.vName(this.p.jacCols[k])} is ${out[k]}`);
    return out;
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
    for (let j = 0; j < this.m; j++) {
      const s = this.slackOf[j];
      out[j] = s < 0 ? this.dc[j] * (g[j] - this.p.gL[j]) : this.dc[j] * g[j] - w[s];
    }
  }
  jac(w: Float64Array, out: Float64Array): void {
    const ju = this.userJac(this.scatter(w));
    const jk = this.jKeep;
    const rows = this.jRows;
    for (let t = 0; t < jk.length; t++) out[t] = this.dc[rows[t]] * ju[jk[t]];
    for (let t = jk.length; t < rows.length; t++) out[t] = -1;
  }
  hess(w: Float64Array, sigma: number, lambda: Float64Array, out: Float64Array): void {
    const x = this.scatter(w);
    const lu = this.lamUser;
    for (let j = 0; j < this.m; j++) lu[j] = this.dc[j] * lambda[j];
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
  /** max_j of |g_j − gL_j| (equality) or the violation of [gL_j, gU_j] by g_j = (c_j + s)/d_j. */
  reportInfPr(w: Float64Array, cw: Float64Array): number {
    let v = 0;
    for (let j = 0; j < this.m; j++) {
      const s = this.slackOf[j];
      if (s < 0) v = Math.max(v, Math.abs(cw[j]) / this.dc[j]);
      else {
        const g = (cw[j] + w[s]) / this.dc[j];
        v = Math.max(v, this.p.gL[j] - g, g - this.p.gU[j]);
      }
    }
    return v;
  }

  /** Internal starting point: free x and slacks s_k = d_j g_j(x₀) (pushed inside later). */
  initialW(out: Float64Array): void {
    for (let k = 0; k < this.nX; k++) out[k] = this.xFull[this.free[k]];
    const g = this.userG(this.xFull);
    for (let j = 0; j < this.m; j++) {
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
    for (let j = 0; j < this.m; j++) lambda[j] = (this.dc[j] * lamW[j]) / this.df;
    zL.fill(0);
    zU.fill(0);
    for (let k = 0; k < this.nX; k++) {
      zL[this.free[k]] = zLW[k] / this.df;
      zU[this.free[k]] = zUW[k] / this.df;
    }
    if (this.nX === p.n) return;
    const r = new Float64Array(p.n);
    const gr = this.userGradF(this.xFull);
    const jv = this.userJac(this.xFull);
    for (let i = 0; i < p.n; i++) if (this.posFree[i] < 0) r[i] = gr[i];
    for (let k = 0; k < jv.length; k++) {
      const i = p.jacCols[k];
      if (this.posFree[i] < 0) r[i] += lambda[p.jacRows[k]] * jv[k];
    }
    for (let i = 0; i < p.n; i++) if (this.posFree[i] < 0) { zL[i] = Math.max(0, r[i]); zU[i] = Math.max(0, -r[i]); }
  }
}
