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

export interface SiteSpec {
  fn: PointFunction;
  /** Length fn.nIn. */
  inputs: AffineInput[];
  /** Outputs multiplied by T = tf − t0. */
  timeScaled: boolean;
}

/** Contribution w · T^σ · F_site,comp(z) to a row (row ≥ 0) or to the objective (row = −1). */
export interface SiteTerm {
  site: number;
  comp: number;
  row: number;
  weight: number;
}

export interface LinearEntry {
  row: number;
  var: number;
  coef: number;
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
  sites: SiteSpec[];
  terms: SiteTerm[];
  linear: LinearEntry[];
  t0: number;
  /** Index of the final-time variable, or −1 when the horizon is fixed (then T = fixedSpan). */
  tfVar: number;
  fixedSpan: number;
  variableName?: (i: number) => string;
  constraintName?: (j: number) => string;
}

/** Growable typed arrays for the precomputed contribution lists. */
export class IntList {
  a = new Int32Array(64);
  n = 0;
  push(v: number): void {
    if (this.n === this.a.length) {
      const b = new Int32Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = v;
  }
  done(): Int32Array {
    return this.a.slice(0, this.n);
  }
}
export class NumList {
  a = new Float64Array(64);
  n = 0;
  push(v: number): void {
    if (this.n === this.a.length) {
      const b = new Float64Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = v;
  }
  done(): Float64Array {
    return this.a.slice(0, this.n);
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
