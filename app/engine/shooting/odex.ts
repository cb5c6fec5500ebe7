/**
 * The one module that loads the `odex` package (Hairer and Wanner's ODEX, a Gragg–Bulirsch–Stoer
 * extrapolation code: Hairer, Nørsett and Wanner, Solving Ordinary Differential Equations I,
 * 2nd ed., 1993, §II.9). odex 2.0.4 ships TypeScript source without declarations, which the strict
 * type check would compile; it is loaded through createRequire and typed here instead
 * (DEVELOPERS.md, Decisions).
 */
import { createRequire } from "node:module";

export type OdexDerivative = (x: number, y: number[]) => number[];
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

const require_ = createRequire(import.meta.url);
const odex = require_("odex") as { Solver: new (n: number) => OdexSolver };

export function createOdexSolver(n: number): OdexSolver {
  return new odex.Solver(n);
}
