/**
 * Test helpers: a hand-written CompiledProblem from plain functions, and a Solution from sampled
 * arrays (linear interpolation between grid points), so that arc detection is tested without the
 * expression compiler or a scheme.
 */
import type { CompiledProblem, PointFunction } from "~/engine/problem/types";
import type { Solution } from "~/engine/schemes/types";
import { interpLinear } from "~/engine/arcs/interp";

/**
 * Point function whose Jacobian structure covers the input columns `cols` (default all); values
 * by central differences (h = 1e-6); Hessian structure given.
 */
export function pointFn(
  nIn: number,
  nOut: number,
  f: (z: Float64Array, out: Float64Array) => void,
  hessPairs: [number, number][] = [],
  cols: number[] = Array.from({ length: nIn }, (_, j) => j),
): PointFunction {
  const jacRows: number[] = [];
  const jacCols: number[] = [];
  for (let i = 0; i < nOut; i++) for (const j of cols) {
    jacRows.push(i);
    jacCols.push(j);
  }
  const zp = new Float64Array(nIn);
  const fp = new Float64Array(nOut);
  const fm = new Float64Array(nOut);
  return {
    nIn,
    nOut,
    eval: f,
    jacRows: Int32Array.from(jacRows),
    jacCols: Int32Array.from(jacCols),
    jac(z, out) {
      cols.forEach((j, c) => {
        zp.set(z);
        const h = 1e-6 * Math.max(1, Math.abs(z[j]));
        zp[j] = z[j] + h;
        f(zp, fp);
        zp[j] = z[j] - h;
        f(zp, fm);
        for (let i = 0; i < nOut; i++) out[i * cols.length + c] = (fp[i] - fm[i]) / (2 * h);
      });
    },
    hessRows: Int32Array.from(hessPairs.map((p) => Math.max(p[0], p[1]))),
    hessCols: Int32Array.from(hessPairs.map((p) => Math.min(p[0], p[1]))),
    hess(_z, _w, out) {
      out.fill(1); // only the structure matters to these tests
    },
  };
}

export interface ToyProblem {
  states: { name: string; lower?: number; upper?: number }[];
  controls: { name: string; lower?: number; upper?: number }[];
  dynamics: (z: Float64Array, out: Float64Array) => void;
  dynamicsHess?: [number, number][];
  running?: (z: Float64Array) => number;
  runningHess?: [number, number][];
  /** Path constraints; `mixed` ones depend on the controls, the others on t and x only. */
  path?: { name: string; lower?: number; upper?: number; mixed?: boolean; c: (z: Float64Array) => number }[];
  sense?: "min" | "max";
  t0?: number;
  tf?: number;
}

export function toyProblem(p: ToyProblem): CompiledProblem {
  const nx = p.states.length;
  const nu = p.controls.length;
  const nIn = 1 + nx + nu;
  const path = p.path ?? [];
  const v = (s: { name: string; lower?: number; upper?: number }) => ({
    name: s.name, unit: "-", lower: s.lower ?? -Infinity, upper: s.upper ?? Infinity, scale: 1,
  });
  const sense = p.sense ?? "min";
  return {
    id: "toy",
    versionHash: "0",
    title: "toy",
    description: "",
    tags: [],
    nx,
    nu,
    states: p.states.map(v),
    controls: p.controls.map(v),
    constants: {},
    horizon: { kind: "fixed", t0: p.t0 ?? 0, tf: p.tf ?? 1 },
    dynamics: pointFn(nIn, nx, p.dynamics, p.dynamicsHess),
    path: pointFn(
      nIn,
      path.length,
      (z, out) => path.forEach((q, m) => (out[m] = q.c(z))),
      [],
      Array.from({ length: path.some((q) => q.mixed) ? nIn : 1 + nx }, (_, j) => j),
    ),
    pathInfo: path.map((q) => ({ name: q.name, lower: q.lower ?? -Infinity, upper: q.upper ?? Infinity })),
    runningCost: p.running ? pointFn(nIn, 1, (z, out) => (out[0] = p.running!(z)), p.runningHess) : null,
    terminalCost: null,
    endpoint: pointFn(2 + 2 * nx, 0, () => {}),
    endpointInfo: [],
    sense,
    objectiveSign: sense === "max" ? -1 : 1,
    guess: { at: () => {}, tf: p.tf ?? 1 },
    reference: {},
    warnings: [],
    symbolic: { pointInputs: [], dynamics: [], path: [], runningCost: null, terminalCost: null, tex: {} },
  };
}

export function sampledSolution(
  t: Float64Array,
  states: Float64Array[],
  controls: Float64Array[],
  costates: Float64Array[] | null = null,
): Solution {
  return {
    scheme: "lgr",
    t,
    states,
    tu: t,
    controls,
    tLambda: costates ? t : null,
    costates,
    pathMultipliers: null,
    t0: t[0],
    tf: t[t.length - 1],
    objective: 0,
    stateAt(tq, out) {
      for (let i = 0; i < states.length; i++) out[i] = interpLinear(t, states[i], tq);
    },
    controlAt(tq, out) {
      for (let j = 0; j < controls.length; j++) out[j] = interpLinear(t, controls[j], tq);
    },
  };
}

/** Legendre–Gauss–Radau-like grid: `intervals` equal intervals with `degree` clustered points each. */
export function clusteredGrid(intervals: number, degree: number, t0 = 0, tf = 1): Float64Array {
  const pts: number[] = [];
  for (let k = 0; k < intervals; k++) {
    for (let i = 0; i < degree; i++) {
      const s = 0.5 * (1 - Math.cos((Math.PI * i) / degree)); // Chebyshev-like clustering
      pts.push(t0 + ((k + s) / intervals) * (tf - t0));
    }
  }
  pts.push(tf);
  return Float64Array.from(pts);
}

/** Deterministic pseudo-random numbers in [−1, 1] (linear congruential, Numerical Recipes constants). */
export function noise(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (1664525 * s + 1013904223) >>> 0;
    return (s / 4294967296) * 2 - 1;
  };
}
