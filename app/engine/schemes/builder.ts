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
import { Assembly, type AffineInput, type LinearEntry, type SiteSpec, type SiteTerm } from "./assembly";

export interface PointRef {
  /** Normalised time τ ∈ [0, 1]. */
  tau: number;
  inputs: AffineInput[];
  /** Lazily created dynamics site. */
  dynSite: number;
}

export type Component = { start: number } | { combo: Array<{ start: number; coef: number }> };

export class TranscriptionBuilder {
  readonly problem: CompiledProblem;
  readonly nx: number;
  readonly nu: number;
  readonly t0: number;
  readonly tfVar: number;
  readonly fixedSpan: number;
  /** Guess of T (used to place the initial guess). */
  readonly spanGuess: number;

  private xL: number[] = [];
  private xU: number[] = [];
  private dScale: number[] = [];
  private x0: number[] = [];
  private varNames: string[] = [];
  private gL: number[] = [];
  private gU: number[] = [];
  private rowScale: number[] = [];
  private rowNames: string[] = [];
  private sites: SiteSpec[] = [];
  private terms: SiteTerm[] = [];
  private linear: LinearEntry[] = [];
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
    this.xL.push(lower);
    this.xU.push(upper);
    this.dScale.push(scale > 0 && Number.isFinite(scale) ? scale : 1);
    let g = guess;
    if (!Number.isFinite(g)) g = 0;
    if (g < lower) g = lower;
    if (g > upper) g = upper;
    this.x0.push(g);
    this.varNames.push(name);
    return this.xL.length - 1;
  }

  get nVar(): number {
    return this.xL.length;
  }

  /** nx consecutive state variables at τ, bounds and guess from the problem; returns the first index. */
  addStates(tau: number, label: string): number {
    this.problem.guess.at(tau, this.guessBuf);
    const first = this.nVar;
    this.problem.states.forEach((s, i) => this.addVar(`${s.name} ${label}`, s.lower, s.upper, s.scale, this.guessBuf[i]));
    return first;
  }

  /** nu consecutive control variables at τ; returns the first index (or -1 when nu = 0). */
  addControls(tau: number, label: string): number {
    this.problem.guess.at(tau, this.guessBuf);
    const first = this.nVar;
    this.problem.controls.forEach((c, i) => this.addVar(`${c.name} ${label}`, c.lower, c.upper, c.scale, this.guessBuf[this.nx + i]));
    return this.nu > 0 ? first : -1;
  }

  /** Affine time input t = t0 + τ T. */
  timeInput(tau: number): AffineInput {
    if (this.tfVar >= 0) return { c: this.t0 * (1 - tau), vars: [this.tfVar], coefs: [tau] };
    return { c: this.t0 + tau * this.fixedSpan, vars: [], coefs: [] };
  }

  private component(c: Component, i: number): AffineInput {
    if ("start" in c) return { c: 0, vars: [c.start + i], coefs: [1] };
    return { c: 0, vars: c.combo.map((b) => b.start + i), coefs: c.combo.map((b) => b.coef) };
  }

  /** A point z = [t(τ), x, u] with states and controls given as variable blocks (or combinations). */
  point(tau: number, x: Component, u: Component | null): PointRef {
    const inputs: AffineInput[] = [this.timeInput(tau)];
    for (let i = 0; i < this.nx; i++) inputs.push(this.component(x, i));
    for (let i = 0; i < this.nu; i++) inputs.push(u ? this.component(u, i) : { c: 0, vars: [], coefs: [] });
    return { tau, inputs, dynSite: -1 };
  }

  private dynSite(p: PointRef): number {
    if (p.dynSite < 0) {
      this.sites.push({ fn: this.problem.dynamics, inputs: p.inputs, timeScaled: true });
      p.dynSite = this.sites.length - 1;
    }
    return p.dynSite;
  }

  /**
   * nx defect rows: Σ_b coef_b X[start_b + i] + T Σ_k w_k f_i(z_k) = 0. Returns the first row.
   */
  addDefect(linear: Array<{ start: number; coef: number }>, dyn: Array<{ point: PointRef; weight: number } | { site: number; weight: number }>, label: string): number {
    const r0 = this.gL.length;
    const siteIds = dyn.map((d) => ("site" in d ? d.site : this.dynSite(d.point)));
    for (let i = 0; i < this.nx; i++) {
      const r = this.gL.length;
      this.gL.push(0);
      this.gU.push(0);
      this.rowScale.push(this.problem.states[i].scale > 0 ? this.problem.states[i].scale : 1);
      this.rowNames.push(`defect ${this.problem.states[i].name} ${label}`);
      for (const b of linear) this.linear.push({ row: r, var: b.start + i, coef: b.coef });
      dyn.forEach((d, k) => {
        if (d.weight !== 0) this.terms.push({ site: siteIds[k], comp: i, row: r, weight: d.weight });
      });
    }
    return r0;
  }

  /**
   * A site of any point function with its own affine inputs (e.g. the compressed Hermite–Simpson
   * midpoint, hs-midpoint.ts); use its index in addDefect terms. Returns the site index.
   */
  addSite(fn: PointFunction, inputs: AffineInput[], timeScaled: boolean): number {
    if (inputs.length !== fn.nIn) throw new Error(`site needs ${fn.nIn} inputs, got ${inputs.length}`);
    this.sites.push({ fn, inputs, timeScaled });
    return this.sites.length - 1;
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
    this.sites.push(custom ? { fn: custom.fn, inputs: custom.inputs, timeScaled: false } : { fn: this.problem.path, inputs: p.inputs, timeScaled: false });
    const s = this.sites.length - 1;
    const r0 = this.gL.length;
    for (let i = 0; i < np; i++) {
      const info = this.problem.pathInfo[i];
      this.terms.push({ site: s, comp: 0 + i, row: this.gL.length, weight: 1 });
      this.gL.push(info.lower);
      this.gU.push(info.upper);
      this.rowScale.push(0);
      this.rowNames.push(`path ${info.name} ${label}`);
    }
    this.pathRows.push(r0);
    return r0;
  }

  /** Running-cost quadrature node: adds objectiveSign · T · w · L(z) to the objective. */
  addRunningCost(p: PointRef, weight: number, custom?: { fn: PointFunction; inputs: AffineInput[] }): void {
    const L = this.problem.runningCost;
    if (!L || weight === 0) return;
    this.sites.push(custom ? { fn: custom.fn, inputs: custom.inputs, timeScaled: true } : { fn: L, inputs: p.inputs, timeScaled: true });
    this.terms.push({ site: this.sites.length - 1, comp: 0, row: -1, weight: this.problem.objectiveSign * weight });
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
      this.sites.push({ fn: this.problem.endpoint, inputs, timeScaled: false });
      const s = this.sites.length - 1;
      this.endpointRow0 = this.gL.length;
      for (let i = 0; i < nb; i++) {
        const info = this.problem.endpointInfo[i];
        this.terms.push({ site: s, comp: i, row: this.gL.length, weight: 1 });
        this.gL.push(info.lower);
        this.gU.push(info.upper);
        this.rowScale.push(0);
        this.rowNames.push(`endpoint ${info.name}`);
      }
    }
    const phi = this.problem.terminalCost;
    if (phi) {
      this.sites.push({ fn: phi, inputs, timeScaled: false });
      this.terms.push({ site: this.sites.length - 1, comp: 0, row: -1, weight: this.problem.objectiveSign });
    }
  }

  /**
   * The Assembly of everything added. Afterwards the builder lets go of its sites, terms and linear
   * entries (the Assembly keeps them flattened into its own tables): a scheme's recover() closes
   * over the builder, and those lists are most of a transcription's small objects.
   */
  build(): Assembly {
    const names = this.varNames;
    const rows = this.rowNames;
    const asm = new Assembly({
      n: this.nVar,
      xL: Float64Array.from(this.xL),
      xU: Float64Array.from(this.xU),
      varScale: Float64Array.from(this.dScale),
      x0: Float64Array.from(this.x0),
      m: this.gL.length,
      gL: Float64Array.from(this.gL),
      gU: Float64Array.from(this.gU),
      rowScale: Float64Array.from(this.rowScale),
      sites: this.sites,
      terms: this.terms,
      linear: this.linear,
      t0: this.t0,
      tfVar: this.tfVar,
      fixedSpan: this.fixedSpan,
      variableName: (i) => names[i] ?? `x[${i}]`,
      constraintName: (j) => rows[j] ?? `g[${j}]`,
    });
    this.sites = [];
    this.terms = [];
    this.linear = [];
    return asm;
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
