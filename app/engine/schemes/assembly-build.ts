/**
 * The Assembly's tables, built from the builder's AssemblyTables (assembly-spec.ts) once per
 * transcription: the site layout, the input maps, the terms, the Jacobian's and the Hessian's
 * patterns with their contributions, and the NLP's scales folded into the coefficients.
 *
 * Each pass is a function of its own, and the passes over sites do one site per call (they were
 * one 270-line constructor body until 2026-12-05, and assembly.ts stood at the 600-line limit).
 * V8 no longer compiles the whole constructor by on-stack replacement in the middle of a large
 * transcription (55 + 96 + 88 ms of optimising compilation over the first three trapezoidal
 * N = 1,600 solves of a process); it compiles the small functions instead. The first solves'
 * CPU did not change beyond the noise (DEVELOPERS.md, "The one-shot code in small functions").
 */
import type { PointFunction } from "../problem/types";
import { contribOf, IntList, NumList, PairSlots, scaledContrib, type AssemblyTables, type Contrib, type HessTables, type JacTables } from "./assembly-spec";

/** Where each site's inputs, outputs, Jacobian and Hessian entries start in the flat arrays Z, F, J and H. */
export interface SiteLayout {
  zOff: Int32Array;
  fOff: Int32Array;
  jOff: Int32Array;
  hOff: Int32Array;
  /** 1 where the site's outputs are time-scaled. */
  scaled: Uint8Array;
}

export function siteLayout(T: AssemblyTables): SiteLayout {
  const fns = T.fns, nSite = fns.length;
  const zOff = new Int32Array(nSite + 1), fOff = new Int32Array(nSite + 1);
  const jOff = new Int32Array(nSite + 1), hOff = new Int32Array(nSite + 1);
  const scaled = new Uint8Array(nSite);
  const inputEnd = T.inputEnd.a;
  if (T.inputEnd.n !== nSite) throw new Error(`assembly: ${nSite} sites opened, ${T.inputEnd.n} closed`);
  for (let s = 0; s < nSite; s++) {
    const fn = fns[s];
    const nIn = inputEnd[s] - (s > 0 ? inputEnd[s - 1] : 0);
    if (nIn !== fn.nIn) throw new Error(`assembly: site ${s} has ${nIn} inputs, function needs ${fn.nIn}`);
    zOff[s + 1] = zOff[s] + fn.nIn;
    fOff[s + 1] = fOff[s] + fn.nOut;
    jOff[s + 1] = jOff[s] + fn.jacRows.length;
    hOff[s + 1] = hOff[s] + fn.hessRows.length;
    scaled[s] = T.scaled.a[s];
  }
  return { zOff, fOff, jOff, hOff, scaled };
}

/**
 * Scratch arrays for sites whose function has no evalAt/jacAt/hessAt (values copied in and out),
 * one per role and length and shared by every site of that length (a function reads z while it
 * writes out, so roles never share); w views the start of one buffer as long as the longest output.
 */
export function scratchViews(fns: PointFunction[]): { wBuf: Float64Array; z: Float64Array[]; f: Float64Array[]; j: Float64Array[]; h: Float64Array[]; w: Float64Array[] } {
  let maxOut = 1;
  for (let s = 0; s < fns.length; s++) maxOut = Math.max(maxOut, fns[s].nOut);
  const wBuf = new Float64Array(maxOut);
  const byRole = [new Map<number, Float64Array>(), new Map<number, Float64Array>(), new Map<number, Float64Array>(), new Map<number, Float64Array>()];
  const shared = (role: number, len: number): Float64Array => {
    let a = byRole[role].get(len);
    if (!a) byRole[role].set(len, (a = new Float64Array(len)));
    return a;
  };
  const z: Float64Array[] = [], f: Float64Array[] = [], j: Float64Array[] = [], h: Float64Array[] = [], w: Float64Array[] = [];
  const wByOut = new Map<number, Float64Array>();
  for (let s = 0; s < fns.length; s++) {
    const fn = fns[s];
    const nOut = fn.nOut;
    z.push(shared(0, fn.nIn));
    f.push(shared(1, nOut));
    j.push(shared(2, fn.jacRows.length));
    h.push(shared(3, fn.hessRows.length));
    if (!wByOut.has(nOut)) wByOut.set(nOut, wBuf.subarray(0, nOut));
    w.push(wByOut.get(nOut)!);
  }
  return { wBuf, z, f, j, h, w };
}

/** Input g of the sites: z_g = inConst[g] + Σ_(q = inStart[g] … inStart[g + 1] − 1) inCoef[q] · X[inVar[q]]. */
export interface InputMap {
  inStart: Int32Array;
  inVar: Int32Array;
  inCoef: Float64Array;
  inConst: Float64Array;
}

/** The tables' flattened input maps, taken over (the tables' lists are emptied), their variables checked against 0 … n − 1. */
export function inputMap(T: AssemblyTables, nInTot: number, n: number): InputMap {
  if (T.nInput !== nInTot) throw new Error(`assembly: ${T.nInput} inputs written, sites need ${nInTot}`);
  const inStart = new Int32Array(nInTot + 1);
  inStart.set(T.varStart.a.subarray(0, nInTot));
  inStart[nInTot] = T.inVar.n;
  const inConst = T.inConst.done();
  const inVar = T.inVar.done();
  const inCoef = T.inCoef.done();
  for (let q = 0; q < inVar.length; q++) {
    const v = inVar[q];
    if (!(v >= 0 && v < n)) throw new Error(`assembly: input refers to variable ${v} outside 0..${n - 1}`);
  }
  return { inStart, inVar, inCoef, inConst };
}

/** The terms: term k adds w[k] · T^σ · F[out[k]] to row[k] (−1: the objective); then the same split by rows and objective. */
export interface TermTables {
  out: Int32Array;
  row: Int32Array;
  w: Float64Array;
  rows: { out: Int32Array; row: Int32Array; w: Float64Array; scaled: Uint8Array };
  objective: { out: Int32Array; w: Float64Array; scaled: Uint8Array };
  /** The terms of site s are bySite[start[s] … start[s + 1]), in term order. */
  start: Int32Array;
  bySite: Int32Array;
}

export function termTables(T: AssemblyTables, layout: SiteLayout): TermTables {
  const fns = T.fns, nSite = fns.length, nT = T.nTerm;
  const tSite = T.tSite.a, tComp = T.tComp.a, tRowIn = T.tRow.a, tWIn = T.tW.a;
  const out = new Int32Array(nT), row = new Int32Array(nT), w = new Float64Array(nT);
  const gOut = new IntList(), gRow = new IntList(), gW = new NumList(), gSc = new IntList();
  const fOut = new IntList(), fW = new NumList(), fSc = new IntList();
  for (let k = 0; k < nT; k++) {
    const site = tSite[k], comp = tComp[k], r = tRowIn[k], wk = tWIn[k];
    if (!(site >= 0 && site < nSite)) throw new Error(`assembly: term ${k} refers to site ${site} outside 0..${nSite - 1}`);
    if (comp < 0 || comp >= fns[site].nOut) throw new Error(`assembly: term ${k} refers to output ${comp} of site ${site}`);
    const o = layout.fOff[site] + comp;
    out[k] = o;
    row[k] = r;
    w[k] = wk;
    if (r >= 0) {
      gOut.push(o); gRow.push(r); gW.push(wk); gSc.push(layout.scaled[site]);
    } else {
      fOut.push(o); fW.push(wk); fSc.push(layout.scaled[site]);
    }
  }
  const start = new Int32Array(nSite + 1);
  for (let k = 0; k < nT; k++) start[tSite[k] + 1]++;
  for (let s = 0; s < nSite; s++) start[s + 1] += start[s];
  const bySite = new Int32Array(nT);
  const fill = start.slice(0, nSite);
  for (let k = 0; k < nT; k++) bySite[fill[tSite[k]]++] = k;
  return {
    out, row, w,
    rows: { out: gOut.done(), row: gRow.done(), w: gW.done(), scaled: Uint8Array.from(gSc.done()) },
    objective: { out: fOut.done(), w: fW.done(), scaled: Uint8Array.from(fSc.done()) },
    start, bySite,
  };
}

/** The Jacobian's pattern (slots in order of first appearance), its tables, ∇f's contributions and the linear entries. */
export interface JacobianBuild {
  rows: Int32Array;
  cols: Int32Array;
  tables: JacTables;
  gradFromJ: Contrib;
  gradFromJScaled: Contrib;
  gradFromF: Contrib;
  linRow: Int32Array;
  linVar: Int32Array;
  linCoef: Float64Array;
}

/** One site at a time: the Jacobian's slots and the contributions of the site's terms, to rows (a, b, c) and to ∇f (ga, gb, gc). */
class JacobianPass {
  readonly jac = new PairSlots();
  readonly aS = new IntList(); readonly aSrc = new IntList(); readonly aC = new NumList();
  readonly bS = new IntList(); readonly bSrc = new IntList(); readonly bC = new NumList();
  readonly cS = new IntList(); readonly cSrc = new IntList(); readonly cC = new NumList();
  readonly gaS = new IntList(); readonly gaSrc = new IntList(); readonly gaC = new NumList();
  readonly gbS = new IntList(); readonly gbSrc = new IntList(); readonly gbC = new NumList();
  readonly gcS = new IntList(); readonly gcSrc = new IntList(); readonly gcC = new NumList();
  /** Per function, the Jacobian entries of each output row. */
  private readonly rowEntriesOf = new Map<PointFunction, number[][]>();

  constructor(
    private readonly T: AssemblyTables,
    private readonly layout: SiteLayout,
    private readonly inputs: InputMap,
    private readonly terms: TermTables,
    private readonly tfVar: number,
  ) {}

  private rowEntries(fn: PointFunction): number[][] {
    let r = this.rowEntriesOf.get(fn);
    if (!r) {
      r = Array.from({ length: fn.nOut }, () => []);
      for (let e = 0; e < fn.jacRows.length; e++) r[fn.jacRows[e]].push(e);
      this.rowEntriesOf.set(fn, r);
    }
    return r;
  }

  site(s: number): void {
    const fn = this.T.fns[s];
    const re = this.rowEntries(fn);
    const scaled = this.layout.scaled[s] === 1;
    const { start, bySite } = this.terms;
    const tComp = this.T.tComp.a, tRow = this.T.tRow.a, tW = this.T.tW.a;
    const { inStart, inVar, inCoef } = this.inputs;
    const z0 = this.layout.zOff[s], j0 = this.layout.jOff[s], f0 = this.layout.fOff[s];
    const jac = this.jac, tfVar = this.tfVar;
    for (let a = start[s]; a < start[s + 1]; a++) {
      const t = bySite[a];
      const comp = tComp[t], row = tRow[t], w = tW[t];
      const entries = re[comp];
      for (let b = 0; b < entries.length; b++) {
        const e = entries[b];
        const gin = z0 + fn.jacCols[e];
        for (let q = inStart[gin]; q < inStart[gin + 1]; q++) {
          const v = inVar[q];
          const coef = w * inCoef[q];
          if (row >= 0) {
            const sl = jac.slot(row, v);
            if (scaled) { this.bS.push(sl); this.bSrc.push(j0 + e); this.bC.push(coef); }
            else { this.aS.push(sl); this.aSrc.push(j0 + e); this.aC.push(coef); }
          } else if (scaled) { this.gbS.push(v); this.gbSrc.push(j0 + e); this.gbC.push(coef); }
          else { this.gaS.push(v); this.gaSrc.push(j0 + e); this.gaC.push(coef); }
        }
      }
      if (scaled && tfVar >= 0) {
        if (row >= 0) { this.cS.push(jac.slot(row, tfVar)); this.cSrc.push(f0 + comp); this.cC.push(w); }
        else { this.gcS.push(tfVar); this.gcSrc.push(f0 + comp); this.gcC.push(w); }
      }
    }
  }
}

/** The Jacobian: slots of the linear entries first, then of the sites' terms, site by site. */
export function jacobianTables(T: AssemblyTables, layout: SiteLayout, inputs: InputMap, terms: TermTables, n: number, m: number, tfVar: number): JacobianBuild {
  const pass = new JacobianPass(T, layout, inputs, terms, tfVar);
  const jac = pass.jac;
  const nLin = T.nLinear;
  const lRow = T.lRow.a, lVar = T.lVar.a;
  for (let k = 0; k < nLin; k++) {
    const row = lRow[k];
    if (row < 0 || row >= m) throw new Error(`assembly: linear entry row ${row} outside 0..${m - 1}`);
    const v = lVar[k];
    if (!(v >= 0 && v < n)) throw new Error(`assembly: linear entry refers to variable ${v} outside 0..${n - 1}`);
    jac.slot(row, v);
  }
  const linRow = T.lRow.done(), linVar = T.lVar.done(), linCoef = T.lCoef.done();
  for (let s = 0; s < T.fns.length; s++) pass.site(s);
  const fromJ = contribOf(pass.aS, pass.aSrc, pass.aC);
  const fromJScaled = contribOf(pass.bS, pass.bSrc, pass.bC);
  const fromF = contribOf(pass.cS, pass.cSrc, pass.cC);
  // the linear terms' part of J, summed from 0 in the order jacobianFrom used to add them
  const linear = new Float64Array(jac.n);
  for (let k = 0; k < linRow.length; k++) linear[jac.find(linRow[k], linVar[k])] += linCoef[k];
  return {
    rows: jac.a.done(), cols: jac.b.done(),
    tables: { linear, fromJ, fromJScaled, fromF },
    gradFromJ: contribOf(pass.gaS, pass.gaSrc, pass.gaC),
    gradFromJScaled: contribOf(pass.gbS, pass.gbSrc, pass.gbC),
    gradFromF: contribOf(pass.gcS, pass.gcSrc, pass.gcC),
    linRow, linVar, linCoef,
  };
}

/** One site at a time: the Hessian's slots (p ≥ q) and contributions, and the free final time's cross terms. */
class HessianPass {
  readonly hess = new PairSlots();
  readonly hS = new IntList(); readonly hSrc = new IntList(); readonly hC = new NumList();
  readonly xS = new IntList(); readonly xSrc = new IntList(); readonly xOut = new IntList(); readonly xC = new NumList();

  constructor(private readonly fns: PointFunction[], private readonly layout: SiteLayout, private readonly inputs: InputMap, private readonly tfVar: number) {}

  private slot(p: number, q: number): number {
    return p < q ? this.hess.slot(q, p) : this.hess.slot(p, q);
  }

  site(s: number): void {
    const fn = this.fns[s];
    const { inStart, inVar, inCoef } = this.inputs;
    const z0 = this.layout.zOff[s], h0 = this.layout.hOff[s];
    for (let e = 0; e < fn.hessRows.length; e++) {
      const r = fn.hessRows[e], c = fn.hessCols[e];
      const gr = z0 + r, gc = z0 + c;
      for (let q1 = inStart[gr]; q1 < inStart[gr + 1]; q1++)
        for (let q2 = inStart[gc]; q2 < inStart[gc + 1]; q2++) {
          const j1 = inVar[q1], j2 = inVar[q2];
          let coef = inCoef[q1] * inCoef[q2];
          if (r === c) {
            if (j1 < j2) continue;
          } else if (j1 === j2) coef *= 2;
          this.hS.push(this.slot(j1, j2)); this.hSrc.push(h0 + e); this.hC.push(coef);
        }
    }
    const tfVar = this.tfVar;
    if (this.layout.scaled[s] && tfVar >= 0) {
      const j0 = this.layout.jOff[s], f0 = this.layout.fOff[s];
      for (let e = 0; e < fn.jacRows.length; e++) {
        const gin = z0 + fn.jacCols[e];
        for (let q = inStart[gin]; q < inStart[gin + 1]; q++) {
          const v = inVar[q];
          this.xS.push(this.slot(tfVar, v)); this.xSrc.push(j0 + e); this.xOut.push(f0 + fn.jacRows[e]);
          this.xC.push(inCoef[q] * (v === tfVar ? 2 : 1));
        }
      }
    }
  }
}

/** The Hessian of the sites that some term uses, site by site. */
export function hessianTables(T: AssemblyTables, layout: SiteLayout, inputs: InputMap, tfVar: number): { rows: Int32Array; cols: Int32Array; tables: HessTables } {
  const nSite = T.fns.length;
  const used = new Uint8Array(nSite);
  const tSite = T.tSite.a;
  for (let k = 0; k < T.nTerm; k++) used[tSite[k]] = 1;
  const pass = new HessianPass(T.fns, layout, inputs, tfVar);
  for (let s = 0; s < nSite; s++) if (used[s]) pass.site(s);
  const tables: HessTables = {
    fromH: contribOf(pass.hS, pass.hSrc, pass.hC),
    cross: { slot: pass.xS.done(), src: pass.xSrc.done(), out: pass.xOut.done(), coef: pass.xC.done() },
  };
  return { rows: pass.hess.a.done(), cols: pass.hess.b.done(), tables };
}

/**
 * Row scales ρ: the given one where positive, else max_j |J_rj(x₀) d_j| clamped to [1e-6, 1e6]
 * (1 for a row without a finite nonzero); J0 is the physical Jacobian at x₀, null when every
 * row's scale is given.
 */
export function rowScales(given: Float64Array, J0: Float64Array | null, d: Float64Array, jacRows: Int32Array, jacCols: Int32Array): Float64Array {
  const m = given.length;
  let auto: Float64Array | null = null;
  if (J0) {
    auto = new Float64Array(m);
    for (let k = 0; k < J0.length; k++) {
      const v = Math.abs(J0[k] * d[jacCols[k]]);
      if (v > auto[jacRows[k]]) auto[jacRows[k]] = v;
    }
  }
  const rho = new Float64Array(m);
  for (let r = 0; r < m; r++) {
    if (given[r] > 0) rho[r] = given[r];
    else {
      const a = auto![r];
      rho[r] = a > 0 && Number.isFinite(a) ? Math.min(1e6, Math.max(1e-6, a)) : 1;
    }
  }
  return rho;
}

/**
 * The NLP's scales (∇f: d_i, g: ÷ ρ_row, J: d_col / ρ_row, H: d_p d_q) folded into the tables'
 * coefficients once, not a pass per call (2026-12-05): the same sums to rounding, to the bit where
 * all are 1. Returns the scaled Jacobian and Hessian tables and ∇f's contributions.
 */
export function scaledTables(
  jac: JacobianBuild, hess: { rows: Int32Array; cols: Int32Array; tables: HessTables }, d: Float64Array, rho: Float64Array,
): { jacNlp: JacTables; hessNlp: HessTables; gradFromJ: Contrib; gradFromJScaled: Contrib; gradFromF: Contrib } {
  const jp = jac.tables, hp = hess.tables;
  const jacScale = new Float64Array(jac.rows.length);
  for (let k = 0; k < jacScale.length; k++) jacScale[k] = d[jac.cols[k]] / rho[jac.rows[k]];
  const hessScale = new Float64Array(hess.rows.length);
  for (let k = 0; k < hessScale.length; k++) hessScale[k] = d[hess.rows[k]] * d[hess.cols[k]];
  return {
    jacNlp: {
      linear: jp.linear.map((v, k) => v * jacScale[k]),
      fromJ: scaledContrib(jp.fromJ, jacScale), fromJScaled: scaledContrib(jp.fromJScaled, jacScale), fromF: scaledContrib(jp.fromF, jacScale),
    },
    hessNlp: { fromH: scaledContrib(hp.fromH, hessScale), cross: { ...hp.cross, coef: hp.cross.coef.map((c, k) => c * hessScale[hp.cross.slot[k]]) } },
    gradFromJ: scaledContrib(jac.gradFromJ, d),
    gradFromJScaled: scaledContrib(jac.gradFromJScaled, d),
    gradFromF: scaledContrib(jac.gradFromF, d),
  };
}

/** coef[k] /= ρ[row[k]]: the rows' linear entries and terms in the NLP's scale. */
export function divideByRowScale(coef: Float64Array, row: Int32Array, rho: Float64Array): void {
  for (let k = 0; k < row.length; k++) coef[k] /= rho[row[k]];
}
