/**
 * Feasibility restoration phase, W&B 2006 §3.3. From the iterate w_R where the line search
 * failed, solve (with the same interior-point iteration, restoration disabled inside)
 *
 *   minimise   ρ Σ_j (p_j + n_j) + ζ/2 ‖D_R (w − w_R)‖²                       eq. (30)
 *   subject to c(w) − p + n = 0,   w_L ≤ w ≤ w_U,   p, n ≥ 0
 *
 * with ρ = 1000, ζ = √μ, D_R = diag(min(1, 1/|w_R,i|)). Start: p, n from eq. (33),
 *
 *   n_j = (μ − ρ c_j)/(2ρ) + √( ((μ − ρ c_j)/(2ρ))² + μ c_j/(2ρ) ),   p_j = c_j + n_j,
 *
 * μ_R = max(μ, ‖c(w_R)‖∞), λ = 0, z_w = min(ρ, z_k), z_p = μ_R/p, z_n = μ_R/n.
 * The phase ends as soon as w is acceptable to the (augmented) filter of the regular phase and
 * θ(w) ≤ κ_resto θ(w_R) (κ_resto = 0.9). If instead the restoration problem converges while
 * the constraint violation stays above constrViolTol, the point is a local minimiser of the
 * infeasibility: status "infeasible".
 *
 * Sizes: restoration variables (w, p, n) of length N + 2m, m constraints.
 */
import { CONSTANTS as C } from "./options";
import { ModelError, type InternalProblem } from "./internal";
import type { Filter } from "./filter";
import { runIpm, type IpmContext, type IpmOutcome, type IpmState } from "./ipm";
import { barrierValue } from "./barrier-function";

class RestorationProblem implements InternalProblem {
  readonly N: number;
  readonly m: number;
  readonly nX: number;
  readonly dualUnscale: number;
  readonly wL: Float64Array;
  readonly wU: Float64Array;
  readonly jRows: Int32Array;
  readonly jCols: Int32Array;
  readonly hRows: Int32Array;
  readonly hCols: Int32Array;
  private readonly nB: number;
  private readonly nnzJB: number;
  private readonly nnzHB: number;
  private readonly cB: Float64Array;
  private readonly hB: Float64Array;

  constructor(readonly base: InternalProblem, readonly wR: Float64Array, readonly zeta: number, readonly D2: Float64Array) {
    const N = base.N, m = base.m;
    this.nB = N;
    this.N = N + 2 * m;
    this.m = m;
    this.nX = base.nX;
    this.dualUnscale = base.dualUnscale;
    this.wL = new Float64Array(this.N).fill(0);
    this.wU = new Float64Array(this.N).fill(Infinity);
    this.wL.set(base.wL);
    this.wU.set(base.wU);
    this.nnzJB = base.jRows.length;
    this.jRows = new Int32Array(this.nnzJB + 2 * m);
    this.jCols = new Int32Array(this.nnzJB + 2 * m);
    this.jRows.set(base.jRows);
    this.jCols.set(base.jCols);
    for (let j = 0; j < m; j++) {
      this.jRows[this.nnzJB + j] = j; this.jCols[this.nnzJB + j] = N + j;               // −p_j
      this.jRows[this.nnzJB + m + j] = j; this.jCols[this.nnzJB + m + j] = N + m + j;   // +n_j
    }
    this.nnzHB = base.hRows.length;
    this.hRows = new Int32Array(this.nnzHB + N);
    this.hCols = new Int32Array(this.nnzHB + N);
    this.hRows.set(base.hRows);
    this.hCols.set(base.hCols);
    for (let i = 0; i < N; i++) { this.hRows[this.nnzHB + i] = i; this.hCols[this.nnzHB + i] = i; }
    this.cB = new Float64Array(m);
    this.hB = new Float64Array(this.nnzHB);
  }

  f(v: Float64Array): number {
    const N = this.nB, m = this.m;
    let pen = 0, prox = 0;
    for (let j = 0; j < 2 * m; j++) pen += v[N + j];
    for (let i = 0; i < N; i++) { const d = v[i] - this.wR[i]; prox += this.D2[i] * d * d; }
    return C.rho * pen + 0.5 * this.zeta * prox;
  }
  gradF(v: Float64Array, out: Float64Array): void {
    const N = this.nB;
    for (let i = 0; i < N; i++) out[i] = this.zeta * this.D2[i] * (v[i] - this.wR[i]);
    for (let j = N; j < this.N; j++) out[j] = C.rho;
  }
  c(v: Float64Array, out: Float64Array): void {
    this.base.c(v, out);
    const N = this.nB, m = this.m;
    for (let j = 0; j < m; j++) out[j] += -v[N + j] + v[N + m + j];
  }
  jac(v: Float64Array, out: Float64Array): void {
    this.base.jac(v, out);
    const m = this.m;
    for (let j = 0; j < m; j++) { out[this.nnzJB + j] = -1; out[this.nnzJB + m + j] = 1; }
  }
  hess(v: Float64Array, sigma: number, lambda: Float64Array, out: Float64Array): void {
    this.base.hess(v, 0, lambda, this.hB);
    out.set(this.hB, 0);
    for (let i = 0; i < this.nB; i++) out[this.nnzHB + i] = sigma * this.zeta * this.D2[i];
  }
  reportF(v: Float64Array): number {
    try {
      return this.base.reportF(v, this.base.f(v));
    } catch (e) {
      if (e instanceof ModelError) return NaN;
      throw e;
    }
  }
  reportInfPr(v: Float64Array, cw: Float64Array): number {
    const N = this.nB, m = this.m;
    for (let j = 0; j < m; j++) this.cB[j] = cw[j] + v[N + j] - v[N + m + j];
    return this.base.reportInfPr(v, this.cB);
  }
  /** θ(w) = ‖c(w)‖₁ and φ_μ(w) of the regular phase. */
  thetaPhi(v: Float64Array, mu: number, hasL: Uint8Array, hasU: Uint8Array): { theta: number; phi: number } {
    this.base.c(v, this.cB);
    let th = 0;
    for (let j = 0; j < this.m; j++) th += Math.abs(this.cB[j]);
    const fb = this.base.f(v);
    return { theta: th, phi: barrierValue(fb, v, this.base.wL, this.base.wU, hasL, hasU, mu) };
  }
}

/**
 * Run the restoration phase from st (w_R, z, μ). On "returned", st.w and st.zL/zU hold the new
 * point and st.lambda the restoration problem's multipliers of c(w) − p + n = 0 (bounded by ρ at
 * its solution); a least-squares re-estimate (eq. (36)) behaved the same on our problems.
 */
export function runRestoration(P: InternalProblem, st: IpmState, ctx: IpmContext, filter: Filter, hasL: Uint8Array, hasU: Uint8Array): IpmOutcome {
  const N = P.N, m = P.m;
  const mu = st.mu;
  const wR = Float64Array.from(st.w);
  const c = new Float64Array(m);
  try {
    P.c(wR, c);
  } catch (e) {
    if (e instanceof ModelError) return { status: "numerical_trouble", message: `restoration start: ${e.message}`, infPr: NaN, infDu: NaN };
    throw e;
  }
  let thetaR = 0, cMax = 0;
  for (let j = 0; j < m; j++) { thetaR += Math.abs(c[j]); cMax = Math.max(cMax, Math.abs(c[j])); }
  const D2 = new Float64Array(N);
  for (let i = 0; i < N; i++) { const d = Math.min(1, 1 / Math.max(Math.abs(wR[i]), 1e-300)); D2[i] = d * d; }
  const zeta = Math.sqrt(mu);
  const R = new RestorationProblem(P, wR, zeta, D2);
  const muR = Math.max(mu, cMax);
  const v = new Float64Array(R.N);
  v.set(wR);
  const zLR = new Float64Array(R.N), zUR = new Float64Array(R.N);
  const rho = C.rho;
  for (let i = 0; i < N; i++) { zLR[i] = Math.min(rho, st.zL[i]); zUR[i] = Math.min(rho, st.zU[i]); }
  for (let j = 0; j < m; j++) {
    const a = (muR - rho * c[j]) / (2 * rho);
    const nj = a + Math.sqrt(a * a + (muR * c[j]) / (2 * rho)); // eq. (33)
    const pj = c[j] + nj;
    v[N + j] = pj;
    v[N + m + j] = nj;
    zLR[N + j] = muR / pj;
    zLR[N + m + j] = muR / nj;
  }
  const rs: IpmState = { w: v, lambda: new Float64Array(m), zL: zLR, zU: zUR, mu: muR };
  const stopCheck = (vv: Float64Array): boolean => {
    try {
      const t = R.thetaPhi(vv, mu, hasL, hasU);
      return t.theta <= C.kappaResto * thetaR && filter.isAcceptable(t.theta, t.phi);
    } catch (e) {
      if (e instanceof ModelError) return false;
      throw e;
    }
  };
  const out = runIpm(R, rs, ctx, { phase: "restoration", allowRestoration: false, stopCheck });
  const vEnd = rs.w;
  const copyBack = () => {
    st.w.set(vEnd.subarray(0, N));
    st.lambda.set(rs.lambda);
    let zMax = 0;
    for (let i = 0; i < N; i++) {
      st.zL[i] = hasL[i] ? rs.zL[i] : 0;
      st.zU[i] = hasU[i] ? rs.zU[i] : 0;
      zMax = Math.max(zMax, st.zL[i], st.zU[i]);
    }
    if (zMax > C.boundMultResetThreshold) for (let i = 0; i < N; i++) { if (hasL[i]) st.zL[i] = 1; if (hasU[i]) st.zU[i] = 1; }
  };
  if (out.status === "returned") {
    copyBack();
    return out;
  }
  if (out.status === "optimal" || out.status === "acceptable") {
    const infPr = out.infPr;
    if (infPr > ctx.opts.constrViolTol) {
      copyBack(); // report the minimiser of the infeasibility, not the point restoration started from
      return { status: "infeasible", message: `converged to a point of local infeasibility: constraint violation ${infPr.toExponential(2)}`, infPr, infDu: out.infDu };
    }
    copyBack();
    return { status: "returned", message: "restoration reached a feasible point", infPr, infDu: out.infDu };
  }
  if (out.status === "iteration_limit" || out.status === "time_limit" || out.status === "invalid_model") return out;
  return { status: "numerical_trouble", message: `restoration phase failed: ${out.message}`, infPr: out.infPr, infDu: out.infDu };
}
