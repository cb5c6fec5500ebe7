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
 * All index maps (triplet → slot) are computed once in the constructor; evaluation is a few flat
 * loops over Float64Array workspaces.
 *
 * Scaling: the NLP variable is y = X / d (d = variable scale hints) and row r is divided by
 * ρ_r, so the NLP sees g̃ = g/ρ, J̃_rj = J_rj d_j / ρ_r, H̃_pq = H_pq d_p d_q with λ_r = λ̃_r / ρ_r.
 */
import type { PointFunction } from "../problem/types";
import type { NlpProblem } from "../nlp/types";
import { addContrib, contribOf, IntList, NumList, PairSlots, scaledContrib, type AssemblySpec, type Contrib, type HessTables, type JacTables } from "./assembly-spec";

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
    this.zOff = new Int32Array(nSite + 1);
    this.fOff = new Int32Array(nSite + 1);
    this.jOff = new Int32Array(nSite + 1);
    this.hOff = new Int32Array(nSite + 1);
    this.siteScaled = new Uint8Array(nSite);
    const inputEnd = T.inputEnd.a;
    if (T.inputEnd.n !== nSite) throw new Error(`assembly: ${nSite} sites opened, ${T.inputEnd.n} closed`);
    for (let s = 0; s < nSite; s++) {
      const fn = fns[s];
      const nIn = inputEnd[s] - (s > 0 ? inputEnd[s - 1] : 0);
      if (nIn !== fn.nIn) throw new Error(`assembly: site ${s} has ${nIn} inputs, function needs ${fn.nIn}`);
      this.zOff[s + 1] = this.zOff[s] + fn.nIn;
      this.fOff[s + 1] = this.fOff[s] + fn.nOut;
      this.jOff[s + 1] = this.jOff[s] + fn.jacRows.length;
      this.hOff[s + 1] = this.hOff[s] + fn.hessRows.length;
      this.siteScaled[s] = T.scaled.a[s];
    }
    this.Z = new Float64Array(this.zOff[nSite]);
    this.F = new Float64Array(this.fOff[nSite]);
    this.J = new Float64Array(this.jOff[nSite]);
    this.H = new Float64Array(this.hOff[nSite]);
    this.omega = new Float64Array(this.fOff[nSite]);
    let maxOut = 1;
    for (let s = 0; s < nSite; s++) maxOut = Math.max(maxOut, fns[s].nOut);
    this.wBuf = new Float64Array(maxOut);
    // one scratch per role and length (a function reads z while it writes out, so roles never share)
    const scratch = [new Map<number, Float64Array>(), new Map<number, Float64Array>(), new Map<number, Float64Array>(), new Map<number, Float64Array>()];
    const shared = (role: number, len: number): Float64Array => {
      let a = scratch[role].get(len);
      if (!a) scratch[role].set(len, (a = new Float64Array(len)));
      return a;
    };
    this.zS = [];
    this.fS = [];
    this.jS = [];
    this.hS = [];
    this.wView = [];
    const wByOut = new Map<number, Float64Array>();
    for (let s = 0; s < nSite; s++) {
      const fn = fns[s];
      const nOut = fn.nOut;
      this.zS.push(shared(0, fn.nIn));
      this.fS.push(shared(1, nOut));
      this.jS.push(shared(2, fn.jacRows.length));
      this.hS.push(shared(3, fn.hessRows.length));
      if (!wByOut.has(nOut)) wByOut.set(nOut, this.wBuf.subarray(0, nOut));
      this.wView.push(wByOut.get(nOut)!);
    }

    // flattened input maps (the tables' own layout)
    const nInTot = this.zOff[nSite];
    if (T.nInput !== nInTot) throw new Error(`assembly: ${T.nInput} inputs written, sites need ${nInTot}`);
    this.inStart = new Int32Array(nInTot + 1);
    this.inStart.set(T.varStart.a.subarray(0, nInTot));
    this.inStart[nInTot] = T.inVar.n;
    this.inConst = T.inConst.done();
    this.inVar = T.inVar.done();
    this.inCoef = T.inCoef.done();
    for (let q = 0; q < this.inVar.length; q++) {
      const v = this.inVar[q];
      if (!(v >= 0 && v < n)) throw new Error(`assembly: input refers to variable ${v} outside 0..${n - 1}`);
    }

    const tfVar = spec.tfVar;
    // terms
    const nT = T.nTerm;
    const tSite = T.tSite.a, tComp = T.tComp.a, tRowIn = T.tRow.a, tWIn = T.tW.a;
    this.termOut = new Int32Array(nT);
    this.termRow = new Int32Array(nT);
    this.termW = new Float64Array(nT);
    const gOut = new IntList(), gRow = new IntList(), gW = new NumList(), gSc = new IntList();
    const fOut = new IntList(), fW = new NumList(), fSc = new IntList();
    for (let k = 0; k < nT; k++) {
      const site = tSite[k], comp = tComp[k], row = tRowIn[k], w = tWIn[k];
      if (!(site >= 0 && site < nSite)) throw new Error(`assembly: term ${k} refers to site ${site} outside 0..${nSite - 1}`);
      if (comp < 0 || comp >= fns[site].nOut) throw new Error(`assembly: term ${k} refers to output ${comp} of site ${site}`);
      const out = this.fOff[site] + comp;
      this.termOut[k] = out;
      this.termRow[k] = row;
      this.termW[k] = w;
      if (row >= 0) {
        gOut.push(out); gRow.push(row); gW.push(w); gSc.push(this.siteScaled[site]);
      } else {
        fOut.push(out); fW.push(w); fSc.push(this.siteScaled[site]);
      }
    }
    this.gTerms = { out: gOut.done(), row: gRow.done(), w: gW.done(), scaled: Uint8Array.from(gSc.done()) };
    this.fTerms = { out: fOut.done(), w: fW.done(), scaled: Uint8Array.from(fSc.done()) };

    // per-site lists of terms (compressed: termsOfSite[termStart[s] … termStart[s + 1]) in term
    // order), and per function the Jacobian entries of each output row
    const termStart = new Int32Array(nSite + 1);
    for (let k = 0; k < nT; k++) termStart[tSite[k] + 1]++;
    for (let s = 0; s < nSite; s++) termStart[s + 1] += termStart[s];
    const termsOfSite = new Int32Array(nT);
    {
      const fill = termStart.slice(0, nSite);
      for (let k = 0; k < nT; k++) termsOfSite[fill[tSite[k]]++] = k;
    }
    const rowEntriesCache = new Map<PointFunction, number[][]>();
    const rowEntries = (fn: PointFunction): number[][] => {
      let r = rowEntriesCache.get(fn);
      if (!r) {
        r = Array.from({ length: fn.nOut }, () => []);
        for (let e = 0; e < fn.jacRows.length; e++) r[fn.jacRows[e]].push(e);
        rowEntriesCache.set(fn, r);
      }
      return r;
    };

    // ---- Jacobian pattern (slots in order of first appearance)
    const jac = new PairSlots();
    const nLin = T.nLinear;
    const lRow = T.lRow.a, lVar = T.lVar.a;
    for (let k = 0; k < nLin; k++) {
      const row = lRow[k];
      if (row < 0 || row >= m) throw new Error(`assembly: linear entry row ${row} outside 0..${m - 1}`);
      const v = lVar[k];
      if (!(v >= 0 && v < n)) throw new Error(`assembly: linear entry refers to variable ${v} outside 0..${n - 1}`);
      jac.slot(row, v);
    }
    this.linRow = T.lRow.done(); this.linVar = T.lVar.done(); this.linCoef = T.lCoef.done();
    const aS = new IntList(), aSrc = new IntList(), aC = new NumList();
    const bS = new IntList(), bSrc = new IntList(), bC = new NumList();
    const cS = new IntList(), cSrc = new IntList(), cC = new NumList();
    const gaS = new IntList(), gaSrc = new IntList(), gaC = new NumList();
    const gbS = new IntList(), gbSrc = new IntList(), gbC = new NumList();
    const gcS = new IntList(), gcSrc = new IntList(), gcC = new NumList();
    for (let s = 0; s < nSite; s++) {
      const fn = fns[s];
      const re = rowEntries(fn);
      const scaled = this.siteScaled[s] === 1;
      for (let a = termStart[s]; a < termStart[s + 1]; a++) {
        const t = termsOfSite[a];
        const comp = tComp[t], row = tRowIn[t], w = tWIn[t];
        const entries = re[comp];
        for (let b = 0; b < entries.length; b++) {
          const e = entries[b];
          const col = fn.jacCols[e];
          const gin = this.zOff[s] + col;
          for (let q = this.inStart[gin]; q < this.inStart[gin + 1]; q++) {
            const v = this.inVar[q];
            const coef = w * this.inCoef[q];
            if (row >= 0) {
              const sl = jac.slot(row, v);
              if (scaled) { bS.push(sl); bSrc.push(this.jOff[s] + e); bC.push(coef); }
              else { aS.push(sl); aSrc.push(this.jOff[s] + e); aC.push(coef); }
            } else if (scaled) { gbS.push(v); gbSrc.push(this.jOff[s] + e); gbC.push(coef); }
            else { gaS.push(v); gaSrc.push(this.jOff[s] + e); gaC.push(coef); }
          }
        }
        if (scaled && tfVar >= 0) {
          if (row >= 0) { cS.push(jac.slot(row, tfVar)); cSrc.push(this.fOff[s] + comp); cC.push(w); }
          else { gcS.push(tfVar); gcSrc.push(this.fOff[s] + comp); gcC.push(w); }
        }
      }
    }
    const jacFromJ = contribOf(aS, aSrc, aC);
    const jacFromJScaled = contribOf(bS, bSrc, bC);
    const jacFromF = contribOf(cS, cSrc, cC);
    this.gradFromJ = contribOf(gaS, gaSrc, gaC);
    this.gradFromJScaled = contribOf(gbS, gbSrc, gbC);
    this.gradFromF = contribOf(gcS, gcSrc, gcC);
    const nnzJ = jac.n;
    const linSlot = new Int32Array(this.linRow.length);
    for (let k = 0; k < this.linRow.length; k++) linSlot[k] = jac.find(this.linRow[k], this.linVar[k]);
    // the linear terms' part of J, summed from 0 in the order jacobianFrom used to add them
    const jacLinear = new Float64Array(nnzJ);
    for (let k = 0; k < linSlot.length; k++) jacLinear[linSlot[k]] += this.linCoef[k];
    const jp: JacTables = { linear: jacLinear, fromJ: jacFromJ, fromJScaled: jacFromJScaled, fromF: jacFromF };
    this.jacRows = jac.a.done();
    this.jacCols = jac.b.done();

    // ---- Hessian pattern
    const hess = new PairSlots();
    const hslot = (p: number, q: number): number => (p < q ? hess.slot(q, p) : hess.slot(p, q));
    const sitesUsed = new Uint8Array(nSite);
    for (let k = 0; k < nT; k++) sitesUsed[tSite[k]] = 1;
    const hS = new IntList(), hSrc = new IntList(), hC = new NumList();
    const xS = new IntList(), xSrc = new IntList(), xOut = new IntList(), xC = new NumList();
    for (let s = 0; s < nSite; s++) {
      if (!sitesUsed[s]) continue;
      const fn = fns[s];
      for (let e = 0; e < fn.hessRows.length; e++) {
        const r = fn.hessRows[e], c = fn.hessCols[e];
        const gr = this.zOff[s] + r, gc = this.zOff[s] + c;
        for (let q1 = this.inStart[gr]; q1 < this.inStart[gr + 1]; q1++)
          for (let q2 = this.inStart[gc]; q2 < this.inStart[gc + 1]; q2++) {
            const j1 = this.inVar[q1], j2 = this.inVar[q2];
            let coef = this.inCoef[q1] * this.inCoef[q2];
            if (r === c) {
              if (j1 < j2) continue;
            } else if (j1 === j2) coef *= 2;
            hS.push(hslot(j1, j2)); hSrc.push(this.hOff[s] + e); hC.push(coef);
          }
      }
      if (this.siteScaled[s] && tfVar >= 0) {
        for (let e = 0; e < fn.jacRows.length; e++) {
          const gin = this.zOff[s] + fn.jacCols[e];
          for (let q = this.inStart[gin]; q < this.inStart[gin + 1]; q++) {
            const v = this.inVar[q];
            xS.push(hslot(tfVar, v)); xSrc.push(this.jOff[s] + e); xOut.push(this.fOff[s] + fn.jacRows[e]);
            xC.push(this.inCoef[q] * (v === tfVar ? 2 : 1));
          }
        }
      }
    }
    const hp: HessTables = { fromH: contribOf(hS, hSrc, hC), cross: { slot: xS.done(), src: xSrc.done(), out: xOut.done(), coef: xC.done() } };
    this.hessRows = hess.a.done();
    this.hessCols = hess.b.done();
    T.release();

    // workspaces
    this.X = new Float64Array(n);
    this.lastX = new Float64Array(n);
    this.lamPhys = new Float64Array(m);

    // ---- scaling
    const d = spec.varScale;
    this.rowScale = new Float64Array(m);
    const needAuto = spec.rowScale.some((v) => !(v > 0));
    let autoScale: Float64Array | null = null;
    if (needAuto) {
      const J0 = new Float64Array(nnzJ);
      this.jacobianFrom(spec.x0, J0, jp);
      autoScale = new Float64Array(m);
      for (let k = 0; k < nnzJ; k++) {
        const v = Math.abs(J0[k] * d[this.jacCols[k]]);
        if (v > autoScale[this.jacRows[k]]) autoScale[this.jacRows[k]] = v;
      }
    }
    for (let r = 0; r < m; r++) {
      const given = spec.rowScale[r];
      if (given > 0) this.rowScale[r] = given;
      else {
        const a = autoScale![r];
        this.rowScale[r] = a > 0 && Number.isFinite(a) ? Math.min(1e6, Math.max(1e-6, a)) : 1;
      }
    }
    // The NLP's scales (∇f: d_i, g: ÷ ρ_row, J: d_col / ρ_row, H: d_p d_q) go into the coefficients
    // once, not a pass per call (2026-12-05): the same sums to rounding, to the bit where all are 1.
    const jacScale = new Float64Array(nnzJ);
    for (let k = 0; k < nnzJ; k++) jacScale[k] = d[this.jacCols[k]] / this.rowScale[this.jacRows[k]];
    const hessScale = new Float64Array(this.hessRows.length);
    for (let k = 0; k < this.hessRows.length; k++) hessScale[k] = d[this.hessRows[k]] * d[this.hessCols[k]];
    this.jacNlp = {
      linear: jp.linear.map((v, k) => v * jacScale[k]),
      fromJ: scaledContrib(jp.fromJ, jacScale), fromJScaled: scaledContrib(jp.fromJScaled, jacScale), fromF: scaledContrib(jp.fromF, jacScale),
    };
    this.hessNlp = { fromH: scaledContrib(hp.fromH, hessScale), cross: { ...hp.cross, coef: hp.cross.coef.map((c, k) => c * hessScale[hp.cross.slot[k]]) } };
    this.gradFromJ = scaledContrib(this.gradFromJ, d);
    this.gradFromJScaled = scaledContrib(this.gradFromJScaled, d);
    this.gradFromF = scaledContrib(this.gradFromF, d);
    for (let k = 0; k < this.linRow.length; k++) this.linCoef[k] /= this.rowScale[this.linRow[k]];
    const gt = this.gTerms;
    for (let k = 0; k < gt.row.length; k++) gt.w[k] /= this.rowScale[gt.row[k]];
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
