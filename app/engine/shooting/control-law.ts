/**
 * The control on one arc as a function of (t, x, λ), by arc kind per control
 * (Bryson and Ho 1975, §3.8–3.11, §8.3):
 *   lower / upper:  the bound value;
 *   interior:       the stationary point ∂H̃/∂u_j = 0 (pointwise Newton);
 *   singular:       σ_j⁽²ᵖ⁾(t, x, λ, u) = 0 (affine in u_j: Newton converges in one step);
 *   boundary:       S⁽ᵖ⁾(t, x, u) = 0 together with ∂H̃/∂u_j = 0, which gives the multiplier η.
 * The unknowns q = (non-bang controls, η on a boundary arc) solve the square system above by
 * Newton's method with the exact Jacobian of the compiled functions (tolerance 1e-14 relative on q). Starting
 * points, in order: the last solution of this law when it was computed at a time within 1 % of the
 * horizon (continuation along the integration: keeps the branch of periodic controls such as
 * steering angles), then the direct solution's control at t clamped to the bounds. A root where an
 * interior control has ∂²H̃/∂u_j² ≤ 0 (a maximum of H, violating Legendre–Clebsch) is rejected when
 * another starting point gives a minimum.
 */
import type { ArcKind } from "../arcs/types";
import type { PointFunction } from "../problem/types";
import { denseJacobian, type ConstraintDerivatives, type OptimalityConditions, type SingularDerivatives } from "./conditions";

export interface ArcControlSpec {
  kinds: ArcKind[];
  /** On a boundary arc: the constraint's derivatives. */
  constraint: ConstraintDerivatives | null;
  /** Singular derivatives of each control marked singular (null elsewhere). */
  singular: (SingularDerivatives | null)[];
}

/** Guess of the controls at time t (writes nu values). */
export type ControlGuess = (t: number, out: Float64Array) => void;

const MAX_NEWTON = 40;

export class ArcControlLaw {
  private readonly oc: OptimalityConditions;
  private readonly spec: ArcControlSpec;
  private readonly guess: ControlGuess;
  private readonly free: number[];
  private readonly nq: number;
  private readonly q: Float64Array;
  private readonly r: Float64Array;
  private readonly J: Float64Array;
  private readonly dq: Float64Array;
  private readonly ug: Float64Array;
  private readonly huBuf: Float64Array;
  private readonly spBuf: Float64Array;
  private readonly sgBuf: Float64Array[];
  private readonly lastQ: Float64Array;
  private lastT = NaN;
  private readonly window: number;
  private readonly hasInterior: boolean;

  constructor(oc: OptimalityConditions, spec: ArcControlSpec, guess: ControlGuess) {
    this.oc = oc;
    this.spec = spec;
    this.guess = guess;
    this.free = [];
    spec.kinds.forEach((k, j) => {
      if (k !== "lower" && k !== "upper") this.free.push(j);
    });
    this.nq = this.free.length + (spec.constraint ? 1 : 0);
    this.q = new Float64Array(this.nq);
    this.r = new Float64Array(this.nq);
    this.J = new Float64Array(this.nq * this.nq);
    this.dq = new Float64Array(this.nq);
    this.ug = new Float64Array(oc.nu);
    this.huBuf = new Float64Array(oc.nu);
    this.spBuf = new Float64Array(spec.constraint ? spec.constraint.order + 1 : 0);
    this.sgBuf = spec.singular.map((s) => new Float64Array(s ? 2 * s.order + 1 : 0));
    this.lastQ = new Float64Array(this.nq);
    this.hasInterior = this.free.some((j) => spec.kinds[j] === "interior");
    const h = oc.problem.horizon;
    this.window = 0.01 * Math.abs((h.kind === "fixed" ? h.tf : h.upper) - h.t0);
  }

  /** Number of unknowns the law solves for (free controls, plus η on a boundary arc). */
  get nUnknowns(): number {
    return this.nq;
  }

  /** Whether the arc has any control to solve for. */
  get trivial(): boolean {
    return this.nq === 0;
  }

  private residual(w: Float64Array, out: Float64Array): void {
    const { oc, spec, free } = this;
    const hu = spec.constraint ? spec.constraint.hu : oc.hu;
    hu.eval(w, this.huBuf);
    for (let a = 0; a < free.length; a++) {
      const j = free[a];
      const s = spec.singular[j];
      if (spec.kinds[j] === "singular" && s) {
        const buf = this.sgBuf[j];
        s.fn.eval(w, buf);
        out[a] = buf[buf.length - 1];
      } else {
        out[a] = this.huBuf[j];
      }
    }
    if (spec.constraint) {
      spec.constraint.fn.eval(w, this.spBuf);
      out[free.length] = this.spBuf[this.spBuf.length - 1];
    }
  }

  private load(w: Float64Array, q: Float64Array): void {
    const { oc, free } = this;
    for (let a = 0; a < free.length; a++) w[oc.iU + free[a]] = q[a];
    w[oc.iEta] = this.spec.constraint ? q[free.length] : 0;
  }

  /**
   * Fills w = [t, x, u, λ, η] given w's t, x and λ entries; returns false when Newton fails.
   */
  solve(w: Float64Array): boolean {
    const { oc, spec, free, nq, q } = this;
    const controls = oc.problem.controls;
    this.guess(w[0], this.ug);
    for (let j = 0; j < oc.nu; j++) {
      const k = spec.kinds[j];
      if (k === "lower") w[oc.iU + j] = controls[j].lower;
      else if (k === "upper") w[oc.iU + j] = controls[j].upper;
      else w[oc.iU + j] = Math.min(controls[j].upper, Math.max(controls[j].lower, this.ug[j]));
    }
    w[oc.iEta] = 0;
    if (nq === 0) return true;
    const starts: Float64Array[] = [];
    if (Math.abs(w[0] - this.lastT) <= this.window) starts.push(Float64Array.from(this.lastQ));
    const direct = new Float64Array(nq);
    for (let a = 0; a < free.length; a++) direct[a] = w[oc.iU + free[a]];
    if (spec.constraint) direct[free.length] = this.etaGuess(w);
    starts.push(direct);
    let fallback: Float64Array | null = null;
    for (const start of starts) {
      q.set(start);
      const r = this.newton(w);
      if (r === "fail") continue;
      if (r === "minimum") {
        this.lastQ.set(q);
        this.lastT = w[0];
        this.load(w, q);
        return true;
      }
      fallback ??= Float64Array.from(q);
    }
    if (!fallback) return false;
    q.set(fallback);
    this.load(w, q);
    return true;
  }

  /**
   * Least-squares multiplier for the guessed controls: η = −⟨∂H/∂u, ∂S⁽ᵖ⁾/∂u⟩ / ‖∂S⁽ᵖ⁾/∂u‖² (the
   * Newton matrix is singular at η = 0 when S⁽ᵖ⁾ is quadratic in u, e.g. a unit direction).
   */
  private etaGuess(w: Float64Array): number {
    const { oc } = this;
    const cd = this.spec.constraint!;
    w[oc.iEta] = 0;
    oc.hu.eval(w, this.huBuf);
    const J = new Float64Array(cd.fn.nOut * oc.nW);
    denseJacobian(cd.fn, w, new Float64Array(cd.fn.jacRows.length), J);
    const row = cd.order * oc.nW;
    let num = 0;
    let den = 0;
    for (let j = 0; j < oc.nu; j++) {
      const g = J[row + oc.iU + j];
      num += this.huBuf[j] * g;
      den += g * g;
    }
    return den > 0 ? -num / den : 0;
  }

  /** Newton from q; "minimum" when interior rows have ∂²H̃/∂u² > 0 at the root. */
  private newton(w: Float64Array): "minimum" | "stationary" | "fail" {
    const { spec, free, nq, q, r, J, dq } = this;
    let converged = false;
    for (let it = 0; it < MAX_NEWTON && !converged; it++) {
      this.load(w, q);
      this.residual(w, r);
      if (!r.every(Number.isFinite)) return "fail";
      this.jacobianAt(w);
      for (let a = 0; a < nq; a++) dq[a] = -r[a];
      if (!solveDense(J, dq, nq)) return "fail";
      let big = 0;
      for (let a = 0; a < nq; a++) {
        q[a] += dq[a];
        big = Math.max(big, Math.abs(dq[a]) / (1 + Math.abs(q[a])));
      }
      converged = big <= 1e-14;
    }
    this.load(w, q);
    if (!converged) {
      // Accept a stalled iteration whose residual is at rounding level.
      this.residual(w, r);
      let rn = 0;
      for (const v of r) rn = Math.max(rn, Math.abs(v));
      if (!(rn <= 1e-12)) return "fail";
    }
    if (!this.hasInterior) return "minimum";
    this.jacobianAt(w);
    for (let a = 0; a < free.length; a++) {
      if (spec.kinds[free[a]] === "interior" && !(J[a * nq + a] > 0)) return "stationary";
    }
    return "minimum";
  }

  /**
   * Exact Jacobian of the residual in q at the current q (into J), from the compiled Jacobians:
   * row a takes ∂/∂u_free and ∂/∂η of its function's output.
   */
  private jacobianAt(w: Float64Array): void {
    const { oc, spec, free, nq, J } = this;
    this.load(w, this.q);
    const hu = spec.constraint ? spec.constraint.hu : oc.hu;
    const col = (k: number) => (k < free.length ? oc.iU + free[k] : oc.iEta);
    const fill = (fn: PointFunction, row: number, a: number) => {
      const buf = this.jacBuf(fn);
      fn.jac(w, buf);
      for (let b = 0; b < nq; b++) J[a * nq + b] = 0;
      for (let k = 0; k < fn.jacRows.length; k++) {
        if (fn.jacRows[k] !== row) continue;
        const c = fn.jacCols[k];
        for (let b = 0; b < nq; b++) if (col(b) === c) J[a * nq + b] += buf[k];
      }
    };
    for (let a = 0; a < free.length; a++) {
      const j = free[a];
      const sd = spec.singular[j];
      if (spec.kinds[j] === "singular" && sd) fill(sd.fn, sd.fn.nOut - 1, a);
      else fill(hu, j, a);
    }
    if (spec.constraint) fill(spec.constraint.fn, spec.constraint.order, free.length);
  }

  /**
   * Sensitivity of the solved unknowns q (free controls, then η) to y = (x, λ) at the point w
   * just filled by solve(): dq/dy = −R_q⁻¹ R_y (implicit function theorem on the law's residual R),
   * with the exact compiled Jacobians. Writes nq × 2nx row-major into out; false when R_q is
   * singular. Also returns the w columns of q in `cols` (length nq).
   */
  sensitivity(w: Float64Array, out: Float64Array, cols: number[]): boolean {
    const { oc, spec, free, nq } = this;
    cols.length = 0;
    for (let a = 0; a < free.length; a++) cols.push(oc.iU + free[a]);
    if (spec.constraint) cols.push(oc.iEta);
    if (nq === 0) return true;
    const nx = oc.nx;
    const n2 = 2 * nx;
    const Rq = new Float64Array(nq * nq);
    const Ry = new Float64Array(nq * n2);
    const yCol = (c: number) => (c >= 1 && c <= nx ? c - 1 : c >= oc.iL && c < oc.iL + nx ? nx + (c - oc.iL) : -1);
    const hu = spec.constraint ? spec.constraint.hu : oc.hu;
    const fill = (fn: PointFunction, row: number, a: number) => {
      const buf = this.jacBuf(fn);
      fn.jac(w, buf);
      for (let k = 0; k < fn.jacRows.length; k++) {
        if (fn.jacRows[k] !== row) continue;
        const c = fn.jacCols[k];
        const b = cols.indexOf(c);
        if (b >= 0) Rq[a * nq + b] += buf[k];
        const y = yCol(c);
        if (y >= 0) Ry[a * n2 + y] += buf[k];
      }
    };
    for (let a = 0; a < free.length; a++) {
      const j = free[a];
      const sd = spec.singular[j];
      if (spec.kinds[j] === "singular" && sd) fill(sd.fn, sd.fn.nOut - 1, a);
      else fill(hu, j, a);
    }
    if (spec.constraint) fill(spec.constraint.fn, spec.constraint.order, free.length);
    // Solve R_q X = −R_y column by column.
    const col = new Float64Array(nq);
    const A = new Float64Array(nq * nq);
    for (let y = 0; y < n2; y++) {
      A.set(Rq);
      for (let a = 0; a < nq; a++) col[a] = -Ry[a * n2 + y];
      if (!solveDense(A, col, nq)) return false;
      for (let a = 0; a < nq; a++) out[a * n2 + y] = col[a];
    }
    return true;
  }

  private readonly jacBufs = new Map<PointFunction, Float64Array>();
  private jacBuf(fn: PointFunction): Float64Array {
    let b = this.jacBufs.get(fn);
    if (!b) {
      b = new Float64Array(fn.jacRows.length);
      this.jacBufs.set(fn, b);
    }
    return b;
  }
}

/** In-place Gaussian elimination with partial pivoting: A (n×n, row-major) x = b; b ← x. */
export function solveDense(A: Float64Array, b: Float64Array, n: number): boolean {
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(A[r * n + c]) > Math.abs(A[p * n + c])) p = r;
    if (!(Math.abs(A[p * n + c]) > 0)) return false;
    if (p !== c) {
      for (let k = 0; k < n; k++) {
        const t = A[c * n + k];
        A[c * n + k] = A[p * n + k];
        A[p * n + k] = t;
      }
      const t = b[c];
      b[c] = b[p];
      b[p] = t;
    }
    for (let r = c + 1; r < n; r++) {
      const m = A[r * n + c] / A[c * n + c];
      if (m === 0) continue;
      for (let k = c; k < n; k++) A[r * n + k] -= m * A[c * n + k];
      b[r] -= m * b[c];
    }
  }
  for (let c = n - 1; c >= 0; c--) {
    let s = b[c];
    for (let k = c + 1; k < n; k++) s -= A[c * n + k] * b[k];
    b[c] = s / A[c * n + c];
  }
  return true;
}
