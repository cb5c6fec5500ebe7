/**
 * What the expression compiler hands to every scheme, the analysis and the shooting refinement.
 * Produced by app/engine/problem/compile.ts from a validated problem file
 * (format: DEVELOPERS.md, "Problem files").
 *
 * All functions are compiled from validated mathjs trees (never from user text) and work on
 * caller-owned Float64Array buffers without allocating.
 */
import type { MathNode } from "mathjs";

/**
 * A vector function of a fixed input layout with exact sparse first and second derivatives.
 * Input z has length nIn; outputs have length nOut.
 */
export interface PointFunction {
  nIn: number;
  nOut: number;
  eval(z: Float64Array, out: Float64Array): void;
  /** Structural nonzeros of ∂out_i/∂z_j as triplets (jacRows[k] = i, jacCols[k] = j). */
  jacRows: Int32Array;
  jacCols: Int32Array;
  /** Values in the order of (jacRows, jacCols). */
  jac(z: Float64Array, out: Float64Array): void;
  /** Structural nonzeros of Σ_i w_i ∇²out_i, LOWER triangle (hessRows[k] ≥ hessCols[k]). */
  hessRows: Int32Array;
  hessCols: Int32Array;
  /** Values of Σ_i w_i ∇²out_i in the order of (hessRows, hessCols); w has length nOut. */
  hess(z: Float64Array, w: Float64Array, out: Float64Array): void;
  /**
   * Optional variants on whole arrays: inputs at z[zo …], outputs at out[oo …] (a transcription
   * evaluates thousands of sites this way without a view per site). The compiled functions have
   * them; a function without them is evaluated through copies.
   */
  evalAt?(z: Float64Array, zo: number, out: Float64Array, oo: number): void;
  jacAt?(z: Float64Array, zo: number, out: Float64Array, oo: number): void;
  hessAt?(z: Float64Array, zo: number, w: Float64Array, out: Float64Array, oo: number): void;
}

export interface VariableInfo {
  name: string;
  unit: string;
  /** -Infinity / Infinity where a side is absent. */
  lower: number;
  upper: number;
  /** Typical magnitude (scale hint), default 1. */
  scale: number;
}

export interface ConstraintInfo {
  name: string;
  lower: number;
  upper: number;
}

export type Provenance =
  | { kind: "analytic"; citation?: string; detail?: string }
  | { kind: "published"; citation: string; detail?: string }
  | { kind: "fine-mesh"; detail: string }
  | { kind: "shooting"; detail: string; residual?: number };

export interface ReferenceValue {
  value: number;
  tolerance: number;
  provenance: Provenance;
}

export interface ReferenceTrajectory {
  /** Time grid and one column per named series (states, controls, optionally costates "lambda_<state>"). */
  t: Float64Array;
  columns: Record<string, Float64Array>;
  provenance: Provenance;
  /** Absolute tolerance of the trajectory values (max over the grid), when the file gives one. */
  tolerance?: number;
}

export interface ProblemReference {
  objective?: ReferenceValue;
  finalTime?: ReferenceValue;
  switchingTimes?: { values: number[]; tolerance: number; provenance: Provenance };
  /** Expected arc sequence, e.g. ["upper", "singular", "lower"] (issue: arc structure). */
  arcs?: string[];
  trajectory?: ReferenceTrajectory;
}

export type Horizon =
  | { kind: "fixed"; t0: number; tf: number }
  | { kind: "free"; t0: number; lower: number; upper: number; guess: number };

export interface InitialGuess {
  /** Guess values at normalised time τ ∈ [0, 1]: writes nx states then nu controls. */
  at(tau: number, out: Float64Array): void;
  /** Final-time guess (== tf when fixed). */
  tf: number;
}

/**
 * Input layouts:
 *   point functions (dynamics, path, running cost):   z = [t, x_1..x_nx, u_1..u_nu]   (nIn = 1+nx+nu)
 *   endpoint functions (events, terminal cost):        e = [t0, x(t0)_1..nx, tf, x(tf)_1..nx] (nIn = 2+2nx)
 */
export interface CompiledProblem {
  id: string;
  /** sha256 of the problem file bytes (and its reference/guess files): the problem version. */
  versionHash: string;
  title: string;
  description: string;
  tags: string[];
  nx: number;
  nu: number;
  states: VariableInfo[];
  controls: VariableInfo[];
  constants: Record<string, number>;
  horizon: Horizon;
  /** ẋ = f(t, x, u): nOut = nx. */
  dynamics: PointFunction;
  /** Path constraints c(t, x, u) with bounds; nOut = path.length (may be 0). */
  path: PointFunction;
  pathInfo: ConstraintInfo[];
  /** Running (Lagrange) cost L(t, x, u), nOut = 1, or null. */
  runningCost: PointFunction | null;
  /** Terminal (Mayer) cost φ(e), nOut = 1, or null. */
  terminalCost: PointFunction | null;
  /**
   * Endpoint constraints b(e) with bounds: fixed / ranged initial and final values are rows here
   * too (e.g. x(t0)_h with lower = upper = 1000), followed by the general endpoint constraints.
   */
  endpoint: PointFunction;
  endpointInfo: ConstraintInfo[];
  /**
   * "min" or "max". The compiled costs are as written in the file; a scheme minimises
   * objectiveSign · (φ + ∫L) with objectiveSign = sense === "max" ? -1 : 1 and reports φ + ∫L.
   */
  sense: "min" | "max";
  objectiveSign: 1 | -1;
  guess: InitialGuess;
  reference: ProblemReference;
  /** Warnings from the compiler (non-smooth functions used, unused constants...). */
  warnings: string[];
  /** Symbolic access for the shooting refinement and TeX rendering (intermediates substituted). */
  symbolic: {
    /** Names of the point-function inputs in order: ["t", ...states, ...controls]. */
    pointInputs: string[];
    dynamics: MathNode[];
    path: MathNode[];
    runningCost: MathNode | null;
    terminalCost: MathNode | null;
    /** TeX of every expression, keyed by JSON path ("dynamics.v", "path[0].expr", ...). */
    tex: Record<string, string>;
    /** Names of the endpoint inputs in order: ["t0", "initial(x1)"..., "tf", "final(x1)"...]. */
    endpointInputs?: string[];
    /** Endpoint rows in the order of endpointInfo (initial(x), final(x) rows, then the general ones). */
    endpoint?: MathNode[];
  };
  /** Solver hints from the file ("defaults"), when given. */
  defaults?: { intervals?: number; degree?: number };
}
