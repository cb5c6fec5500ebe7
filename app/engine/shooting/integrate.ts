/**
 * Integration of one shooting segment y' = F(t, y) from t_a to t_b with ODEX (odex.ts), relative
 * and absolute tolerance tol (default 1e-12). A right-hand side that returns a non-finite value
 * (control law failed, state left the domain) ends the segment as a failure, which the Newton line
 * search treats as an infinite residual.
 */
import { createOdexSolver } from "./odex";

export interface SegmentResult {
  ok: boolean;
  /** y(t_b), length n (NaN when !ok). */
  y: Float64Array;
  /** Right-hand-side evaluations. */
  nEval: number;
  message?: string;
}

export type Rhs = (t: number, y: Float64Array, dy: Float64Array) => boolean;

export interface IntegrateOptions {
  tol?: number;
  maxSteps?: number;
  /** Called at t_a and after every accepted step with (t, y). */
  record?: (t: number, y: Float64Array) => void;
}

export function integrateSegment(rhs: Rhs, ta: number, ya: Float64Array, tb: number, options: IntegrateOptions = {}): SegmentResult {
  const n = ya.length;
  const fail = (message: string): SegmentResult => ({ ok: false, y: new Float64Array(n).fill(NaN), nEval: 0, message });
  if (!Number.isFinite(ta) || !Number.isFinite(tb) || !ya.every(Number.isFinite)) return fail("non-finite segment data");
  if (ta === tb) {
    options.record?.(ta, ya);
    return { ok: true, y: Float64Array.from(ya), nEval: 0 };
  }
  const tol = options.tol ?? 1e-12;
  const solver = createOdexSolver(n);
  solver.relativeTolerance = tol;
  solver.absoluteTolerance = tol;
  solver.maxSteps = options.maxSteps ?? 20000;
  solver.initialStepSize = Math.abs(tb - ta) * 1e-3;
  const yb = new Float64Array(n);
  const dyb = new Float64Array(n);
  let bad = false;
  let nEval = 0;
  const f = (t: number, y: number[]): number[] => {
    nEval++;
    if (bad) return Array<number>(n).fill(0);
    yb.set(y);
    if (!rhs(t, yb, dyb) || !dyb.every(Number.isFinite)) {
      bad = true;
      return Array<number>(n).fill(0);
    }
    return Array.from(dyb);
  };
  const rec = options.record;
  const out = rec
    ? (_nr: number, _xOld: number, x: number, y: number[]) => {
        if (bad) return false;
        rec(x, Float64Array.from(y));
      }
    : undefined;
  const r = solver.solve(f, ta, Array.from(ya), tb, out);
  if (bad) return fail("right-hand side failed");
  if (r.outcome !== 0) return fail(`ODEX stopped with outcome ${r.outcome} at t = ${r.xEnd}`);
  const y = Float64Array.from(r.y);
  if (!y.every(Number.isFinite)) return fail("non-finite end state");
  return { ok: true, y, nEval };
}
