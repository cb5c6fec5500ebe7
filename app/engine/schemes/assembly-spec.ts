/**
 * The input of an Assembly (assembly.ts): the spec types every scheme's builder fills in
 * (sites with affine inputs, terms, linear entries, bounds and scales), and the flat contribution
 * lists value[slot[k]] += coef[k] · src[idx[k]] that the Assembly precomputes from them once.
 */
import type { PointFunction } from "../problem/types";

/** One affine input z_k = c + Σ coefs[q] · X[vars[q]]. */
export interface AffineInput {
  c: number;
  vars: number[];
  coefs: number[];
}

/**
 * The sites, terms and linear entries of an Assembly, written as flat growable tables rather than
 * one object per site, input, term and entry: a transcription at N = 3,200 holds tens of thousands
 * of them, and as objects they all survived the young generation until build(), which made V8 grow
 * its semi-spaces to their limit (32 MB of the process for the rest of its life).
 *
 *   site s:   fns[s], scaled[s] (outputs · T), inputs inputEnd[s − 1] … inputEnd[s] − 1
 *   input k:  z_k = inConst[k] + Σ_(q = varStart[k] … varStart[k + 1] − 1) inCoef[q] · X[inVar[q]]
 *   term k:   tW[k] · T^σ · F_(tSite[k]),(tComp[k]) added to row tRow[k] (−1: the objective)
 *   linear k: lCoef[k] · X[lVar[k]] added to row lRow[k]
 */
export class AssemblyTables {
  readonly fns: PointFunction[] = [];
  readonly scaled = new IntList();
  readonly inputEnd = new IntList();
  readonly inConst = new NumList();
  readonly varStart = new IntList();
  readonly inVar = new IntList();
  readonly inCoef = new NumList();
  readonly tSite = new IntList();
  readonly tComp = new IntList();
  readonly tRow = new IntList();
  readonly tW = new NumList();
  readonly lRow = new IntList();
  readonly lVar = new IntList();
  readonly lCoef = new NumList();

  get nSite(): number {
    return this.fns.length;
  }
  /** Empties every table (the Assembly's constructor calls it once it has read them). */
  release(): void {
    this.fns.length = 0;
    for (const l of [this.scaled, this.inputEnd, this.inConst, this.varStart, this.inVar, this.inCoef, this.tSite, this.tComp, this.tRow, this.tW, this.lRow, this.lVar, this.lCoef]) l.clear();
  }
  get nTerm(): number {
    return this.tSite.n;
  }
  get nLinear(): number {
    return this.lRow.n;
  }
  get nInput(): number {
    return this.inConst.n;
  }

  /** Opens a site; its inputs follow with input() and inputVar(), then endSite(). Returns its index. */
  beginSite(fn: PointFunction, timeScaled: boolean): number {
    this.fns.push(fn);
    this.scaled.push(timeScaled ? 1 : 0);
    return this.fns.length - 1;
  }
  /** Starts the next input of the open site with its constant part. */
  input(c: number): void {
    this.inConst.push(c);
    this.varStart.push(this.inVar.n);
  }
  /** Adds coef · X[v] to the input just started. */
  inputVar(v: number, coef: number): void {
    this.inVar.push(v);
    this.inCoef.push(coef);
  }
  endSite(): void {
    this.inputEnd.push(this.inConst.n);
  }
  /** A whole site from affine inputs given as objects. */
  addSite(fn: PointFunction, inputs: readonly AffineInput[], timeScaled: boolean): number {
    const s = this.beginSite(fn, timeScaled);
    for (const a of inputs) {
      this.input(a.c);
      for (let q = 0; q < a.vars.length; q++) this.inputVar(a.vars[q], a.coefs[q]);
    }
    this.endSite();
    return s;
  }
  term(site: number, comp: number, row: number, weight: number): void {
    this.tSite.push(site);
    this.tComp.push(comp);
    this.tRow.push(row);
    this.tW.push(weight);
  }
  linear(row: number, v: number, coef: number): void {
    this.lRow.push(row);
    this.lVar.push(v);
    this.lCoef.push(coef);
  }
}

export interface AssemblySpec {
  n: number;
  xL: Float64Array;
  xU: Float64Array;
  /** Variable scale hints d (X = d ⊙ y). */
  varScale: Float64Array;
  /** Starting point, physical units. */
  x0: Float64Array;
  m: number;
  gL: Float64Array;
  gU: Float64Array;
  /** Row scale ρ; 0 means "choose from the Jacobian at x0" (max_j |J_rj d_j|, clamped to [1e-6, 1e6]). */
  rowScale: Float64Array;
  /** Sites, terms and linear entries (read once by the Assembly's constructor, not kept). */
  tables: AssemblyTables;
  t0: number;
  /** Index of the final-time variable, or −1 when the horizon is fixed (then T = fixedSpan). */
  tfVar: number;
  fixedSpan: number;
  variableName?: (i: number) => string;
  constraintName?: (j: number) => string;
}

/**
 * Growable typed arrays for the builder's tables and the precomputed contribution lists.
 *
 * Each list grows inside a resizable ArrayBuffer (ES2024; V8 reserves the address range and
 * commits pages as the buffer grows), and done() copies the entries out and shrinks the buffer to
 * nothing, which hands its pages back at once. A list that grew by doubling plain arrays left
 * every outgrown array, and the untrimmed last one, to the garbage collector: at N = 3,200 that
 * was two to three times the tables' own size held until the next full collection, which sets
 * the process's peak memory. The buffer is only written and read here and by the Assembly's
 * constructor; what the solver reads every iteration is the plain copy.
 */
interface ResizableBuffer extends ArrayBuffer {
  readonly maxByteLength: number;
  resize(byteLength: number): void;
}
/** Address space reserved per list at first (pages are committed only as it grows). */
const LIST_RESERVE_BYTES = 1 << 26;

function resizable(byteLength: number, maxByteLength: number): ResizableBuffer {
  return new (ArrayBuffer as unknown as new (n: number, o: { maxByteLength: number }) => ResizableBuffer)(byteLength, { maxByteLength });
}

abstract class GrowableList<A extends Int32Array | Float64Array> {
  private buf: ResizableBuffer;
  a: A;
  n = 0;
  constructor(private readonly bytesPer: number, private readonly view: (b: ArrayBuffer) => A, reserveBytes: number) {
    this.buf = resizable(64 * bytesPer, Math.max(reserveBytes, 64 * bytesPer));
    this.a = view(this.buf);
  }
  protected grow(): void {
    const want = Math.max(64 * this.bytesPer, 2 * this.buf.byteLength);
    if (want <= this.buf.maxByteLength) {
      this.buf.resize(want);
      return;
    }
    const old = this.a;
    const next = resizable(want, 4 * this.buf.maxByteLength);
    this.a = this.view(next);
    this.a.set(old.subarray(0, this.n));
    this.buf.resize(0);
    this.buf = next;
  }
  /** Empties the list and hands its pages back. */
  clear(): void {
    this.n = 0;
    this.buf.resize(0);
  }
  /** The entries as a plain array of their own; the list is empty afterwards. */
  done(): A {
    const out = this.a.slice(0, this.n) as A;
    this.n = 0;
    this.buf.resize(0);
    return out;
  }
}

/** reserveBytes: address space reserved at first; a list that outgrows it moves to a buffer with four times as much (tests use a small one). */
export class IntList extends GrowableList<Int32Array> {
  constructor(reserveBytes = LIST_RESERVE_BYTES) {
    super(4, (b) => new Int32Array(b), reserveBytes);
  }
  push(v: number): void {
    if (this.n === this.a.length) this.grow();
    this.a[this.n++] = v;
  }
}
export class NumList extends GrowableList<Float64Array> {
  constructor(reserveBytes = LIST_RESERVE_BYTES) {
    super(8, (b) => new Float64Array(b), reserveBytes);
  }
  push(v: number): void {
    if (this.n === this.a.length) this.grow();
    this.a[this.n++] = v;
  }
}

/** Contributions value[slot[k]] += coef[k] · src[idx[k]] (· T when scaled). */
export interface Contrib {
  slot: Int32Array;
  src: Int32Array;
  coef: Float64Array;
}
export function contribOf(slot: IntList, src: IntList, coef: NumList): Contrib {
  return { slot: slot.done(), src: src.done(), coef: coef.done() };
}


export function addContrib(out: Float64Array, c: Contrib, src: Float64Array, factor: number): void {
  const { slot, src: idx, coef } = c;
  if (factor === 1) for (let k = 0; k < slot.length; k++) out[slot[k]] += coef[k] * src[idx[k]];
  else for (let k = 0; k < slot.length; k++) out[slot[k]] += factor * coef[k] * src[idx[k]];
}

/** The Jacobian's tables: its constant part from the linear terms (where a call starts: no fill), and the site contributions. */
export interface JacTables {
  linear: Float64Array;
  fromJ: Contrib;
  /** · T when scaled: separate arrays */
  fromJScaled: Contrib;
  /** tf product terms */
  fromF: Contrib;
}
/** The Hessian's tables: site contributions, and the free final time's cross terms value[slot] += coef · ω[out] · J[src]. */
export interface HessTables {
  fromH: Contrib;
  cross: { slot: Int32Array; src: Int32Array; out: Int32Array; coef: Float64Array };
}
/** c with each coefficient times the scale of the slot it adds to. */
export function scaledContrib(c: Contrib, scale: Float64Array): Contrib {
  return { slot: c.slot, src: c.src, coef: c.coef.map((v, k) => v * scale[c.slot[k]]) };
}

/**
 * Slots of distinct integer pairs (a, b) in order of first appearance: the sparsity patterns of
 * the Jacobian (row, variable) and of the Hessian (p ≥ q). An open-addressing hash table in an
 * Int32Array (linear probing, load ≤ ½) instead of a Map keyed by a·n + b: no heap objects, and
 * no key beyond the small-integer range on large transcriptions.
 */
export class PairSlots {
  readonly a = new IntList();
  readonly b = new IntList();
  private table = new Int32Array(1024).fill(-1);
  private mask = 1023;

  get n(): number {
    return this.a.n;
  }

  private static hash(a: number, b: number): number {
    return (Math.imul(a, 0x9e3779b1) ^ Math.imul(b + 0x7f4a7c15, 0x85ebca77)) >>> 0;
  }

  /** The slot of (a, b), new if unseen. */
  slot(a: number, b: number): number {
    const A = this.a.a, B = this.b.a;
    let h = PairSlots.hash(a, b) & this.mask;
    for (;;) {
      const s = this.table[h];
      if (s < 0) break;
      if (A[s] === a && B[s] === b) return s;
      h = (h + 1) & this.mask;
    }
    const s = this.a.n;
    this.a.push(a);
    this.b.push(b);
    this.table[h] = s;
    if (2 * this.a.n > this.mask) this.grow();
    return s;
  }

  /** The slot of (a, b), or −1. */
  find(a: number, b: number): number {
    const A = this.a.a, B = this.b.a;
    let h = PairSlots.hash(a, b) & this.mask;
    for (;;) {
      const s = this.table[h];
      if (s < 0) return -1;
      if (A[s] === a && B[s] === b) return s;
      h = (h + 1) & this.mask;
    }
  }

  private grow(): void {
    const size = 2 * this.table.length;
    this.table = new Int32Array(size).fill(-1);
    this.mask = size - 1;
    const A = this.a.a, B = this.b.a;
    for (let s = 0; s < this.a.n; s++) {
      let h = PairSlots.hash(A[s], B[s]) & this.mask;
      while (this.table[h] >= 0) h = (h + 1) & this.mask;
      this.table[h] = s;
    }
  }
}
