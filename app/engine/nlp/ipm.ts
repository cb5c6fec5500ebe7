/**
 * The primal–dual interior-point filter line-search iteration, Algorithm A of Wächter and
 * Biegler, Math. Programming 106(1):25–57, 2006, on an InternalProblem (internal.ts). Each
 * strategy lives in its own module and is called from one loop whose steps carry the
 * paper's names:
 *
 *   A-2 convergence (convergence.ts)   A-3 barrier update (barrier.ts)
 *   A-4 search direction (kkt.ts, inertia-correction.ts, lbfgs.ts, bound-multipliers.ts)
 *   A-5 backtracking line search (line-search.ts, filter.ts)   A-6/7 accept, z reset (16)
 *   A-9 feasibility restoration (restoration.ts)
 *
 * All vectors are allocated once per call (sizes N, m, N + m, nnz); an iteration is O(nnz)
 * plus one sparse factorisation (more with inertia correction) and its solves.
 */
import type { IterationRecord, NlpStatus } from "./types";
import { terminalLogPrinter, type IterationEvent } from "./iteration-log";
import type { ResolvedOptions } from "./options";
import { CONSTANTS as C } from "./options";
import { ModelError, type InternalProblem } from "./internal";
import { KktSystem, type SolverFactory } from "./kkt";
import { InertiaCorrection } from "./inertia-correction";
import { kktError } from "./convergence";
import { nextMu, tauOf, muMin } from "./barrier";
import { solverGap } from "./gap";
import { barrierValue, barrierGradient } from "./barrier-function";
import { applyFinalDualStep, boundMultiplierStep, finalDualStepLength, resetBoundMultipliers } from "./bound-multipliers";
import { Filter } from "./filter";
import { acceptTrial, backtrack, fractionToBoundary, type LineSearchHost, type TrialValues } from "./line-search";
import { leastSquaresMultipliers } from "./initial-point";
import { finalPointWork, judgeFinalPoint, type FinalPointWork } from "./final-point";
import { LimitedMemoryHessian } from "./lbfgs";
import { runRestoration } from "./restoration";
import {
  addScaled, allFinite, axpyInto, boundSlacks, columnOrder, dot, finalStepLength, jacTransposeGather, kktRightHandSide, lagrangianGradient,
  maxAbs, norm1, normInfScaled, primalDualSigma, relativeStep, shrinkRelaxation, splitSolution,
} from "./vectors";

/** printLevel ≥ 1: the terminal log printer of each solve (keyed by its log array). */
const printers = new WeakMap<IterationRecord[], (r: IterationRecord) => void>();

export interface IpmContext {
  opts: ResolvedOptions;
  factory: SolverFactory;
  log: IterationRecord[];
  /** Iterations taken so far (both phases). */
  iter: number;
  /** performance.now() at the start of the solve. */
  t0: number;
  onIteration?: (r: IterationRecord) => void;
  /** Time spent in numeric factorisations (ms) and their number. */
  factorMs: number;
  factorizations: number;
}

export interface IpmState {
  w: Float64Array;
  lambda: Float64Array;
  zL: Float64Array;
  zU: Float64Array;
  mu: number;
}

export interface IpmHooks {
  phase: "regular" | "restoration";
  allowRestoration: boolean;
  /** Restoration only: after each accepted step, true ends the phase ("returned"). */
  stopCheck?: (w: Float64Array) => boolean;
  /** Estimate λ by least squares, eq. (36), before the first iteration. */
  initLambda?: boolean;
  /** Filled with the nonzeros of L of this phase's KKT factor (statistics). */
  stats?: { nnzL: number };
}

export interface IpmOutcome {
  status: NlpStatus | "returned";
  message: string;
  infPr: number;
  infDu: number;
  /** Regular phase: estimate of f(w) − f* in the user's objective units (solverGap). */
  solverError?: number;
}

const EPS = 2.220446049250313e-16;

export function runIpm(P: InternalProblem, st: IpmState, ctx: IpmContext, hooks: IpmHooks): IpmOutcome {
  const o = ctx.opts;
  const { N, m } = P;
  const K = N + m;
  const exact = o.hessian === "exact";
  const hasL = new Uint8Array(N), hasU = new Uint8Array(N);
  for (let i = 0; i < N; i++) { hasL[i] = Number.isFinite(P.wL[i]) ? 1 : 0; hasU[i] = Number.isFinite(P.wU[i]) ? 1 : 0; }
  const nnzJ = P.jRows.length, nnzH = P.hRows.length;
  let w: Float64Array = st.w;
  let wT: Float64Array = new Float64Array(N);
  const lambda = st.lambda, zL = st.zL, zU = st.zU;
  const sL = new Float64Array(N), sU = new Float64Array(N);
  const grad = new Float64Array(N), gradPhi = new Float64Array(N), gradL = new Float64Array(N), JtL = new Float64Array(N);
  const diag = new Float64Array(N), ones = new Float64Array(N).fill(1);
  const dw = new Float64Array(N), dzL = new Float64Array(N), dzU = new Float64Array(N), dwSoc = new Float64Array(N);
  let cv: Float64Array = new Float64Array(m);
  let cT: Float64Array = new Float64Array(m);
  const dlam = new Float64Array(m), dlamSoc = new Float64Array(m), cSoc = new Float64Array(m);
  const jv = new Float64Array(nnzJ), hv = new Float64Array(exact ? nnzH : 0);
  const rhs = new Float64Array(K), sol = new Float64Array(K), rhs2 = new Float64Array(K);
  const empty = new Int32Array(0);
  const kkt = new KktSystem(N, m, exact ? P.hRows : empty, exact ? P.hCols : empty, P.jRows, P.jCols, ctx.factory);
  const qn = exact ? null : new LimitedMemoryHessian(P.nX, o.lbfgsMemory, K);
  const qnS = qn ? new Float64Array(P.nX) : null, qnY = qn ? new Float64Array(P.nX) : null, qnG = qn ? new Float64Array(P.nX) : null;
  const ic = new InertiaCorrection();
  const filter = new Filter();
  let mu = st.mu;
  let tau = tauOf(mu);
  let fval = 0;
  const phase = hooks.phase;
  const solve0 = (b: Float64Array, x: Float64Array) => kkt.solve(b, x);
  const solveKkt = (b: Float64Array, x: Float64Array) => {
    if (qn) qn.solve(solve0, b, x);
    else kkt.solve(b, x);
  };

  const wLv = P.wL, wUv = P.wU, jR = P.jRows, jC = P.jCols;
  const slacks = (v: Float64Array) => boundSlacks(N, v, wLv, wUv, hasL, hasU, sL, sU);
  const theta1 = (c: Float64Array) => norm1(m, c);
  const byColumn = columnOrder(N, nnzJ, jR, jC);
  const jtTimes = (lam: Float64Array, out: Float64Array) => jacTransposeGather(N, byColumn, jv, lam, out);
  /** Objective at the last trial point (trialAt), whose constraints are left in cT. */
  let fTrial = NaN;
  /**
   * f, ∇f, c and J at w. After an accepted trial, `fAtW` is the trial's objective and cv already
   * holds its constraints (the accepted point is always the last trial evaluated): only ∇f and J
   * are new.
   */
  const evalPoint = (fAtW?: number): string | null => {
    try {
      fval = fAtW ?? P.f(w);
      P.gradF(w, grad);
      if (fAtW === undefined) P.c(w, cv);
      P.jac(w, jv);
      return null;
    } catch (e) {
      if (e instanceof ModelError) return e.message;
      throw e;
    }
  };
  const fail = (status: NlpStatus, message: string, infPr = NaN, infDu = NaN): IpmOutcome => ({ status, message, infPr, infDu });

  // ---- A-1: initialisation (the caller supplies w inside the bounds, λ, z, μ).
  {
    const err = evalPoint();
    if (err) return fail(phase === "regular" && ctx.iter === 0 ? "invalid_model" : "numerical_trouble", `at the starting point: ${err}`);
  }
  if (hooks.initLambda) leastSquaresMultipliers(kkt, grad, zL, zU, jv, lambda, ones, rhs, sol);
  slacks(w);
  const theta0 = theta1(cv);
  const thetaMax = C.thetaMaxFact * Math.max(1, theta0); // §3.2 after eq. (21)
  const thetaMin = C.thetaMinFact * Math.max(1, theta0);
  filter.reset(thetaMax);

  let rec: Omit<IterationRecord, "iter" | "f" | "infPr" | "infDu" | "mu" | "phase"> = { normD: 0, deltaW: 0, alphaPr: 0, alphaDu: 0, lsTrials: 0, events: [] };
  let acceptableCount = 0;
  /** Acceptable iterates in a row whatever the objective did; the objective at the previous iterate. */
  let acceptableAny = 0;
  let fPrev = NaN;
  /**
   * θ before the last second-order correction that was accepted h-type without reducing θ; while
   * no accepted step has come below it, a correction must reduce θ (line-search.ts). Infinity: none.
   */
  let socGuardTheta = Infinity;
  let forceMuUpdate = false;
  let tinyCount = 0;
  let infPr = NaN, infDu = NaN;
  // Watchdog state: the stored iterate, its direction and reference values (A-5 with watchdog).
  const wd = {
    active: false, shortened: 0, trials: 0, mu: 0, theta: 0, phi: 0, gradPhiD: 0, alphaMax: 0,
    w: new Float64Array(N), lambda: new Float64Array(m), zL: new Float64Array(N), zU: new Float64Array(N),
    dw: new Float64Array(N), dlam: new Float64Array(m),
  };
  const firstIter = ctx.iter;
  // Final steps after the KKT test is met (gap.ts): the best converged point so far.
  const polish = {
    active: false, steps: 0, err: Infinity,
    /** The best converged point's multipliers are an estimate for its primal point (multiplier-estimate.ts), not the iteration's. */
    estimated: false,
    /** …and its primal point is the least-norm correction onto c = 0 of a final-step point. */
    corrected: false,
    /** Gap at the last progress of the final steps, and final steps since then. */
    ref: Infinity, stale: 0, infPr: NaN, infDu: NaN,
    w: new Float64Array(phase === "regular" ? N : 0), lambda: new Float64Array(phase === "regular" ? m : 0),
    zL: new Float64Array(phase === "regular" ? N : 0), zU: new Float64Array(phase === "regular" ? N : 0),
    /** wL, wU, relaxL, relaxU before the bounds were tightened. */
    bounds: null as Float64Array[] | null,
    save(w: Float64Array, l: Float64Array, a: Float64Array, b: Float64Array, err: number, pr: number, du: number) {
      this.w.set(w); this.lambda.set(l); this.zL.set(a); this.zU.set(b); this.err = err; this.infPr = pr; this.infDu = du; this.estimated = false; this.corrected = false;
    },
    /** Message suffix for a returned best point whose multipliers were estimated. */
    note(): string {
      return this.estimated ? `; ${this.corrected ? "returned point moved onto c = 0 and multipliers estimated for it" : "multipliers estimated for the returned point"}` : "";
    },
    /** Back to the best converged point (and the bounds it was converged for). */
    restore(w: Float64Array, l: Float64Array, a: Float64Array, b: Float64Array) {
      w.set(this.w); l.set(this.lambda); a.set(this.zL); b.set(this.zU);
      if (this.bounds) {
        wLv.set(this.bounds[0]); wUv.set(this.bounds[1]);
        if (P.relaxL && P.relaxU) { P.relaxL.set(this.bounds[2]); P.relaxU.set(this.bounds[3]); }
      }
    },
  };

  let est: FinalPointWork | null = null;

  for (;;) {
    // ---- A-2: optimality error of the original problem (μ = 0) and log line.
    slacks(w);
    jtTimes(lambda, JtL);
    lagrangianGradient(N, grad, JtL, zL, zU, gradL);
    // E₀ and, from the same pass, E_μ at the current μ for the barrier update below
    const E0 = kktError(gradL, cv, sL, sU, hasL, hasU, lambda, zL, zU, 0, mu);
    const muOfE0 = mu;
    infPr = P.reportInfPr(w, cv);
    infDu = E0.dual;
    const fUser = P.reportF(w, fval);
    const record: IterationRecord = { iter: ctx.iter, f: fUser, infPr, infDu, mu, phase, ...rec };
    ctx.log.push(record);
    ctx.onIteration?.(record);
    if (o.printLevel > 0) {
      // One printer per solve (the restoration phase shares it): phase changes get a heading.
      let print = printers.get(ctx.log);
      if (!print) printers.set(ctx.log, (print = terminalLogPrinter((line) => console.log(line))));
      print(record);
    }

    if (hooks.stopCheck && ctx.iter > firstIter && hooks.stopCheck(w)) return { status: "returned", message: "restoration phase succeeded", infPr, infDu };
    const unscaledOk = infPr <= o.constrViolTol && E0.dual * P.dualUnscale <= o.dualInfTol && E0.compl * P.dualUnscale <= o.complInfTol;
    // Objective offset of the barrier: total duality gap Σ s z plus |λᵀc| (gap.ts), user units.
    const gapRaw = solverGap(N, sL, sU, hasL, hasU, zL, zU, m, lambda, cv, P.relaxL, P.relaxU);
    const solverErr = gapRaw.total * P.dualUnscale;
    const gapTarget = o.gapTol * (1 + Math.abs(fUser));
    const gapOk = phase !== "regular" || o.gapTol === 0 || !(solverErr > gapTarget);
    const converged = E0.E <= o.tol && unscaledOk;
    if (converged && gapOk) {
      const how = polish.steps > 0 ? ` after ${polish.steps} final step${polish.steps > 1 ? "s" : ""}` : "";
      return { status: "optimal", message: `optimal: scaled KKT error ${E0.E.toExponential(2)} ≤ tol ${o.tol}, duality gap ${solverErr.toExponential(2)}${o.gapTol === 0 ? " (gap test off)" : ` ≤ ${gapTarget.toExponential(2)}`}${how}`, infPr, infDu, solverError: solverErr };
    }
    // A final-step point that is not converged with the iteration's multipliers and did not halve
    // the gap itself: multipliers estimated for the point (after a least-norm correction onto
    // c = 0 when ‖c‖∞ > tol) may make it a converged point with a smaller gap. Where the steps
    // halve the gap on their own (trapezoidal) the estimate is not tried: COPS Goddard trapezoidal
    // N = 3,200 takes 33 factorisations for 31 iterations, 45 with every final step judged.
    let estimatedProgress = false;
    if (polish.active && polish.steps > 0 && !converged && !(solverErr < 0.5 * polish.ref) && infPr <= o.constrViolTol && Number.isFinite(E0.E)) {
      est ??= finalPointWork(N, m, nnzJ, ones);
      const r = judgeFinalPoint(P, kkt, { w, grad, c: cv, jv, sL, sU, primal: E0.primal, infPr }, zL, zU, hasL, hasU, tau, o, est);
      if (r && r.gap < polish.err) {
        if (r.gap < 0.5 * polish.ref) { polish.ref = r.gap; estimatedProgress = true; }
        polish.save(r.w, est.lambda, est.zL, est.zU, r.gap, r.infPr, r.dual);
        polish.estimated = true;
        polish.corrected = r.corrected;
        if (r.gap <= gapTarget) {
          polish.restore(w, lambda, zL, zU);
          st.w = w;
          return {
            status: "optimal",
            message: `optimal: scaled KKT error ${r.E.toExponential(2)} ≤ tol ${o.tol}, duality gap ${r.gap.toExponential(2)} ≤ ${gapTarget.toExponential(2)} after ${polish.steps} final step${polish.steps > 1 ? "s" : ""} (${r.corrected ? "point moved onto c = 0, " : ""}multipliers estimated for the point)`,
            infPr: r.infPr, infDu: r.dual, solverError: r.gap,
          };
        }
      }
    }
    if (polish.active && polish.steps > 0) {
      // Progress of the final steps: the gap halved since the last progress, or a better converged point.
      if (estimatedProgress) polish.stale = 0;
      else if (solverErr < 0.5 * polish.ref || (converged && solverErr < polish.err)) { polish.ref = Math.min(polish.ref, solverErr); polish.stale = 0; }
      else polish.stale++;
    }
    if (polish.active && (polish.steps >= C.maxFinalSteps || polish.stale >= C.finalStallSteps || !Number.isFinite(E0.E) || !Number.isFinite(solverErr))) {
      // The final steps stopped helping: back to the best converged point, gap reported as it is.
      if (converged && solverErr < polish.err) polish.save(w, lambda, zL, zU, solverErr, infPr, infDu);
      polish.restore(w, lambda, zL, zU);
      st.w = w;
      return {
        status: "optimal",
        message: `optimal: scaled KKT error ≤ tol ${o.tol}; duality gap ${polish.err.toExponential(2)} above ${gapTarget.toExponential(2)} after ${polish.steps} final steps${polish.stale >= C.finalStallSteps ? ` (no progress in the last ${polish.stale})` : ""}${polish.note()}`,
        infPr: polish.infPr, infDu: polish.infDu, solverError: polish.err,
      };
    }
    if (converged && phase === "regular" && o.gapTol > 0) {
      // KKT test met but the barrier's objective offset is not: final steps toward μ_f (below).
      if (!polish.active || solverErr < polish.err) polish.save(w, lambda, zL, zU, solverErr, infPr, infDu);
      if (!polish.active) {
        polish.active = true;
        polish.ref = solverErr;
        // Bounds back to within finalRelaxShrink of the problem's own (the relaxation is an
        // objective offset Σ z δ of its own); an active variable keeps 1 % of its slack.
        polish.bounds = [Float64Array.from(wLv), Float64Array.from(wUv), Float64Array.from(P.relaxL ?? []), Float64Array.from(P.relaxU ?? [])];
        if (P.relaxL && P.relaxU) {
          shrinkRelaxation(N, 1 - C.finalRelaxShrink, w, wLv, wUv, P.relaxL, P.relaxU, hasL, hasU);
          const err = evalPoint();
          if (err) {
            polish.restore(w, lambda, zL, zU);
            st.w = w;
            return { status: "optimal", message: `optimal: scaled KKT error ≤ tol ${o.tol}; duality gap ${polish.err.toExponential(2)} above ${gapTarget.toExponential(2)} (bounds could not be tightened: ${err})`, infPr, infDu, solverError: polish.err };
          }
          slacks(w);
          jtTimes(lambda, JtL);
          lagrangianGradient(N, grad, JtL, zL, zU, gradL);
        }
      }
    }
    const mMin = muMin(o.tol);
    const done = (out: IpmOutcome): IpmOutcome => ({ ...out, solverError: solverErr });
    // Acceptable: E_0 ≤ acceptableTol and the objective no longer moving (Ipopt's
    // acceptable_obj_change_tol); a solve that still descends along a flat direction (a singular
    // arc's ringing) is left to converge, up to acceptableStallFactor × acceptableIter iterates.
    const objChange = Math.abs(fUser - fPrev) / Math.max(1, Math.abs(fUser));
    fPrev = fUser;
    if (E0.E <= o.acceptableTol && infPr <= 1e2 * o.constrViolTol) {
      acceptableAny++;
      acceptableCount = objChange <= o.acceptableObjChangeTol ? acceptableCount + 1 : 0;
    } else acceptableCount = acceptableAny = 0;
    if (o.acceptableIter > 0 && acceptableCount >= o.acceptableIter)
      return done({ status: "acceptable", message: `acceptable: scaled KKT error ≤ ${o.acceptableTol} for ${acceptableCount} iterations`, infPr, infDu });
    if (o.acceptableIter > 0 && acceptableAny >= C.acceptableStallFactor * o.acceptableIter)
      return done({ status: "acceptable", message: `acceptable: scaled KKT error ≤ ${o.acceptableTol} for ${acceptableAny} iterations, objective still changing by ${objChange.toExponential(1)} of |f| per iteration`, infPr, infDu });
    if (ctx.iter >= o.maxIter) return done({ status: "iteration_limit", message: `iteration limit ${o.maxIter} reached`, infPr, infDu });
    if ((performance.now() - ctx.t0) / 1000 > o.maxSeconds) return { status: "time_limit", message: `time limit ${o.maxSeconds} s reached`, infPr, infDu };
    const wMax = maxAbs(P.nX, w);
    if (wMax > o.divergingIterates) return { status: "diverging", message: `iterates diverge: max|x| = ${wMax.toExponential(2)} > ${o.divergingIterates}`, infPr, infDu };
    if (phase === "regular" && fUser < o.unboundedObjective && infPr <= o.constrViolTol)
      return { status: "unbounded", message: `objective ${fUser.toExponential(2)} below ${o.unboundedObjective} at a feasible point`, infPr, infDu };

    // ---- A-3: barrier parameter update, eq. (7)-(8); repeated while the subproblem is solved.
    for (;;) {
      const Emu = mu === muOfE0 ? E0.EAlso : kktError(gradL, cv, sL, sU, hasL, hasU, lambda, zL, zU, mu).E;
      if (!(mu > mMin && (Emu <= C.kappaEpsilon * mu || forceMuUpdate))) break;
      forceMuUpdate = false;
      mu = Math.max(mMin, nextMu(mu, 0));
      tau = tauOf(mu);
      filter.reset(thetaMax);
    }
    forceMuUpdate = false;
    if (polish.active) {
      // μ_f with n_z μ_f at half the target gap; the step is the Newton step of the μ_f subproblem.
      const muF = (0.5 * gapTarget) / (P.dualUnscale * Math.max(1, gapRaw.nz));
      mu = Math.max(muF, Math.min(mu, nextMu(mu, 0)));
      tau = C.tauFinal;
    }

    // ---- A-4: search direction from the primal-dual system (13) with inertia correction.
    if (exact) {
      try {
        P.hess(w, 1, lambda, hv);
      } catch (e) {
        if (e instanceof ModelError) return fail("numerical_trouble", `Hessian at iteration ${ctx.iter}: ${e.message}`, infPr, infDu);
        throw e;
      }
    }
    primalDualSigma(N, zL, zU, sL, sU, hasL, hasU, diag); // Σ
    if (qn) qn.addDiagonal(diag);
    const tf = performance.now();
    const corr = ic.factorize(kkt, exact ? hv : null, diag, jv, mu);
    ctx.factorMs += performance.now() - tf;
    ctx.factorizations += corr.factorizations;
    if (hooks.stats) hooks.stats.nnzL = kkt.solver.nnzL;
    const events: IterationEvent[] = corr.deltaW > 0 ? ["hessian-shift"] : [];
    const phi = barrierValue(fval, w, P.wL, P.wU, hasL, hasU, mu);
    const theta = theta1(cv);
    /** (θ, φ) of the point the step starts from (the stored one after a watchdog revert). */
    let thetaFrom = theta, phiFrom = phi;
    barrierGradient(grad, sL, sU, hasL, hasU, mu, gradPhi);

    let lsAccepted = false;
    let lsAlpha = 0, lsTrials = 0, lsSoc = false, lsAugment = true;
    if (corr.ok) {
      if (qn) qn.prepare(solve0, rhs2);
      kktRightHandSide(N, m, gradPhi, JtL, cv, rhs);
      solveKkt(rhs, sol);
      if (allFinite(K, sol)) {
        splitSolution(N, m, sol, dw, dlam);
        // eq. (15) for the primal step
        let alphaMax = fractionToBoundary(tau, sL, dw, 1, hasL, 1);
        alphaMax = fractionToBoundary(tau, sU, dw, -1, hasU, alphaMax);
        const gradPhiD = dot(N, gradPhi, dw);
        // Tiny step (common practice, no source): the direction is below rounding of w.
        const rel = relativeStep(N, dw, w);
        let alphaSocUsed = 0;
        const trialAt = (alpha: number, d: Float64Array): TrialValues | null => {
          axpyInto(N, wT, w, alpha, d);
          try {
            const fT = P.f(wT);
            fTrial = NaN;
            P.c(wT, cT);
            fTrial = fT;
            return { theta: theta1(cT), phi: barrierValue(fT, wT, P.wL, P.wU, hasL, hasU, mu) };
          } catch (e) {
            if (e instanceof ModelError) return null;
            throw e;
          }
        };
        const host: LineSearchHost = {
          trial: (alpha) => trialAt(alpha, dw),
          secondOrderCorrection: (alpha, first) => {
            // c_soc ← α c(w) + c(w + α d) on the first correction, then α_soc c_soc + c(w_soc) (§2.4)
            if (first) for (let j = 0; j < m; j++) cSoc[j] = alpha * cv[j] + cT[j];
            else for (let j = 0; j < m; j++) cSoc[j] = alphaSocUsed * cSoc[j] + cT[j];
            for (let i = 0; i < N; i++) rhs2[i] = rhs[i];
            for (let j = 0; j < m; j++) rhs2[N + j] = -cSoc[j];
            solveKkt(rhs2, sol);
            splitSolution(N, m, sol, dwSoc, dlamSoc);
            let a = fractionToBoundary(tau, sL, dwSoc, 1, hasL, 1);
            a = fractionToBoundary(tau, sU, dwSoc, -1, hasU, a);
            alphaSocUsed = a;
            const t = trialAt(a, dwSoc);
            return t ? { ...t, alpha: a } : null;
          },
        };
        if (polish.active) {
          // Final steps: full fraction-to-the-boundary step, no line search (the point is within
          // the region of fast local convergence; a step that spoils the KKT test is undone above).
          // Each slack keeps a few hundred ulps of its bound: τ_final = 1 − 1e-6 would otherwise
          // round w onto a bound (s = 0, z = μ/s = ∞) once s is within 1e-6 of an ulp.
          alphaMax = finalStepLength(N, alphaMax, dw, sL, sU, wLv, wUv, hasL, hasU, C.finalSlackUlps * EPS);
          const t = host.trial(alphaMax);
          if (t) { lsAccepted = true; lsAlpha = alphaMax; lsTrials = 1; lsAugment = false; events.push("final-step"); polish.steps++; }
        } else if (rel < 10 * EPS) {
          const t = host.trial(alphaMax);
          if (t) { lsAccepted = true; lsAlpha = alphaMax; lsTrials = 1; lsAugment = false; events.push("tiny-step"); }
          forceMuUpdate = true;
          tinyCount++;
        } else {
          tinyCount = 0;
          if (wd.active && wd.mu !== mu) wd.active = false; // μ changed: the reference is stale
          if (!wd.active && wd.shortened >= C.watchdogShortenedIterTrigger) {
            wd.active = true; wd.trials = 0; wd.mu = mu;
            wd.w.set(w); wd.lambda.set(lambda); wd.zL.set(zL); wd.zU.set(zU); wd.dw.set(dw); wd.dlam.set(dlam);
            wd.theta = theta; wd.phi = phi; wd.gradPhiD = gradPhiD; wd.alphaMax = alphaMax;
          }
          if (wd.active) {
            // Full step, judged against the stored iterate; accepted tentatively a few times.
            const t = host.trial(alphaMax);
            const acc = t ? acceptTrial(t, alphaMax, filter, wd.theta, wd.phi, wd.gradPhiD, thetaMin) : null;
            if (t && acc && acc.ok) {
              lsAccepted = true; lsAlpha = alphaMax; lsTrials = 1; lsAugment = !acc.fType; thetaFrom = wd.theta; phiFrom = wd.phi;
              wd.active = false; wd.shortened = 0; events.push("watchdog-kept");
            } else if (t && wd.trials < C.watchdogTrialIterMax) {
              wd.trials++;
              lsAccepted = true; lsAlpha = alphaMax; lsTrials = 1; lsAugment = false; events.push("watchdog-trial");
            } else {
              // Back to the stored iterate and an ordinary backtracking along its direction.
              wd.active = false; wd.shortened = 0;
              w.set(wd.w); lambda.set(wd.lambda); zL.set(wd.zL); zU.set(wd.zU); dw.set(wd.dw); dlam.set(wd.dlam);
              const err = evalPoint();
              if (err) return fail("numerical_trouble", `watchdog revert: ${err}`, infPr, infDu);
              slacks(w);
              thetaFrom = wd.theta; phiFrom = wd.phi;
              const ls = backtrack(host, filter, wd.theta, wd.phi, wd.gradPhiD, wd.alphaMax, thetaMin, false);
              lsAccepted = ls.accepted; lsAlpha = ls.alpha; lsTrials = ls.trials; lsSoc = false; lsAugment = ls.augment; events.push("watchdog-undone");
            }
          } else {
            const ls = backtrack(host, filter, theta, phi, gradPhiD, alphaMax, thetaMin, m > 0, phase === "regular" && Number.isFinite(socGuardTheta));
            lsAccepted = ls.accepted; lsAlpha = ls.alpha; lsTrials = ls.trials; lsSoc = ls.soc; lsAugment = ls.augment;
            if (ls.accepted) wd.shortened = ls.alpha < alphaMax ? wd.shortened + 1 : 0;
          }
        }
        if (tinyCount >= 3 && mu <= mMin) {
          return E0.E <= o.acceptableTol
            ? done({ status: "acceptable", message: "search direction below rounding at the smallest μ", infPr, infDu })
            : fail("numerical_trouble", "search direction below rounding at the smallest μ", infPr, infDu);
        }
      }
    }

    if (!lsAccepted && polish.active) {
      // A final step could not be taken: back to the best converged point.
      polish.restore(w, lambda, zL, zU);
      st.w = w;
      return {
        status: "optimal",
        message: `optimal: scaled KKT error ≤ tol ${o.tol}; duality gap ${polish.err.toExponential(2)} above ${gapTarget.toExponential(2)} (final step failed)${polish.note()}`,
        infPr: polish.infPr, infDu: polish.infDu, solverError: polish.err,
      };
    }
    if (!lsAccepted) {
      // ---- A-9: feasibility restoration (filter augmented with the current iterate first).
      const why = !corr.ok ? "inertia correction failed" : "step size below α_min";
      if (!hooks.allowRestoration) return fail("numerical_trouble", `restoration phase: ${why}`, infPr, infDu);
      filter.add((1 - C.gammaTheta) * thetaFrom, phiFrom - C.gammaPhi * thetaFrom);
      st.mu = mu;
      wd.active = false; wd.shortened = 0;
      const r = runRestoration(P, st, ctx, filter, hasL, hasU);
      if (r.status !== "returned") return r;
      // Back in the regular phase: new point, multipliers re-estimated, eq. (36).
      const err = evalPoint();
      if (err) return fail("numerical_trouble", `after restoration: ${err}`, infPr, infDu);
      // λ: the restoration problem's multipliers of c(w) − p + n = 0 (copied back by runRestoration).
      rec = { normD: 0, deltaW: 0, alphaPr: 0, alphaDu: 0, lsTrials: 0, events: ["restoration-return"] };
      acceptableCount = 0;
      continue;
    }

    // ---- A-6: accept the trial point.
    const dW = lsSoc ? dwSoc : dw;
    const dL = lsSoc ? dlamSoc : dlam;
    if (lsSoc) events.push("second-order-correction");
    boundMultiplierStep(mu, dW, sL, sU, hasL, hasU, zL, zU, dzL, dzU);
    // In the final steps a multiplier that would barely cross zero is cut alone (bound-multipliers.ts).
    const clip = C.finalDualClip * o.tol;
    const alphaZ = polish.active
      ? finalDualStepLength(tau, clip, zU, dzU, hasU, finalDualStepLength(tau, clip, zL, dzL, hasL, 1))
      : fractionToBoundary(tau, zU, dzU, 1, hasU, fractionToBoundary(tau, zL, dzL, 1, hasL, 1));
    if (lsAugment) filter.add((1 - C.gammaTheta) * thetaFrom, phiFrom - C.gammaPhi * thetaFrom); // (22)
    const normD = normInfScaled(N, lsAlpha, dW);
    if (qn) {
      // ∇_x L(w_k, λ_{k+1}) before the new Jacobian replaces the old one.
      addScaled(m, lambda, lsAlpha, dL);
      jtTimes(lambda, JtL);
      for (let i = 0; i < P.nX; i++) { qnG![i] = grad[i] + JtL[i]; qnS![i] = wT[i] - w[i]; }
    } else {
      addScaled(m, lambda, lsAlpha, dL);
    }
    if (polish.active) {
      applyFinalDualStep(alphaZ, tau, zL, dzL, hasL);
      applyFinalDualStep(alphaZ, tau, zU, dzU, hasU);
    } else {
      addScaled(N, zL, alphaZ, dzL);
      addScaled(N, zU, alphaZ, dzU);
    }
    const wOld = w; w = wT; wT = wOld;
    const cOld = cv; cv = cT; cT = cOld;
    st.w = w;
    const err = evalPoint(fTrial);
    if (err) {
      // Accepted trial was evaluated (f, c) but its derivatives are not finite.
      return fail("numerical_trouble", `at iteration ${ctx.iter + 1}: ${err}`, infPr, infDu);
    }
    if (qn) {
      jtTimes(lambda, JtL);
      for (let i = 0; i < P.nX; i++) qnY![i] = grad[i] + JtL[i] - qnG![i];
      qn.update(qnS!, qnY!);
    }
    // ---- A-7: bound multiplier safeguard, eq. (16).
    slacks(w);
    resetBoundMultipliers(mu, sL, sU, hasL, hasU, zL, zU);
    ctx.iter++;
    {
      const thetaNew = theta1(cv);
      if (thetaNew < socGuardTheta) socGuardTheta = Infinity;
      if (lsSoc && lsAugment && thetaNew >= thetaFrom) socGuardTheta = Math.min(socGuardTheta, thetaFrom);
    }
    rec = { normD, deltaW: corr.deltaW, alphaPr: lsAlpha, alphaDu: alphaZ, lsTrials, events };
    st.mu = mu;
  }
}
