/**
 * solveNlp: Arcwatch's primal–dual interior-point filter line-search NLP solver
 * (Wächter and Biegler, Math. Programming 106(1):25–57, 2006). See ipm.ts for the iteration,
 * reformulation.ts for the internal form, options.ts for every option.
 *
 * Every outcome is a result: bad input, NaN/Inf from a callback, a failed factorisation and
 * limits all come back as a status with a message; nothing is thrown.
 */
import type { NlpOptions, NlpProblem, NlpResult, NlpStatus } from "./types";
import { resolveOptions, type ResolvedOptions } from "./options";
import { ModelError } from "./internal";
import { NlpReformulation } from "./reformulation";
import { pushInsideBounds } from "./initial-point";
import { runIpm, type IpmContext, type IpmState } from "./ipm";
import { SymmetricSolver } from "../sparse/index";
import type { SolverFactory } from "./kkt";

export type { NlpOptions, NlpProblem, NlpResult, NlpStatus, IterationRecord } from "./types";
export { OPTION_SPECS } from "./options";

/**
 * Default linear solver: sparse LDLᵀ with the KKT pivot signs (constrained AMD ordering), and a
 * pivot tolerance of 1e-20: Σ = Z/S legitimately reaches 1e-13 and below for variables far from
 * their bounds, and an absolute 1e-13 would call those pivots zero (DEVELOPERS.md, Decisions).
 * With the signs, each matched (variable, constraint) pair is one static 2×2 pivot (`pairs`): a
 * zero row of W (controls entering linearly, free final time) then needs no regularised pivot,
 * the inertia is exact, and the directions are those of the true system without refinement.
 * On the COPS Goddard transcriptions this cut iterations from 34–69 (trapezoidal, N = 100–800,
 * with restorations and stalls) to 19–24 at every N from 50 to 3,200 (DEVELOPERS.md, Decisions).
 */
// KktSystem makes rows and cols for the solver and never changes them: the analysis cache keeps them as they are.
const defaultFactory: SolverFactory = (n, rows, cols, signs) =>
  new SymmetricSolver(n, rows, cols, { pivotTolerance: 1e-20, signs, pairs: signs !== undefined, patternUnchanging: true });

/** Structural checks of the problem; returns a message naming the field and position, or null. */
function validate(p: NlpProblem): { status: NlpStatus; message: string } | null {
  const bad = (message: string) => ({ status: "invalid_model" as NlpStatus, message });
  if (!Number.isInteger(p.n) || p.n < 0) return bad(`problem.n: must be a non-negative integer, got ${p.n}`);
  if (!Number.isInteger(p.m) || p.m < 0) return bad(`problem.m: must be a non-negative integer, got ${p.m}`);
  for (const [k, len] of [["xL", p.n], ["xU", p.n], ["x0", p.n], ["gL", p.m], ["gU", p.m]] as const) {
    const a = p[k];
    if (!a || a.length !== len) return bad(`problem.${k}: length ${a ? a.length : "missing"}, expected ${len}`);
  }
  for (let i = 0; i < p.n; i++) {
    if (Number.isNaN(p.xL[i]) || Number.isNaN(p.xU[i])) return bad(`problem.xL/xU[${i}]: bound is NaN`);
    if (!Number.isFinite(p.x0[i])) return bad(`problem.x0[${i}]: starting value is ${p.x0[i]}`);
    if (p.xL[i] > p.xU[i]) return { status: "infeasible", message: `bounds of ${name(p, i)}: xL = ${p.xL[i]} > xU = ${p.xU[i]}` };
  }
  for (let j = 0; j < p.m; j++) {
    if (Number.isNaN(p.gL[j]) || Number.isNaN(p.gU[j])) return bad(`problem.gL/gU[${j}]: bound is NaN`);
    if (p.gL[j] > p.gU[j]) return { status: "infeasible", message: `bounds of ${cname(p, j)}: gL = ${p.gL[j]} > gU = ${p.gU[j]}` };
  }
  if (p.jacRows.length !== p.jacCols.length) return bad(`problem.jacRows/jacCols: lengths ${p.jacRows.length} and ${p.jacCols.length} differ`);
  for (let k = 0; k < p.jacRows.length; k++)
    if (!(p.jacRows[k] >= 0 && p.jacRows[k] < p.m && p.jacCols[k] >= 0 && p.jacCols[k] < p.n))
      return bad(`problem.jacRows/jacCols[${k}]: (${p.jacRows[k]}, ${p.jacCols[k]}) outside ${p.m} × ${p.n}`);
  if (p.hessRows.length !== p.hessCols.length) return bad(`problem.hessRows/hessCols: lengths ${p.hessRows.length} and ${p.hessCols.length} differ`);
  for (let k = 0; k < p.hessRows.length; k++)
    if (!(p.hessRows[k] >= 0 && p.hessRows[k] < p.n && p.hessCols[k] >= 0 && p.hessCols[k] < p.n))
      return bad(`problem.hessRows/hessCols[${k}]: (${p.hessRows[k]}, ${p.hessCols[k]}) outside ${p.n} × ${p.n}`);
  return null;
}
const name = (p: NlpProblem, i: number) => (p.variableName?.(i) ? `x[${i}] (${p.variableName(i)})` : `x[${i}]`);
const cname = (p: NlpProblem, j: number) => (p.constraintName?.(j) ? `g[${j}] (${p.constraintName(j)})` : `g[${j}]`);

export function solveNlp(problem: NlpProblem, options?: NlpOptions): NlpResult {
  const t0 = performance.now();
  const n = Math.max(0, problem?.n | 0), m = Math.max(0, problem?.m | 0);
  const early = (status: NlpStatus, message: string): NlpResult => ({
    status, message,
    x: problem?.x0 ? Float64Array.from(problem.x0) : new Float64Array(n),
    f: NaN, g: new Float64Array(m), lambda: new Float64Array(m), zL: new Float64Array(n), zU: new Float64Array(n),
    iterations: 0, seconds: (performance.now() - t0) / 1000, log: [], infPr: NaN, infDu: NaN, solverErrorEstimate: NaN,
  });
  let opts: ResolvedOptions;
  try {
    opts = resolveOptions(options);
  } catch (e) {
    return early("invalid_model", (e as Error).message);
  }
  const v = validate(problem);
  if (v) return early(v.status, v.message);

  let ref: NlpReformulation;
  const ctx: IpmContext = {
    opts, factory: options?.linearSolver ?? defaultFactory, log: [], iter: 0, t0,
    onIteration: options?.onIteration, factorMs: 0, factorizations: 0,
  };
  const stats = { nnzL: 0 };
  let st: IpmState;
  try {
    ref = new NlpReformulation(problem, opts.boundRelaxFactor, opts.nlpScalingMaxGradient, opts.presolveSingletons);
    if (ref.removedViolation > opts.constrViolTol) {
      const j = ref.worstRemovedRow;
      return early("infeasible", `${cname(problem, j)} depends on fixed variables only and is violated by ${ref.removedViolation.toExponential(2)}`);
    }
    const N = ref.N;
    const w = new Float64Array(N);
    ref.initialW(w);
    const ws = options?.warmStart;
    const mu0 = ws?.mu ?? opts.muInit;
    // Warm start: a smaller bound push keeps the previous point (κ = μ₀ clipped to [1e-9, 1e-2];
    // common practice, no source).
    const kappa = ws ? Math.min(1e-2, Math.max(1e-9, mu0)) : undefined;
    pushInsideBounds(w, ref.wL, ref.wU, kappa, kappa);
    const mK = ref.m;
    const zL = new Float64Array(N), zU = new Float64Array(N), lambda = new Float64Array(mK);
    for (let i = 0; i < N; i++) { zL[i] = Number.isFinite(ref.wL[i]) ? 1 : 0; zU[i] = Number.isFinite(ref.wU[i]) ? 1 : 0; }
    if (ws) {
      const floor = mu0;
      if (ws.lambda) for (let r = 0; r < mK; r++) { const j = ref.rowMap[r]; lambda[r] = (ref.df * ws.lambda[j]) / ref.dc[j]; }
      for (let k = 0; k < ref.nX; k++) {
        const i = ref.free[k];
        if (ws.zL && zL[k]) zL[k] = Math.max(floor, ref.df * ws.zL[i]);
        if (ws.zU && zU[k]) zU[k] = Math.max(floor, ref.df * ws.zU[i]);
      }
      if (ws.lambda)
        for (let r = 0; r < mK; r++) {
          const s = ref.slackOf[ref.rowMap[r]];
          if (s < 0) continue;
          // Stationarity in s: −λ_j − z_L,s + z_U,s = 0.
          if (zL[s]) zL[s] = Math.max(floor, -lambda[r]);
          if (zU[s]) zU[s] = Math.max(floor, lambda[r]);
        }
    }
    st = { w, lambda, zL, zU, mu: mu0 };
  } catch (e) {
    if (e instanceof ModelError) return early("invalid_model", `at the starting point: ${e.message}`);
    return early("invalid_model", e instanceof Error ? e.message : String(e));
  }

  let status: NlpStatus;
  let message: string;
  let infPr: number, infDu: number;
  let solverErrorEstimate = NaN;
  try {
    const out = runIpm(ref, st, ctx, { phase: "regular", allowRestoration: true, initLambda: !options?.warmStart?.lambda, stats });
    status = out.status === "returned" ? "numerical_trouble" : out.status;
    message = out.message;
    infPr = out.infPr;
    infDu = out.infDu;
    solverErrorEstimate = out.solverError ?? NaN;
  } catch (e) {
    status = "numerical_trouble";
    message = `internal error: ${e instanceof Error ? e.message : String(e)}`;
    infPr = NaN;
    infDu = NaN;
  }

  const x = ref.scatter(st.w).slice();
  const lambda = new Float64Array(m), zL = new Float64Array(n), zU = new Float64Array(n);
  let f = NaN;
  let g = new Float64Array(m);
  try {
    ref.recoverMultipliers(st.lambda, st.zL, st.zU, lambda, zL, zU);
    f = ref.userF(x);
    g = ref.userG(x).slice();
  } catch (e) {
    if (status === "optimal" || status === "acceptable") status = "numerical_trouble";
    message += `; final evaluation: ${e instanceof Error ? e.message : String(e)}`;
  }
  return {
    status, message, x, f, g, lambda, zL, zU,
    iterations: ctx.iter, seconds: (performance.now() - t0) / 1000, log: ctx.log, infPr, infDu, solverErrorEstimate,
    stats: { factorizations: ctx.factorizations, factorSeconds: ctx.factorMs / 1000, nnzL: stats.nnzL },
  };
}
