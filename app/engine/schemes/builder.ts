/**
 * Problem-aware pieces every transcription shares, on top of the generic sparse assembly
 * (assembly.ts): variable layout with bounds, scale hints and the initial guess; time scaling for a
 * free final time; points z = [t, x, u]; dynamics defects; path constraints; the running-cost
 * quadrature; endpoint rows; and the objective φ(e) + ∫L with the problem's sense.
 *
 * Time scaling: every scheme works on τ ∈ [0, 1] with t = t0 + τ T, T = tf − t0. When the final
 * time is free, tf is one NLP variable (bounds from the horizon); then t at a point is the affine
 * input t0 (1 − τ) + τ X_tf and dx/dτ = T f(t, x, u) (Betts, Practical Methods for Optimal Control
 * and Estimation Using Nonlinear Programming, 2nd ed., SIAM 2010, §4.8 on free final time).
 *
 * A defect block is nx rows, row i:  Σ_b coef_b X[start_b + i] + T Σ_k w_k f_i(z_k) = 0,
 * each row divided by the scale of state i.
 */
import type { CompiledProblem, PointFunction } from "../problem/types";
import type { Mesh } from "./types";
import { Assembly, AssemblyTables, type AffineInput } from "./assembly";
import { NumList } from "./assembly-spec";

export type Component = { start: number } | { combo: Array<{ start: number; coef: number }> };

/**
 * A point z = [t(τ), x, u] of a transcription. It keeps its blocks, not its affine inputs: the
 * builder writes those straight into its flat tables when a site uses the point, and spells them
 * as objects (inputs) only for a scheme that splices them into a site of its own.
 */
export class PointRef {
  /** Lazily created dynamics site. */
  dynSite = -1;
  /** First variable of the state block, or −1 when the states are a combination (xCombo). */
  readonly xStart: number;
  readonly xCombo: Array<{ start: number; coef: number }> | null;
  /** First variable of the control block; −1 for a combination (uCombo) or no controls (hasU false). */
  readonly uStart: number;
  readonly uCombo: Array<{ start: number; coef: number }> | null;
  readonly hasU: boolean;
  constructor(
    private readonly b: TranscriptionBuilder,
    /** Normalised time τ ∈ [0, 1]. */
    readonly tau: number,
    x: Component,
    u: Component | null,
  ) {
    // the block starts as numbers: a point outlives many young-generation collections, and the
    // { start } objects a scheme passes would otherwise live as long as it
    this.xStart = "start" in x ? x.start : -1;
    this.xCombo = "start" in x ? null : x.combo;
    this.hasU = u !== null;
    this.uStart = u !== null && "start" in u ? u.start : -1;
    this.uCombo = u !== null && !("start" in u) ? u.combo : null;
  }

  /** The affine inputs [t, x, u] as objects. */
  get inputs(): AffineInput[] {
    const { nx, nu } = this.b;
    const out: AffineInput[] = [this.b.timeInput(this.tau)];
    for (let i = 0; i < nx; i++) out.push(componentInput(this.xStart, this.xCombo, i));
    for (let i = 0; i < nu; i++) out.push(this.hasU ? componentInput(this.uStart, this.uCombo, i) : { c: 0, vars: [], coefs: [] });
    return out;
  }
}

function componentInput(start: number, combo: Array<{ start: number; coef: number }> | null, i: number): AffineInput {
  if (combo === null) return { c: 0, vars: [start + i], coefs: [1] };
  return { c: 0, vars: combo.map((b) => b.start + i), coefs: combo.map((b) => b.coef) };
}

export class TranscriptionBuilder {
  readonly problem: CompiledProblem;
  readonly nx: number;
  readonly nu: number;
  readonly t0: number;
  readonly tfVar: number;
  readonly fixedSpan: number;
  /** Guess of T (used to place the initial guess). */
  readonly spanGuess: number;

  private xL = new NumList();
  private xU = new NumList();
  private dScale = new NumList();
  private x0 = new NumList();
  /** Variable and row names as runs (NameRuns, below), spelled on demand. */
  private varRuns = new NameRuns();
  private gL = new NumList();
  private gU = new NumList();
  private rowScale = new NumList();
  private rowRuns = new NameRuns();
  /** Sites, terms and linear entries; handed to the Assembly by build(). */
  private tables = new AssemblyTables();
  private guessBuf: Float64Array;
  /** Rows of the path constraints per point (first row), in order of addPath calls. */
  readonly pathRows: number[] = [];
  endpointRow0 = -1;

  constructor(problem: CompiledProblem) {
    this.problem = problem;
    this.nx = problem.nx;
    this.nu = problem.nu;
    const h = problem.horizon;
    this.t0 = h.t0;
    this.guessBuf = new Float64Array(problem.nx + problem.nu);
    if (h.kind === "fixed") {
      this.tfVar = -1;
      this.fixedSpan = h.tf - h.t0;
      this.spanGuess = this.fixedSpan;
      if (!(this.fixedSpan > 0)) throw new Error(`problem ${problem.id}: final time ${h.tf} must exceed initial time ${h.t0}`);
    } else {
      this.fixedSpan = NaN;
      const g = Math.min(h.upper, Math.max(h.lower, problem.guess.tf ?? h.guess));
      this.tfVar = this.addVar("tf", h.lower, h.upper, Math.max(Math.abs(g), 1e-8), g);
      this.spanGuess = g - h.t0;
    }
  }

  addVar(name: string, lower: number, upper: number, scale: number, guess: number): number {
    this.varRuns.open(this.nVar, RUN_AS_IS, name);
    return this.pushVar(lower, upper, scale, guess);
  }

  private pushVar(lower: number, upper: number, scale: number, guess: number): number {
    this.xL.push(lower);
    this.xU.push(upper);
    this.dScale.push(scale > 0 && Number.isFinite(scale) ? scale : 1);
    let g = guess;
    if (!Number.isFinite(g)) g = 0;
    if (g < lower) g = lower;
    if (g > upper) g = upper;
    this.x0.push(g);
    return this.xL.n - 1;
  }

  /** Variables added so far (0 again after build(), which hands the lists to the Assembly). */
  get nVar(): number {
    return this.xL.n;
  }

  private get nRow(): number {
    return this.gL.n;
  }

  private addRow(lower: number, upper: number, scale: number): number {
    this.gL.push(lower);
    this.gU.push(upper);
    this.rowScale.push(scale);
    return this.gL.n - 1;
  }

  /** nx consecutive state variables at τ, bounds and guess from the problem; returns the first index. */
  addStates(tau: number, label: string): number {
    this.problem.guess.at(tau, this.guessBuf);
    const first = this.nVar;
    this.varRuns.open(first, RUN_STATES, label);
    this.problem.states.forEach((s, i) => this.pushVar(s.lower, s.upper, s.scale, this.guessBuf[i]));
    return first;
  }

  /** nu consecutive control variables at τ; returns the first index (or -1 when nu = 0). */
  addControls(tau: number, label: string): number {
    this.problem.guess.at(tau, this.guessBuf);
    const first = this.nVar;
    if (this.nu > 0) this.varRuns.open(first, RUN_CONTROLS, label);
    this.problem.controls.forEach((c, i) => this.pushVar(c.lower, c.upper, c.scale, this.guessBuf[this.nx + i]));
    return this.nu > 0 ? first : -1;
  }

  /** Affine time input t = t0 + τ T. */
  timeInput(tau: number): AffineInput {
    if (this.tfVar >= 0) return { c: this.t0 * (1 - tau), vars: [this.tfVar], coefs: [tau] };
    return { c: this.t0 + tau * this.fixedSpan, vars: [], coefs: [] };
  }

  /** A point z = [t(τ), x, u] with states and controls given as variable blocks (or combinations). */
  point(tau: number, x: Component, u: Component | null): PointRef {
    return new PointRef(this, tau, x, u);
  }

  /** Writes one component of a block (first variable start, or a combination) as the next input of the open site. */
  private componentIn(start: number, combo: Array<{ start: number; coef: number }> | null, i: number): void {
    const T = this.tables;
    T.input(0);
    if (combo === null) T.inputVar(start + i, 1);
    else for (const b of combo) T.inputVar(b.start + i, b.coef);
  }

  /** A site of fn at point p (inputs [t, x, u] written without intermediate objects). */
  private pointSite(fn: PointFunction, p: PointRef, timeScaled: boolean): number {
    const T = this.tables;
    const s = T.beginSite(fn, timeScaled);
    if (this.tfVar >= 0) {
      T.input(this.t0 * (1 - p.tau));
      T.inputVar(this.tfVar, p.tau);
    } else T.input(this.t0 + p.tau * this.fixedSpan);
    for (let i = 0; i < this.nx; i++) this.componentIn(p.xStart, p.xCombo, i);
    for (let i = 0; i < this.nu; i++) {
      if (p.hasU) this.componentIn(p.uStart, p.uCombo, i);
      else T.input(0);
    }
    T.endSite();
    return s;
  }

  private dynSite(p: PointRef): number {
    if (p.dynSite < 0) p.dynSite = this.pointSite(this.problem.dynamics, p, true);
    return p.dynSite;
  }

  /**
   * nx defect rows: Σ_b coef_b X[start_b + i] + T Σ_k w_k f_i(z_k) = 0. Returns the first row.
   */
  addDefect(linear: Array<{ start: number; coef: number }>, dyn: Array<{ point: PointRef; weight: number } | { site: number; weight: number }>, label: string): number {
    const r0 = this.nRow;
    const siteIds = dyn.map((d) => ("site" in d ? d.site : this.dynSite(d.point)));
    const T = this.tables;
    this.rowRuns.open(r0, RUN_DEFECTS, label);
    for (let i = 0; i < this.nx; i++) {
      const st = this.problem.states[i];
      const r = this.addRow(0, 0, st.scale > 0 ? st.scale : 1);
      for (const b of linear) T.linear(r, b.start + i, b.coef);
      for (let k = 0; k < dyn.length; k++) if (dyn[k].weight !== 0) T.term(siteIds[k], i, r, dyn[k].weight);
    }
    return r0;
  }

  /**
   * A site of any point function with its own affine inputs (e.g. the compressed Hermite–Simpson
   * midpoint, hs-midpoint.ts); use its index in addDefect terms. Returns the site index.
   */
  addSite(fn: PointFunction, inputs: AffineInput[], timeScaled: boolean): number {
    if (inputs.length !== fn.nIn) throw new Error(`site needs ${fn.nIn} inputs, got ${inputs.length}`);
    return this.tables.addSite(fn, inputs, timeScaled);
  }

  /** Affine input of T = tf − t0. */
  spanInput(): AffineInput {
    if (this.tfVar >= 0) return { c: -this.t0, vars: [this.tfVar], coefs: [1] };
    return { c: this.fixedSpan, vars: [], coefs: [] };
  }

  /** Path constraints c(z) at a point (rows with the problem's bounds); returns the first row or -1. */
  addPath(p: PointRef, label: string, custom?: { fn: PointFunction; inputs: AffineInput[] }): number {
    const np = this.problem.pathInfo.length;
    if (np === 0) return -1;
    const s = custom ? this.tables.addSite(custom.fn, custom.inputs, false) : this.pointSite(this.problem.path, p, false);
    const r0 = this.nRow;
    this.rowRuns.open(r0, RUN_PATH, label);
    for (let i = 0; i < np; i++) {
      const info = this.problem.pathInfo[i];
      this.tables.term(s, i, this.addRow(info.lower, info.upper, 0), 1);
    }
    this.pathRows.push(r0);
    return r0;
  }

  /** Running-cost quadrature node: adds objectiveSign · T · w · L(z) to the objective. */
  addRunningCost(p: PointRef, weight: number, custom?: { fn: PointFunction; inputs: AffineInput[] }): void {
    const L = this.problem.runningCost;
    if (!L || weight === 0) return;
    const s = custom ? this.tables.addSite(custom.fn, custom.inputs, true) : this.pointSite(L, p, true);
    this.tables.term(s, 0, -1, this.problem.objectiveSign * weight);
  }

  /** Endpoint constraints and terminal cost with e = [t0, x(t0), tf, x(tf)] from two state blocks. */
  setEndpoints(x0Start: number, xfStart: number): void {
    const nx = this.nx;
    const inputs: AffineInput[] = [{ c: this.t0, vars: [], coefs: [] }];
    for (let i = 0; i < nx; i++) inputs.push({ c: 0, vars: [x0Start + i], coefs: [1] });
    inputs.push(this.tfVar >= 0 ? { c: 0, vars: [this.tfVar], coefs: [1] } : { c: this.t0 + this.fixedSpan, vars: [], coefs: [] });
    for (let i = 0; i < nx; i++) inputs.push({ c: 0, vars: [xfStart + i], coefs: [1] });
    const nb = this.problem.endpointInfo.length;
    if (nb > 0) {
      const s = this.tables.addSite(this.problem.endpoint, inputs, false);
      this.endpointRow0 = this.nRow;
      this.rowRuns.open(this.endpointRow0, RUN_ENDPOINT, "");
      for (let i = 0; i < nb; i++) {
        const info = this.problem.endpointInfo[i];
        this.tables.term(s, i, this.addRow(info.lower, info.upper, 0), 1);
      }
    }
    const phi = this.problem.terminalCost;
    if (phi) this.tables.term(this.tables.addSite(phi, inputs, false), 0, -1, this.problem.objectiveSign);
  }

  /**
   * The Assembly of everything added. Afterwards the builder lets go of its tables of sites, terms
   * and linear entries (the Assembly reads them into its own arrays): a scheme's recover() closes
   * over the builder.
   */
  build(): Assembly {
    const vars = this.varRuns, rows = this.rowRuns;
    const p = this.problem;
    const n = this.nVar, m = this.nRow;
    const tables = this.tables;
    this.tables = new AssemblyTables();
    const asm = new Assembly({
      n,
      xL: this.xL.done(),
      xU: this.xU.done(),
      varScale: this.dScale.done(),
      x0: this.x0.done(),
      m,
      gL: this.gL.done(),
      gU: this.gU.done(),
      rowScale: this.rowScale.done(),
      tables,
      t0: this.t0,
      tfVar: this.tfVar,
      fixedSpan: this.fixedSpan,
      variableName: (i) => (i >= 0 && i < n ? vars.spell(i, (kind, k, label) => (kind === RUN_STATES ? `${p.states[k].name} ${label}` : kind === RUN_CONTROLS ? `${p.controls[k].name} ${label}` : label)) : null) ?? `x[${i}]`,
      constraintName: (j) =>
        (j >= 0 && j < m
          ? rows.spell(j, (kind, k, label) =>
              kind === RUN_DEFECTS ? `defect ${p.states[k].name} ${label}` : kind === RUN_PATH ? `path ${p.pathInfo[k].name} ${label}` : `endpoint ${p.endpointInfo[k].name}`,
            )
          : null) ?? `g[${j}]`,
    });
    return asm;
  }
}

const RUN_AS_IS = 0, RUN_STATES = 1, RUN_CONTROLS = 2, RUN_DEFECTS = 3, RUN_PATH = 4, RUN_ENDPOINT = 5;

/**
 * Names of variables or rows as runs (first index, kind, label), spelled on demand: a name is
 * wanted only in a message, and one string per variable and row was most of what a large
 * transcription kept on the JavaScript heap.
 */
class NameRuns {
  private first: number[] = [];
  private kind: number[] = [];
  private label: string[] = [];
  open(first: number, kind: number, label: string): void {
    this.first.push(first);
    this.kind.push(kind);
    this.label.push(label);
  }
  /** The name of entry i through spell(kind, position in its run, label); null before the first run. */
  spell(i: number, spell: (kind: number, k: number, label: string) => string): string | null {
    const f = this.first;
    let lo = 0, hi = f.length - 1;
    if (hi < 0 || i < f[0]) return null;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (f[mid] <= i) lo = mid;
      else hi = mid - 1;
    }
    return this.kind[lo] === RUN_AS_IS ? this.label[lo] : spell(this.kind[lo], i - f[lo], this.label[lo]);
  }
}

/**
 * Mesh breakpoints 0 = τ_0 < … < τ_N = 1: uniform, or the mesh's own (validated).
 * Throws a clear error for a bad mesh (the caller reports it).
 */
export function meshBreakpoints(mesh: Mesh): Float64Array {
  const N = mesh.intervals;
  if (!Number.isInteger(N) || N < 1) throw new Error(`mesh.intervals must be a positive integer (got ${N})`);
  if (mesh.breakpoints) {
    const b = mesh.breakpoints;
    if (b.length !== N + 1) throw new Error(`mesh.breakpoints must have intervals + 1 = ${N + 1} entries (got ${b.length})`);
    if (Math.abs(b[0]) > 1e-14 || Math.abs(b[N] - 1) > 1e-14) throw new Error("mesh.breakpoints must start at 0 and end at 1");
    for (let k = 0; k < N; k++)
      if (!(b[k + 1] > b[k])) throw new Error(`mesh.breakpoints must be strictly increasing (entry ${k + 1})`);
    const out = Float64Array.from(b);
    out[0] = 0;
    out[N] = 1;
    return out;
  }
  const out = new Float64Array(N + 1);
  for (let k = 0; k <= N; k++) out[k] = k / N;
  return out;
}
