/**
 * Every option of the interior-point solver, declared once with its default and one line of help.
 * Constants are those of Wächter and Biegler, "On the implementation of an interior-point filter
 * line-search algorithm for large-scale nonlinear programming", Math. Programming 106(1):25–57,
 * 2006 (cited below as "W&B"), with the equation each one belongs to.
 */
import type { NlpOptions } from "./types";

export interface OptionSpec<T> {
  default: T;
  help: string;
}

/** The user-visible options (NlpOptions) with defaults; DEVELOPERS.md lists the same table. */
export const OPTION_SPECS = {
  tol: { default: 1e-8, help: "Desired tolerance on the scaled KKT error E_0, W&B eq. (5)-(6)." },
  gapTol: { default: 1e-11, help: "Also required at 'optimal': total duality gap Σ s z + |λᵀc| + Σ z δ (unscaled) ≤ gapTol (1 + |f|), so the barrier leaves no objective floor that grows with the mesh; 0 turns the test off (the former stop; gap.ts)." },
  acceptableTol: { default: 1e-6, help: "E_0 below this for acceptableIter consecutive iterates ends with 'acceptable'." },
  acceptableIter: { default: 15, help: "Consecutive acceptable iterates needed for status 'acceptable'." },
  acceptableObjChangeTol: { default: 1e-9, help: "An iterate counts as acceptable only if the objective changed by at most this × max(1, |f|) since the previous one (Ipopt's acceptable_obj_change_tol): a solve still descending is not stopped; after acceptableStallFactor × acceptableIter acceptable iterates in a row it stops anyway." },
  maxIter: { default: 3000, help: "Iteration limit (regular and restoration iterations together)." },
  maxSeconds: { default: Infinity, help: "Wall-clock limit in seconds; status 'time_limit' when exceeded." },
  muInit: { default: 0.1, help: "Initial barrier parameter μ_0." },
  hessian: { default: "exact" as "exact" | "limited-memory", help: "'exact' Hessian of the Lagrangian or 'limited-memory' damped BFGS (compact form, SMW on the KKT system)." },
  printLevel: { default: 0, help: "0 silent; 1 one line per iteration on stdout." },
  constrViolTol: { default: 1e-4, help: "Also required at 'optimal': unscaled max constraint violation." },
  dualInfTol: { default: 1, help: "Also required at 'optimal': unscaled max dual infeasibility." },
  complInfTol: { default: 1e-4, help: "Also required at 'optimal': unscaled max complementarity." },
  boundRelaxFactor: { default: 1e-8, help: "Bounds are relaxed by this factor × max(1,|bound|) before solving (and shrunk by finalRelaxShrink for the final steps, gap.ts)." },
  nlpScalingMaxGradient: { default: 100, help: "Gradient-based scaling target g_max, W&B §3.8." },
  lbfgsMemory: { default: 6, help: "Number of stored pairs for the limited-memory Hessian." },
  divergingIterates: { default: 1e20, help: "Status 'diverging' when max|x| exceeds this." },
  presolveSingletons: { default: true, help: "Turn linear equality rows in one variable (x_i = b) into fixed variables before solving." },
  unboundedObjective: { default: -1e20, help: "Status 'unbounded' when the unscaled objective falls below this at a feasible iterate." },
  warmStart: { default: null, help: "{ lambda, zL, zU, mu } of a previous solve (x from problem.x0); bound push shrinks to μ₀ ∈ [1e-9, 1e-2]." },
  onIteration: { default: null, help: "Callback receiving each IterationRecord (progress display)." },
  linearSolver: { default: null, help: "Factory (n, rows, cols, signs) of the symmetric indefinite solver; default sparse LDLᵀ (app/engine/sparse)." },
} as const;

/** Options that are objects or callbacks: passed through, not resolved. */
const PASS_THROUGH = new Set(["warmStart", "onIteration", "linearSolver"]);

/**
 * Algorithmic constants (not user options). Each cites its equation in W&B.
 */
export const CONSTANTS = {
  /** κ_ε: barrier subproblem solved when E_μ ≤ κ_ε μ, eq. (7) text. */
  kappaEpsilon: 10,
  /** κ_μ: linear decrease factor of μ, eq. (7). */
  kappaMu: 0.2,
  /** θ_μ: superlinear decrease exponent of μ, eq. (7). */
  thetaMu: 1.5,
  /** τ_min: fraction-to-the-boundary lower limit, eq. (8). */
  tauMin: 0.99,
  /** s_max: scaling threshold of the optimality error, eq. (5). */
  sMax: 100,
  /** κ_Σ: bound-multiplier safeguard, eq. (16). */
  kappaSigma: 1e10,
  /** γ_θ, γ_φ: filter margins, eq. (18). */
  gammaTheta: 1e-5,
  gammaPhi: 1e-8,
  /** δ, s_θ, s_φ: switching condition, eq. (19). */
  delta: 1,
  sTheta: 1.1,
  sPhi: 2.3,
  /** η_φ: Armijo constant, eq. (20). */
  etaPhi: 1e-8,
  /** γ_α: safety factor of the minimum step α_min, eq. (23). */
  gammaAlpha: 0.05,
  /** θ_max = 1e4 max(1, θ(x_0)), θ_min = 1e-4 max(1, θ(x_0)), §3.2 (after eq. (21)). */
  thetaMaxFact: 1e4,
  thetaMinFact: 1e-4,
  /** p_max and κ_soc: second-order correction, §2.4. */
  maxSoc: 4,
  kappaSoc: 0.99,
  /** Backtracking factor 1/2 of α, Algorithm A step. */
  alphaReduction: 0.5,
  /** κ_1, κ_2: bound push and fraction, §3.6 eq. (30)-(31). */
  kappa1: 1e-2,
  kappa2: 1e-2,
  /** λ_max: least-squares multiplier estimate discarded above this, §3.6 text after eq. (36). */
  lambdaMax: 1e3,
  /** κ_d: damping of one-sided bounded variables in φ_μ, §3.7. */
  kappaD: 1e-5,
  /** Inertia correction, Algorithm IC §3.1: δ̄_w^0, δ̄_w^min, δ̄_w^max, κ_w^-, κ_w^+, κ̄_w^+, δ̄_c, κ_c. */
  deltaW0: 1e-4,
  deltaWMin: 1e-20,
  deltaWMax: 1e40,
  kappaWMinus: 1 / 3,
  kappaWPlus: 8,
  kappaWPlusBar: 100,
  deltaCBar: 1e-8,
  kappaC: 0.25,
  /** Restoration phase §3.3: ρ (penalty, eq. (30) of the restoration problem), κ_resto (required θ reduction). */
  rho: 1000,
  kappaResto: 0.9,
  /**
   * Watchdog (Chamberlain, Powell, Lemaréchal and Pedersen, "The watchdog technique for forcing
   * convergence in algorithms for constrained optimization", Math. Programming Study 16, 1982):
   * after this many consecutive shortened steps, full steps are taken tentatively for at most
   * watchdogTrialIterMax iterations (trigger values: common practice, no source).
   */
  watchdogShortenedIterTrigger: 10,
  watchdogTrialIterMax: 3,
  /**
   * Final steps toward μ_f after the KKT test is met while the duality gap is above gapTol
   * (ipm.ts, gap.ts); at most this many (common practice, no source). 8 was one or two short on
   * kestrel-2-ascent and Goddard v ≤ 0.1 at 240 intervals (9–10 needed, measured 2026-12-02).
   */
  maxFinalSteps: 20,
  /**
   * The final steps are abandoned (back to the best converged point) after this many steps in a
   * row that neither halved the gap since the last progress nor gave a better converged point
   * (common practice, no source). Measured 2026-12-02, COPS Goddard Hermite–Simpson: at N = 3,200
   * the gap fell from 9.6e-5 to 1.1e-9 in 7 steps and then rose while the scaled KKT error stayed
   * at 5e-6 … 1e-5 (the coast arc's mass on its bound is a degenerate active bound), so 13 more
   * steps bought nothing; at N = 400 the steps that do converge (gap 4.8e-6 → 1.2e-10) never go
   * three in a row without progress.
   */
  finalStallSteps: 5,
  /**
   * Multipliers estimated for a final-step point (multiplier-estimate.ts) move z only where the
   * stationarity residual exceeds this fraction of tol, and raise one only while its s·z stays
   * within the same fraction of tol (common practice, no source; measured 2026-12-04, COPS Goddard
   * Hermite–Simpson: at N = 1,600 every component moved gave Σ s z = 1.6e-6, those above tol/2 gave
   * 5e-9 with the scaled KKT error still ≤ tol; at N = 250 the cap on s·z is what brought the
   * complementarity from 1.4e-8 … 1.6e-8 to within tol).
   */
  estimateAbsorbFraction: 0.5,
  /** Smallest slack the final steps leave, in units of ε_mach · max(1, |bound|) (common practice, no source). */
  finalSlackUlps: 100,
  /** Fraction to the boundary of the final steps (1 − μ_f would round to 1; common practice, no source). */
  tauFinal: 1 - 1e-6,
  /**
   * Final steps: a bound multiplier whose full update crosses zero by at most this × tol is cut at
   * (1 − τ) of itself instead of shortening everyone's dual step (bound-multipliers.ts). Our choice,
   * no source: 1e-3, 1e-2 and 1e-1 gave 245, 244 and 244 iterations over COPS Goddard trapezoidal
   * N = 50 … 3,200 (255 before).
   */
  finalDualClip: 1e-3,
  /** Bound relaxation kept in the final steps, as a fraction of boundRelaxFactor (common practice, no source). */
  finalRelaxShrink: 1e-5,
  /**
   * 'acceptable' while the objective still moves (acceptableObjChangeTol not met) only after this
   * many × acceptableIter acceptable iterates in a row, so a solve that creeps at the objective
   * change limit cannot run to maxIter (common practice, no source; kestrel-2-ascent HS N = 240
   * crept by 2e-9…2.5e-8 of |f| per iteration for 40 iterations, then converged in 5).
   */
  acceptableStallFactor: 4,
  /** Bound multipliers larger than this after restoration are reset to 1 (common practice, no source). */
  boundMultResetThreshold: 1e3,
} as const;

export interface ResolvedOptions {
  tol: number;
  gapTol: number;
  acceptableTol: number;
  acceptableIter: number;
  acceptableObjChangeTol: number;
  maxIter: number;
  maxSeconds: number;
  muInit: number;
  hessian: "exact" | "limited-memory";
  printLevel: number;
  constrViolTol: number;
  dualInfTol: number;
  complInfTol: number;
  boundRelaxFactor: number;
  nlpScalingMaxGradient: number;
  lbfgsMemory: number;
  divergingIterates: number;
  unboundedObjective: number;
  presolveSingletons: boolean;
}

/** Fill defaults; throws a plain Error naming the field for a bad value (caught by solveNlp). */
export function resolveOptions(o: NlpOptions | undefined): ResolvedOptions {
  const r = {} as Record<string, unknown>;
  const given = (o ?? {}) as Record<string, unknown>;
  for (const [k, spec] of Object.entries(OPTION_SPECS)) {
    if (PASS_THROUGH.has(k)) continue;
    const v = given[k];
    r[k] = v === undefined ? spec.default : v;
  }
  const res = r as unknown as ResolvedOptions;
  const positive: (keyof ResolvedOptions)[] = ["tol", "acceptableTol", "muInit", "nlpScalingMaxGradient", "maxSeconds"];
  for (const k of positive) {
    const v = res[k] as number;
    if (typeof v !== "number" || !(v > 0)) throw new Error(`options.${k}: must be a positive number, got ${String(v)}`);
  }
  if (typeof res.acceptableObjChangeTol !== "number" || !(res.acceptableObjChangeTol >= 0)) throw new Error(`options.acceptableObjChangeTol: must be a non-negative number, got ${String(res.acceptableObjChangeTol)}`);
  if (typeof res.gapTol !== "number" || !(res.gapTol >= 0)) throw new Error(`options.gapTol: must be a non-negative number, got ${String(res.gapTol)}`);
  if (!Number.isInteger(res.maxIter) || res.maxIter < 0) throw new Error(`options.maxIter: must be a non-negative integer, got ${res.maxIter}`);
  if (!Number.isInteger(res.acceptableIter) || res.acceptableIter < 0) throw new Error(`options.acceptableIter: must be a non-negative integer`);
  if (!Number.isInteger(res.lbfgsMemory) || res.lbfgsMemory < 1) throw new Error(`options.lbfgsMemory: must be a positive integer`);
  if (res.hessian !== "exact" && res.hessian !== "limited-memory") throw new Error(`options.hessian: must be "exact" or "limited-memory", got ${String(res.hessian)}`);
  return res;
}

/** A default as DEVELOPERS.md prints it ("1e-8", "none", "\"exact\""). */
export function formatDefault(v: unknown): string {
  if (v === null) return "none";
  if (typeof v === "string") return `"${v}"`;
  if (typeof v === "number" && v !== 0 && Number.isFinite(v) && (Math.abs(v) < 1e-3 || Math.abs(v) >= 1e5)) return v.toExponential().replace("e+", "e");
  return String(v);
}
