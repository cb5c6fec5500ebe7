/**
 * Sparse NLP assembly shared by every transcription (schemes/<id>.ts describe WHAT is collocated,
 * this module computes values, Jacobians and Lagrangian Hessians of it).
 *
 * Every scheme in Arcwatch writes its NLP in one form. With physical decision vector X ∈ ℝⁿ and
 * the time span T = tf − t0 (a constant, or X[tfVar] − t0 when the final time is free):
 *
 *   site s:      z_s = c_s + A_s X                  (an affine input map of a PointFunction F_s;
 *                                                   z = [t, x, u] or e = [t0, x0, tf, xf])
 *   row r:       g_r(X) = Σ_j a_rj X_j + Σ_(s,i,w)∈terms(r) w · T^{σ_s} · F_s,i(z_s)
 *   objective:   f(X)   =                 Σ_(s,i,w)∈terms(obj) w · T^{σ_s} · F_s,i(z_s)
 *
 * where σ_s = 1 for sites whose outputs are time-scaled (dynamics and running cost, because
 * dx/dτ = T f on the normalised time τ ∈ [0, 1]) and 0 otherwise (path and endpoint functions).
 * Collocation defects, quadratures, path and endpoint constraints are all of this form; so is RK4
 * multiple shooting in its lifted form (stage states as variables, see rk4-shooting.ts).
 *
 * Derivatives (A_s is constant, so the only second-order terms besides ∇²F are the T·F products):
 *   ∂g_r/∂X_j  = a_rj + Σ w T^σ (∇F_s,i A_s)_j + [σ=1, j = tfVar] Σ w F_s,i
 *   ∇²(Σ_r λ_r g_r + σ_f f) = Σ_s A_sᵀ (Σ_i T^σ ω_s,i ∇²F_s,i) A_s
 *                           + Σ_(σ_s = 1) (e_tf ⊗ (Σ_i ω_s,i ∇F_s,i A_s) + transpose)
 *   with ω_s,i = Σ_(terms (s,i,r,w)) w · λ_r  (objective terms use σ_f).
 * All index maps (triplet → slot) are computed once in the constructor (the passes are in
 * assembly-build.ts); evaluation is a few flat loops over Float64Array workspaces.
 *
 * Scaling: the NLP variable is y = X / d (d = variable scale hints) and row r is divided by
 * ρ_r, so the NLP sees g̃ = g/ρ, J̃_rj = J_rj d_j / ρ_r, H̃_pq = H_pq d_p d_q with λ_r = λ̃_r / ρ_r.
 */
import type { PointFunction } from "../problem/types";
import type { NlpProblem } from "../nlp/types";
import { addContrib, type AssemblySpec, type Contrib, type HessTables, type JacTables } from "./assembly-spec";
import { divideByRowScale, hessianTables, inputMap, jacobianTables, rowScales, scaledTables, scratchViews, siteLayout, termTables } from "./assembly-build";

export { AssemblyTables, type AffineInput, type AssemblySpec } from "./assembly-spec";

/** What an Assembly keeps of its spec: the tables of sites, terms and linear entries are read into its own arrays and not kept. */
export type AssemblyHeader = Omit<AssemblySpec, "tables">;

export class Assembly {
  readonly spec: AssemblyHeader;
  readonly n: number;
  readonly m: number;
  /** Final row scales ρ. */
  readonly rowScale: Float64Array;
  readonly jacRows: Int32Array;
  readonly jacCols: Int32Array;
  readonly hessRows: Int32Array;
  readonly hessCols: Int32Array;

  // site layout
  private readonly nSite: number;
  private readonly zOff: Int32Array;
  private readonly fOff: Int32Array;
  private readonly jOff: Int32Array;
  private readonly hOff: Int32Array;
  private readonly Z: Float64Array;
  private readonly F: Float64Array;
  private readonly J: Float64Array;
  private readonly H: Float64Array;
  /** ω per site output (length = total outputs). */
  private readonly omega: Float64Array;
  private readonly wBuf: Float64Array;
  /**
   * Sites are evaluated on the whole arrays Z, F, J, H at their offsets (PointFunction.evalAt …,
   * which every compiled function has); a function without those (the compressed Hermite–Simpson
   * midpoint) goes through scratch arrays of its exact lengths, shared by every site of the same
   * lengths, its values copied in and out. One subarray view of Z, F, J and H per site (four
   * typed-array objects per site, 13,000 at trapezoidal N = 3,200) was most of what a
   * transcription's construction left alive on the young generation, and made V8 grow it.
   */
  private readonly zS: Float64Array[];
  private readonly fS: Float64Array[];
  private readonly jS: Float64Array[];
  private readonly hS: Float64Array[];
  private readonly wView: Float64Array[];
  private readonly siteScaled: Uint8Array;
  /** The point function of each site. */
  private readonly siteFn: PointFunction[];

  // input maps, flattened per site input
  private readonly inStart: Int32Array; // per global input index (zOff + k), start into inVar
  private readonly inVar: Int32Array;
  private readonly inCoef: Float64Array;
  private readonly inConst: Float64Array;

  // term tables for ω
  private readonly termOut: Int32Array; // fOff + comp
  private readonly termRow: Int32Array;
  private readonly termW: Float64Array;
  // row and objective value terms
  private readonly gTerms: { out: Int32Array; row: Int32Array; w: Float64Array; scaled: Uint8Array };
  private readonly fTerms: { out: Int32Array; w: Float64Array; scaled: Uint8Array };

  /** The Jacobian's contributions with the NLP's slot scales folded into their coefficients. */
  private readonly jacNlp: JacTables;
  // ∇f's contributions and the rows' linear terms, with the NLP's scales (d_i, 1/ρ_row) in them
  private gradFromJ: Contrib;
  private gradFromJScaled: Contrib;
  private gradFromF: Contrib;
  private readonly linRow: Int32Array;
  private readonly linVar: Int32Array;
  private readonly linCoef: Float64Array;
  /** The Hessian's contributions, likewise. */
  private readonly hessNlp: HessTables;

  // workspaces
  private readonly X: Float64Array;
  private readonly lastX: Float64Array;
  private haveF = false;
  private haveJ = false;
  /** this.X equals lastX entry by entry (!==), so evalSites(this.X) needs no comparison pass. */
  private ownMatchesCache = false;
  private readonly lamPhys: Float64Array;

  constructor(spec: AssemblySpec) {
    const { tables: T, ...header } = spec;
    this.spec = header;
    const n = (this.n = spec.n);
    const m = (this.m = spec.m);
    const fns = T.fns;
    this.siteFn = fns.slice();
    const nSite = (this.nSite = fns.length);
    const layout = siteLayout(T);
    this.zOff = layout.zOff;
    this.fOff = layout.fOff;
    this.jOff = layout.jOff;
    this.hOff = layout.hOff;
    this.siteScaled = layout.scaled;
    this.Z = new Float64Array(this.zOff[nSite]);
    this.F = new Float64Array(this.fOff[nSite]);
    this.J = new Float64Array(this.jOff[nSite]);
    this.H = new Float64Array(this.hOff[nSite]);
    this.omega = new Float64Array(this.fOff[nSite]);
    const scratch = scratchViews(fns);
    this.wBuf = scratch.wBuf;
    this.zS = scratch.z;
    this.fS = scratch.f;
    this.jS = scratch.j;
    this.hS = scratch.h;
    this.wView = scratch.w;

    const inputs = inputMap(T, this.zOff[nSite], n);
    this.inStart = inputs.inStart;
    this.inVar = inputs.inVar;
    this.inCoef = inputs.inCoef;
    this.inConst = inputs.inConst;
    const terms = termTables(T, layout);
    this.termOut = terms.out;
    this.termRow = terms.row;
    this.termW = terms.w;
    this.gTerms = terms.rows;
    this.fTerms = terms.objective;
    const jac = jacobianTables(T, layout, inputs, terms, n, m, spec.tfVar);
    this.jacRows = jac.rows;
    this.jacCols = jac.cols;
    this.linRow = jac.linRow;
    this.linVar = jac.linVar;
    this.linCoef = jac.linCoef;
    const hess = hessianTables(T, layout, inputs, spec.tfVar);
    this.hessRows = hess.rows;
    this.hessCols = hess.cols;
    T.release();

    // workspaces
    this.X = new Float64Array(n);
    this.lastX = new Float64Array(n);
    this.lamPhys = new Float64Array(m);

    // ---- scaling: the physical Jacobian at x₀ where a row's scale is to be chosen, then every
    // scale folded into the tables the NLP's calls use (the physical tables are not kept)
    const d = spec.varScale;
    let J0: Float64Array | null = null;
    if (spec.rowScale.some((v) => !(v > 0))) {
      J0 = new Float64Array(jac.rows.length);
      this.jacobianFrom(spec.x0, J0, jac.tables);
    }
    this.rowScale = rowScales(spec.rowScale, J0, d, jac.rows, jac.cols);
    const nlp = scaledTables(jac, hess, d, this.rowScale);
    this.jacNlp = nlp.jacNlp;
    this.hessNlp = nlp.hessNlp;
    this.gradFromJ = nlp.gradFromJ;
    this.gradFromJScaled = nlp.gradFromJScaled;
    this.gradFromF = nlp.gradFromF;
    divideByRowScale(this.linCoef, this.linRow, this.rowScale);
    divideByRowScale(this.gTerms.w, this.gTerms.row, this.rowScale);
  }

  /** T = tf − t0 at X. */
  span(X: Float64Array): number {
    return this.spec.tfVar >= 0 ? X[this.spec.tfVar] - this.spec.t0 : this.spec.fixedSpan;
  }

  /** Evaluate site inputs, outputs (and Jacobians when needJ) at physical X; cached on X. */
  private evalSites(X: Float64Array, needJ: boolean): void {
    let same = this.haveF;
    if (same && !(X === this.X && this.ownMatchesCache)) {
      for (let i = 0; i < this.n; i++)
        if (X[i] !== this.lastX[i]) { same = false; break; }
    }
    this.ownMatchesCache = X === this.X || (same && this.ownMatchesCache);
    if (!same) {
      this.lastX.set(X);
      this.haveF = false;
      this.haveJ = false;
    }
    if (this.haveF && (!needJ || this.haveJ)) return;
    const sites = this.siteFn;
    const { Z, inStart, inVar, inCoef, inConst } = this;
    if (!this.haveF) {
      for (let g = 0; g < Z.length; g++) {
        let v = inConst[g];
        for (let q = inStart[g]; q < inStart[g + 1]; q++) v += inCoef[q] * X[inVar[q]];
        Z[g] = v;
      }
    }
    const { zOff, fOff, jOff, F, J } = this;
    for (let s = 0; s < this.nSite; s++) {
      const fn = sites[s];
      const z0 = zOff[s];
      if (fn.evalAt !== undefined && fn.jacAt !== undefined) {
        // compiled functions: straight on the whole arrays at the site's offsets
        if (!this.haveF) fn.evalAt(Z, z0, F, fOff[s]);
        if (needJ && !this.haveJ) fn.jacAt(Z, z0, J, jOff[s]);
        continue;
      }
      const z = this.zS[s];
      for (let i = 0; i < z.length; i++) z[i] = Z[z0 + i];
      if (!this.haveF) {
        const f = this.fS[s];
        fn.eval(z, f);
        const f0 = fOff[s];
        for (let i = 0; i < f.length; i++) F[f0 + i] = f[i];
      }
      if (needJ && !this.haveJ) {
        const j = this.jS[s];
        fn.jac(z, j);
        const j0 = jOff[s];
        for (let i = 0; i < j.length; i++) J[j0 + i] = j[i];
      }
    }
    this.haveF = true;
    if (needJ) this.haveJ = true;
  }

  /** Physical objective f(X). */
  objectivePhys(X: Float64Array): number {
    this.evalSites(X, false);
    const T = this.span(X);
    const { out, w, scaled } = this.fTerms;
    let f = 0;
    for (let k = 0; k < out.length; k++) f += w[k] * (scaled[k] ? T : 1) * this.F[out[k]];
    return f;
  }

  /** The NLP's rows g(X)/ρ at physical X (the scales are in the terms' coefficients). */
  constraintsScaled(X: Float64Array, out: Float64Array): void {
    this.evalSites(X, false);
    const T = this.span(X);
    out.fill(0);
    const { linRow, linVar, linCoef, F } = this;
    for (let k = 0; k < linRow.length; k++) out[linRow[k]] += linCoef[k] * X[linVar[k]];
    const { out: o, row, w, scaled } = this.gTerms;
    for (let k = 0; k < o.length; k++) out[row[k]] += w[k] * (scaled[k] ? T : 1) * F[o[k]];
  }

  /** The NLP's gradient d ∇f(X) at physical X (the scales are in the contributions' coefficients). */
  gradientScaled(X: Float64Array, out: Float64Array): void {
    this.evalSites(X, true);
    const T = this.span(X);
    out.fill(0);
    addContrib(out, this.gradFromJ, this.J, 1);
    addContrib(out, this.gradFromJScaled, this.J, T);
    addContrib(out, this.gradFromF, this.F, 1);
  }

  /** J at physical X from tables t (physical, or the NLP's scaled ones). */
  private jacobianFrom(X: Float64Array, out: Float64Array, t: JacTables): void {
    this.evalSites(X, true);
    const T = this.span(X);
    out.set(t.linear);
    addContrib(out, t.fromJ, this.J, 1);
    addContrib(out, t.fromJScaled, this.J, T);
    addContrib(out, t.fromF, this.F, 1);
  }

  /** ∇²(σ f + Σ λ g) at physical X, λ physical (per unscaled row), from tables t (here the NLP's scaled ones). */
  private hessianFrom(X: Float64Array, sigma: number, lambda: Float64Array, out: Float64Array, t: HessTables): void {
    const needCross = this.spec.tfVar >= 0 && t.cross.slot.length > 0;
    this.evalSites(X, needCross);
    const T = this.span(X);
    const om = this.omega;
    om.fill(0);
    // Two stores, not one of `r >= 0 ? lambda[r] : sigma`: V8 (Node 20) boxes every λ such a
    // conditional loads (150 KB of garbage a call, 40 % of this function at trapezoidal N = 1,600).
    const { termOut, termRow, termW } = this;
    for (let k = 0; k < termOut.length; k++) {
      const r = termRow[k];
      if (r >= 0) om[termOut[k]] += termW[k] * lambda[r];
      else om[termOut[k]] += termW[k] * sigma;
    }
    const sites = this.siteFn;
    for (let s = 0; s < this.nSite; s++) {
      const fn = sites[s];
      if (fn.hessRows.length === 0) continue;
      const f0 = this.fOff[s];
      const w = this.wView[s];
      const fac = this.siteScaled[s] ? T : 1;
      let any = false;
      for (let i = 0; i < fn.nOut; i++) {
        w[i] = fac * om[f0 + i];
        if (w[i] !== 0) any = true;
      }
      if (any && fn.hessAt !== undefined) fn.hessAt(this.Z, this.zOff[s], w, this.H, this.hOff[s]);
      else if (any) {
        const z = this.zS[s], h = this.hS[s];
        const z0 = this.zOff[s];
        for (let i = 0; i < z.length; i++) z[i] = this.Z[z0 + i];
        fn.hess(z, w, h);
        const H = this.H, h0 = this.hOff[s];
        for (let i = 0; i < h.length; i++) H[h0 + i] = h[i];
      } else for (let i = this.hOff[s]; i < this.hOff[s + 1]; i++) this.H[i] = 0;
    }
    out.fill(0);
    addContrib(out, t.fromH, this.H, 1);
    if (needCross) {
      const { slot, src, out: o, coef } = t.cross;
      const J = this.J;
      for (let k = 0; k < slot.length; k++) out[slot[k]] += coef[k] * om[o[k]] * J[src[k]];
    }
  }

  /** Physical X from NLP y. */
  toPhysical(y: Float64Array, X: Float64Array): void {
    const d = this.spec.varScale;
    for (let i = 0; i < this.n; i++) X[i] = y[i] * d[i];
  }

  /**
   * toPhysical into this.X, noting a change: ∇f, J and the Hessian at the point whose f and c were
   * just evaluated then skip evalSites' comparison of all n entries (2 ms a solve, trapezoidal 1,600).
   */
  private loadOwn(y: Float64Array): void {
    const d = this.spec.varScale, X = this.X;
    let changed = false;
    for (let i = 0; i < this.n; i++) {
      const v = y[i] * d[i];
      if (v !== X[i]) changed = true;
      X[i] = v;
    }
    if (changed) this.ownMatchesCache = false;
  }

  /** Physical multipliers λ = λ̃ / ρ. */
  multipliersPhys(lambdaScaled: Float64Array, out: Float64Array): void {
    for (let r = 0; r < this.m; r++) out[r] = lambdaScaled[r] / this.rowScale[r];
  }

  /** The scaled NLP handed to the interior-point solver. */
  nlp(): NlpProblem {
    const spec = this.spec;
    const n = this.n, m = this.m;
    const d = spec.varScale;
    const rs = this.rowScale;
    const xL = new Float64Array(n), xU = new Float64Array(n), x0 = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      xL[i] = spec.xL[i] / d[i];
      xU[i] = spec.xU[i] / d[i];
      x0[i] = spec.x0[i] / d[i];
    }
    const gL = new Float64Array(m), gU = new Float64Array(m);
    for (let r = 0; r < m; r++) {
      gL[r] = spec.gL[r] / rs[r];
      gU[r] = spec.gU[r] / rs[r];
    }
    const X = this.X;
    const self = this;
    const problem: NlpProblem = {
      n, m, xL, xU, gL, gU, x0,
      jacRows: this.jacRows, jacCols: this.jacCols, hessRows: this.hessRows, hessCols: this.hessCols,
      f(y) {
        self.loadOwn(y);
        return self.objectivePhys(X);
      },
      gradF(y, out) {
        self.loadOwn(y);
        self.gradientScaled(X, out);
      },
      g(y, out) {
        self.loadOwn(y);
        self.constraintsScaled(X, out);
      },
      jacValues(y, out) {
        self.loadOwn(y);
        self.jacobianFrom(X, out, self.jacNlp);
      },
      hessValues(y, sigma, lambda, out) {
        self.loadOwn(y);
        self.multipliersPhys(lambda, self.lamPhys);
        self.hessianFrom(X, sigma, self.lamPhys, out, self.hessNlp);
      },
    };
    if (spec.variableName) problem.variableName = spec.variableName;
    if (spec.constraintName) problem.constraintName = spec.constraintName;
    return problem;
  }
}
