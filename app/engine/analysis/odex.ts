/**
 * The one module that loads the `odex` package (Hairer's ODEX extrapolation integrator, JavaScript
 * port). odex 2.0.4 ships TypeScript sources without declarations, which `tsc --strict` would
 * check, so it is loaded through createRequire and typed here (/work/shared/stack.md, pitfall 4).
 *
 * Method: Gragg–Bulirsch–Stoer extrapolation with step-size and order control (Hairer, Nørsett and
 * Wanner, Solving Ordinary Differential Equations I, 2nd ed., Springer 1993, §II.9).
 */
import { createRequire } from "node:module";

export type OdexDerivative = (x: number, y: number[]) => number[];
/** Called after every accepted step; return false to stop early. */
export type OdexOutput = (nr: number, xOld: number, x: number, y: number[]) => boolean | void;

export interface OdexResult {
  y: number[];
  /** 0 converged, 1 maximum steps exceeded, 2 early return. */
  outcome: number;
  nStep: number;
  xEnd: number;
  nAccept: number;
  nReject: number;
  nEval: number;
}

export interface OdexSolver {
  n: number;
  maxSteps: number;
  initialStepSize: number;
  maxStepSize: number;
  relativeTolerance: number | number[];
  absoluteTolerance: number | number[];
  denseOutput: boolean;
  solve(f: OdexDerivative, x: number, y0: number[], xEnd: number, solOut?: OdexOutput): OdexResult;
}

interface OdexModule {
  Solver: new (n: number) => OdexSolver;
  /** Converged = 0, MaxStepsExceeded = 1, EarlyReturn = 2. */
  Outcome: Record<string, number>;
}

const require = createRequire(import.meta.url);
const odex = require("odex") as OdexModule;

/** A fresh ODEX solver for n components (the shooting refinement sets its own options and step callback). */
export function createOdexSolver(n: number): OdexSolver {
  return new odex.Solver(n);
}

export interface IntegrateOptions {
  rtol: number;
  /** Absolute tolerance per component. */
  atol: number[];
  maxSteps?: number;
}

export interface IntegrateResult {
  y: number[];
  ok: boolean;
  evaluations: number;
}

/** y(t1) for ẏ = f(t, y), y(t0) = y0, by ODEX. ok is false when the step limit was hit or f failed. */
export function integrate(f: (t: number, y: number[]) => number[], t0: number, y0: number[], t1: number, opts: IntegrateOptions): IntegrateResult {
  if (t1 === t0) return { y: y0.slice(), ok: true, evaluations: 0 };
  const s = new odex.Solver(y0.length);
  s.relativeTolerance = opts.rtol;
  s.absoluteTolerance = opts.atol;
  s.maxSteps = opts.maxSteps ?? 20000;
  s.initialStepSize = Math.abs(t1 - t0) * 1e-3;
  try {
    const r = s.solve(f, t0, y0, t1);
    const finite = r.y.every((v) => Number.isFinite(v));
    return { y: r.y, ok: r.outcome === odex.Outcome.Converged && finite, evaluations: r.nEval };
  } catch {
    return { y: y0.map(() => NaN), ok: false, evaluations: 0 };
  }
}
