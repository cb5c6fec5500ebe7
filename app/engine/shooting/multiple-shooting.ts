/**
 * Indirect multiple shooting on a given arc structure (Bulirsch's method; Stoer and Bulirsch,
 * Introduction to Numerical Analysis, 3rd ed., 2002, §7.3.5; junction conditions as in Maurer,
 * "Numerical solution of singular control problems using multiple shooting techniques", JOTA 18,
 * 1976, and Bryson and Ho 1975, §3.11 for state constraints).
 *
 * Arcs a = 0..A−1 on [T_a, T_{a+1}] (T_0 = t0, T_A = tf), arc a split into M_a equal segments;
 * segment k starts at node y_k = (x, λ) ∈ ℝ^{2nx}. Unknowns
 *   z = [y_0 … y_{K−1} | T_1 … T_{A−1} | tf (free) | ν (active endpoint rows) | π (boundary entries)]
 * Conditions F(z) = 0:
 *   continuity        y_{k+1} − Φ_k(y_k)  (with the costate jump −Σ π_i ∇ₓS⁽ⁱ⁾ at a boundary entry)
 *   junctions         σ_j = 0 between opposite bang arcs; ∂H/∂u_j(u_j = bound) = 0 between a bang
 *                     and an interior arc; σ = … = σ⁽²ᵖ⁻¹⁾ = 0 entering a singular arc (also from a
 *                     boundary arc); tangency S = … = S⁽ᵖ⁻¹⁾ = 0 entering a boundary arc, and at its
 *                     entry and exit continuity of u (next to an interior arc) or of H (otherwise);
 *                     no condition when leaving a singular arc, also into a boundary arc (there
 *                     H-continuity holds identically)
 *   endpoints         b_r(e) = target_r on active rows; λ(t0) = −∂Φ/∂x(t0), λ(tf) = ∂Φ/∂x(tf),
 *                     H(tf) = −∂Φ/∂tf when tf is free, Φ = s·φ + νᵀ b     (Bryson and Ho, eq. (2.8.14))
 * Φ_k is the ODEX flow of ẋ = f, λ̇ = −∂H̃/∂x with the arc's control law (control-law.ts).
 * The Jacobian's node columns come from the variational equations of each segment (variational.ts)
 * combined with central differences of the cheap closed-form assembly; junction-time, tf, ν and π
 * columns by forward differences re-integrating only the segments an unknown touches (option
 * `jacobian: "differences"` does this for every column, the former method).
 */
import { Matrix, SingularValueDecomposition } from "ml-matrix";
import type { CompiledProblem } from "../problem/types";
import type { ArcKind } from "../arcs/types";
import { ArcControlLaw, type ArcControlSpec, type ControlGuess } from "./control-law";
import { denseJacobian, type ConstraintSide, type OptimalityConditions } from "./conditions";
import { integrateSegment } from "./integrate";
import { segmentSensitivity } from "./variational";

export interface ShootingArc {
  kinds: ArcKind[];
  constraint: ConstraintSide | null;
  /**
   * Labels per control for reports ("boundary:q" for every control detected on the boundary arc,
   * although only the first carries the constraint in the control law). Defaults to the kinds.
   */
  labels?: string[];
}

export interface ShootingSeed {
  arcs: ShootingArc[];
  /** Interior junction times T_1..T_{A−1}. */
  junctions: number[];
  tf: number;
  state: (t: number, out: Float64Array) => void;
  costate: (t: number, out: Float64Array) => void;
  control: ControlGuess;
}

export interface ShootingOptions {
  /** Total number of shooting segments (at least one per arc). Default 12. */
  segments?: number;
  /** ODEX tolerance. Default 1e-12. */
  integrationTol?: number;
  /** An endpoint inequality is active when within activeTol·(1 + |bound|) of it. Default 1e-6. */
  activeTol?: number;
  /**
   * Shooting Jacobian: "differences" (forward differences, re-integrating the segments an unknown
   * touches) or "variational" (node columns from the variational equations Φ̇ = A(t)Φ integrated
   * with the segment, A the exact derivative of the right-hand side including the control law's
   * implicit dependence on (x, λ); see jacobianVariational). Default "variational".
   */
  jacobian?: "differences" | "variational";
}

interface ActiveRow {
  row: number;
  target: number;
}

interface BoundaryEntry {
  arc: number;
  offset: number;
  order: number;
}

export class MultipleShooting {
  readonly problem: CompiledProblem;
  readonly oc: OptimalityConditions;
  readonly arcs: ShootingArc[];
  readonly laws: ArcControlLaw[];
  readonly specs: ArcControlSpec[];
  readonly segArc: number[];
  readonly segIndex: number[];
  readonly segCount: number[];
  readonly n2: number;
  readonly K: number;
  readonly offT: number;
  readonly offTf: number;
  readonly offNu: number;
  readonly offPi: number;
  readonly nz: number;
  readonly freeTf: boolean;
  readonly active: ActiveRow[];
  readonly entries: BoundaryEntry[];
  readonly t0: number;
  readonly tol: number;
  readonly z0: Float64Array;
  readonly jacobianKind: "differences" | "variational";
  private flows: Float64Array[];
  nEvalTotal = 0;

  constructor(problem: CompiledProblem, oc: OptimalityConditions, seed: ShootingSeed, options: ShootingOptions = {}) {
    this.problem = problem;
    this.oc = oc;
    this.arcs = seed.arcs;
    const A = seed.arcs.length;
    const { nx, nu } = problem;
    this.n2 = 2 * nx;
    this.t0 = problem.horizon.t0;
    this.freeTf = problem.horizon.kind === "free";
    this.tol = options.integrationTol ?? 1e-12;
    this.jacobianKind = options.jacobian ?? "variational";
    if (seed.junctions.length !== A - 1) throw new Error(`shooting (${problem.id}): ${A} arcs need ${A - 1} junction times, got ${seed.junctions.length}`);
    this.specs = seed.arcs.map((arc) => ({
      kinds: arc.kinds,
      constraint: arc.constraint ? oc.constraintDerivatives(arc.constraint) : null,
      singular: arc.kinds.map((k, j) => (k === "singular" ? oc.singularDerivatives(j) : null)),
    }));
    this.laws = this.specs.map((s) => new ArcControlLaw(oc, s, seed.control));
    // Segments per arc, proportional to the arc's length.
    const T = [this.t0, ...seed.junctions, seed.tf];
    const total = Math.max(options.segments ?? 12, A);
    const span = seed.tf - this.t0;
    this.segCount = [];
    for (let a = 0; a < A; a++) this.segCount.push(Math.max(1, Math.round((total * (T[a + 1] - T[a])) / span)));
    this.segArc = [];
    this.segIndex = [];
    for (let a = 0; a < A; a++) for (let i = 0; i < this.segCount[a]; i++) {
      this.segArc.push(a);
      this.segIndex.push(i);
    }
    this.K = this.segArc.length;
    this.offT = this.n2 * this.K;
    this.offTf = this.offT + (A - 1);
    this.offNu = this.offTf + (this.freeTf ? 1 : 0);
    // Active endpoint rows from the direct solution's endpoint values.
    const nE = 2 + 2 * nx;
    const e = new Float64Array(nE);
    e[0] = this.t0;
    const xa = new Float64Array(nx);
    seed.state(this.t0, xa);
    e.set(xa, 1);
    e[1 + nx] = seed.tf;
    seed.state(seed.tf, xa);
    e.set(xa, 2 + nx);
    const b = new Float64Array(problem.endpointInfo.length);
    problem.endpoint.eval(e, b);
    const atol = options.activeTol ?? 1e-6;
    this.active = [];
    problem.endpointInfo.forEach((info, r) => {
      if (info.lower === info.upper) this.active.push({ row: r, target: info.lower });
      else if (Number.isFinite(info.lower) && Math.abs(b[r] - info.lower) <= atol * (1 + Math.abs(info.lower))) this.active.push({ row: r, target: info.lower });
      else if (Number.isFinite(info.upper) && Math.abs(b[r] - info.upper) <= atol * (1 + Math.abs(info.upper))) this.active.push({ row: r, target: info.upper });
    });
    this.offPi = this.offNu + this.active.length;
    this.entries = [];
    let off = this.offPi;
    for (let a = 1; a < A; a++) {
      const c = this.specs[a].constraint;
      if (c && !sameConstraint(this.arcs[a - 1].constraint, this.arcs[a].constraint) && c.order > 0) {
        this.entries.push({ arc: a, offset: off, order: c.order });
        off += c.order;
      }
    }
    this.nz = off;
    // Initial unknowns.
    const z = new Float64Array(this.nz);
    const lam = new Float64Array(nx);
    for (let k = 0; k < this.K; k++) {
      const tk = this.nodeTime(k, T);
      seed.state(tk, xa);
      seed.costate(tk, lam);
      z.set(xa, this.n2 * k);
      z.set(lam, this.n2 * k + nx);
    }
    for (let a = 1; a < A; a++) z[this.offT + a - 1] = T[a];
    if (this.freeTf) z[this.offTf] = seed.tf;
    const nuSeed = this.seedMultipliers(e, seed);
    for (let r = 0; r < this.active.length; r++) z[this.offNu + r] = nuSeed[r];
    this.z0 = z;
    this.flows = Array.from({ length: this.K }, () => new Float64Array(this.n2));
  }

  /**
   * Least-squares seed of ν from the transversality conditions with the seed's costates:
   *   min_ν ‖λ(t0) + s∂φ/∂x0 + (∂b/∂x0)ᵀν‖² + ‖λ(tf) − s∂φ/∂xf − (∂b/∂xf)ᵀν‖².
   */
  private seedMultipliers(e: Float64Array, seed: ShootingSeed): number[] {
    const p = this.problem;
    const nx = p.nx;
    const nE = e.length;
    const na = this.active.length;
    if (na === 0) return [];
    const gphi = new Float64Array(nE);
    if (p.terminalCost) denseJacobian(p.terminalCost, e, new Float64Array(p.terminalCost.jacRows.length), gphi);
    const Jb = new Float64Array(p.endpointInfo.length * nE);
    denseJacobian(p.endpoint, e, new Float64Array(p.endpoint.jacRows.length), Jb);
    const l0 = new Float64Array(nx);
    const lf = new Float64Array(nx);
    seed.costate(e[0], l0);
    seed.costate(e[1 + nx], lf);
    const M = new Matrix(2 * nx, na);
    const rhs = new Matrix(2 * nx, 1);
    for (let i = 0; i < nx; i++) {
      rhs.set(i, 0, -(l0[i] + p.objectiveSign * gphi[1 + i]));
      rhs.set(nx + i, 0, lf[i] - p.objectiveSign * gphi[2 + nx + i]);
      this.active.forEach((r, q) => {
        M.set(i, q, Jb[r.row * nE + 1 + i]);
        M.set(nx + i, q, Jb[r.row * nE + 2 + nx + i]);
      });
    }
    const sol = new SingularValueDecomposition(M, { autoTranspose: true }).solve(rhs);
    return sol.to1DArray().map((v) => (Number.isFinite(v) ? v : 0));
  }

  /** T_0..T_A from z (or from a given time list). */
  times(z: Float64Array): number[] {
    const A = this.arcs.length;
    const T = [this.t0];
    for (let a = 1; a < A; a++) T.push(z[this.offT + a - 1]);
    T.push(this.freeTf ? z[this.offTf] : (this.problem.horizon as { tf: number }).tf);
    return T;
  }

  nodeTime(k: number, T: number[]): number {
    const a = this.segArc[k];
    return T[a] + (this.segIndex[k] / this.segCount[a]) * (T[a + 1] - T[a]);
  }

  segmentEnd(k: number, T: number[]): number {
    const a = this.segArc[k];
    return T[a] + ((this.segIndex[k] + 1) / this.segCount[a]) * (T[a + 1] - T[a]);
  }

  /** ẏ on arc a; w is a workspace of length nW. */
  rhs(a: number, w: Float64Array, dyOut: Float64Array, t: number, y: Float64Array): boolean {
    const { nx } = this.problem;
    w[0] = t;
    for (let i = 0; i < nx; i++) {
      w[1 + i] = y[i];
      w[this.oc.iL + i] = y[nx + i];
    }
    if (!this.laws[a].solve(w)) return false;
    const spec = this.specs[a];
    (spec.constraint ? spec.constraint.flow : this.oc.flow).eval(w, dyOut);
    return true;
  }

  private integrate(k: number, z: Float64Array, T: number[], record?: (t: number, y: Float64Array) => void): boolean {
    const a = this.segArc[k];
    const w = new Float64Array(this.oc.nW);
    const res = integrateSegment(
      (t, y, dy) => this.rhs(a, w, dy, t, y),
      this.nodeTime(k, T),
      z.subarray(this.n2 * k, this.n2 * (k + 1)),
      this.segmentEnd(k, T),
      { tol: this.tol, record },
    );
    this.nEvalTotal += res.nEval;
    this.flows[k].set(res.y);
    return res.ok;
  }

  /** w at (t, y) with arc a's control law; null when the law fails. */
  private point(a: number, t: number, y: ArrayLike<number>): Float64Array | null {
    const { nx } = this.problem;
    const w = new Float64Array(this.oc.nW);
    w[0] = t;
    for (let i = 0; i < nx; i++) {
      w[1 + i] = y[i];
      w[this.oc.iL + i] = y[nx + i];
    }
    return this.laws[a].solve(w) ? w : null;
  }

  private validTimes(T: number[]): boolean {
    for (let a = 0; a + 1 < T.length; a++) if (!(T[a + 1] > T[a])) return false;
    return T.every(Number.isFinite);
  }

  /** F(z) from cached flows (recomputing the segments listed, all when `only` is undefined). */
  evaluate(z: Float64Array, only?: number[]): Float64Array | null {
    const T = this.times(z);
    if (!this.validTimes(T)) return null;
    const list = only ?? Array.from({ length: this.K }, (_, k) => k);
    for (const k of list) if (!this.integrate(k, z, T)) return null;
    return this.assemble(z, T);
  }

  private assemble(z: Float64Array, T: number[]): Float64Array | null {
    const { nx, nu } = this.problem;
    const oc = this.oc;
    const F: number[] = [];
    const n2 = this.n2;
    const jumpOf = (a: number) => this.entries.find((e) => e.arc === a);
    // Continuity and junctions.
    for (let k = 0; k + 1 < this.K; k++) {
      const a = this.segArc[k];
      const b = this.segArc[k + 1];
      const yPlus = z.subarray(n2 * (k + 1), n2 * (k + 2));
      const yMinus = Float64Array.from(this.flows[k]);
      const tj = T[b];
      if (a !== b) {
        const entry = jumpOf(b);
        if (entry) {
          const cd = this.specs[b].constraint!;
          const w = new Float64Array(oc.nW);
          w[0] = tj;
          for (let i = 0; i < nx; i++) w[1 + i] = yMinus[i];
          const J = new Float64Array(cd.fn.nOut * oc.nW);
          denseJacobian(cd.fn, w, new Float64Array(cd.fn.jacRows.length), J);
          for (let q = 0; q < entry.order; q++) {
            const pi = z[entry.offset + q];
            for (let i = 0; i < nx; i++) yMinus[nx + i] -= pi * J[q * oc.nW + 1 + i];
          }
        }
      }
      for (let i = 0; i < n2; i++) F.push(yPlus[i] - yMinus[i]);
      if (a !== b) {
        const eq = this.junction(a, b, tj, this.flows[k], yPlus);
        if (!eq) return null;
        F.push(...eq);
      }
    }
    // Singular arc from t0.
    const first = this.point(0, T[0], z.subarray(0, n2));
    if (!first) return null;
    this.specs[0].singular.forEach((s) => {
      if (!s) return;
      const v = new Float64Array(s.fn.nOut);
      s.fn.eval(first, v);
      for (let q = 0; q < 2 * s.order; q++) F.push(v[q]);
    });
    // Endpoint conditions.
    const nE = 2 + 2 * nx;
    const e = new Float64Array(nE);
    const yf = this.flows[this.K - 1];
    e[0] = T[0];
    for (let i = 0; i < nx; i++) e[1 + i] = z[i];
    e[1 + nx] = T[T.length - 1];
    for (let i = 0; i < nx; i++) e[2 + nx + i] = yf[i];
    const gradPhi = new Float64Array(nE);
    const p = this.problem;
    if (p.terminalCost) {
      const J = new Float64Array(nE);
      denseJacobian(p.terminalCost, e, new Float64Array(p.terminalCost.jacRows.length), J);
      for (let c = 0; c < nE; c++) gradPhi[c] = p.objectiveSign * J[c];
    }
    const nb = p.endpointInfo.length;
    const bval = new Float64Array(nb);
    const Jb = new Float64Array(nb * nE);
    if (nb > 0) {
      p.endpoint.eval(e, bval);
      denseJacobian(p.endpoint, e, new Float64Array(p.endpoint.jacRows.length), Jb);
    }
    this.active.forEach((r, q) => {
      const nuR = z[this.offNu + q];
      for (let c = 0; c < nE; c++) gradPhi[c] += nuR * Jb[r.row * nE + c];
      F.push(bval[r.row] - r.target);
    });
    for (let i = 0; i < nx; i++) F.push(z[nx + i] + gradPhi[1 + i]);
    for (let i = 0; i < nx; i++) F.push(yf[nx + i] - gradPhi[2 + nx + i]);
    if (this.freeTf) {
      const wf = this.point(this.arcs.length - 1, T[T.length - 1], yf);
      if (!wf) return null;
      const h = new Float64Array(1);
      oc.hamiltonian.eval(wf, h);
      F.push(h[0] + gradPhi[1 + nx]);
    }
    void nu;
    const out = Float64Array.from(F);
    return out.every(Number.isFinite) ? out : null;
  }

  /** Junction equations between arc a (left limit yMinus, before any jump) and arc b (yPlus). */
  private junction(a: number, b: number, tj: number, yMinus: Float64Array, yPlus: Float64Array): number[] | null {
    const oc = this.oc;
    const A = this.arcs[a];
    const B = this.arcs[b];
    const wm = this.point(a, tj, yMinus);
    const wp = this.point(b, tj, yPlus);
    if (!wm || !wp) return null;
    const out: number[] = [];
    const { nu } = this.problem;
    const controls = this.problem.controls;
    const boundaryControl = (arc: ShootingArc) => (arc.constraint ? arc.kinds.findIndex((k) => k === "boundary") : -1);
    const jB = boundaryControl(B);
    const jA = boundaryControl(A);
    const continuity = (j: number, otherKind: ArcKind) => {
      if (otherKind === "interior" || otherKind === "boundary") {
        out.push(wm[oc.iU + j] - wp[oc.iU + j]);
      } else {
        const hm = new Float64Array(1);
        const hp = new Float64Array(1);
        oc.hamiltonian.eval(wm, hm);
        oc.hamiltonian.eval(wp, hp);
        out.push(hm[0] - hp[0]);
      }
    };
    const singularEntry = (j: number) => {
      const s = this.specs[b].singular[j]!;
      const v = new Float64Array(s.fn.nOut);
      s.fn.eval(wp, v);
      for (let q = 0; q < 2 * s.order; q++) out.push(v[q]);
    };
    if (B.constraint && !sameConstraint(A.constraint, B.constraint)) {
      const cd = this.specs[b].constraint!;
      const v = new Float64Array(cd.fn.nOut);
      cd.fn.eval(wp, v);
      for (let q = 0; q < cd.order; q++) out.push(v[q]);
      // From a singular arc (σ ≡ 0) H-continuity holds identically and no condition is added: as
      // at any exit from a singular arc, the rest of the system fixes the time.
      if (A.kinds[jB] !== "singular") continuity(jB, A.kinds[jB]);
    } else if (A.constraint && !sameConstraint(A.constraint, B.constraint)) {
      // Into a singular arc: its entry conditions σ = … = σ⁽²ᵖ⁻¹⁾ = 0 (H-continuity follows).
      if (B.kinds[jA] === "singular") singularEntry(jA);
      else continuity(jA, B.kinds[jA]);
    }
    const hu = new Float64Array(nu);
    for (let j = 0; j < nu; j++) {
      if (j === jB || j === jA) continue;
      const ka = A.kinds[j];
      const kb = B.kinds[j];
      if (ka === kb) continue;
      const bang = (k: ArcKind) => k === "lower" || k === "upper";
      if (kb === "singular") {
        singularEntry(j);
      } else if (ka === "singular") {
        // Exit from a singular arc: no condition (the exit time is fixed by the rest).
      } else if (bang(ka) && bang(kb)) {
        oc.hu.eval(wp, hu);
        out.push(hu[j]);
      } else if (bang(ka) || bang(kb)) {
        const w = Float64Array.from(wp);
        w[oc.iU + j] = bang(ka) ? (ka === "lower" ? controls[j].lower : controls[j].upper) : (kb === "lower" ? controls[j].lower : controls[j].upper);
        oc.hu.eval(w, hu);
        out.push(hu[j]);
      } else {
        out.push(wm[oc.iU + j] - wp[oc.iU + j]);
      }
    }
    return out;
  }

  /** Jacobian of F at z by the configured method (F = F(z) already evaluated, flows current). */
  jacobian(z: Float64Array, Fz: Float64Array): Matrix | null {
    return this.jacobianKind === "variational" ? this.jacobianVariational(z, Fz) : this.jacobianDifferences(z, Fz);
  }

  /**
   * Jacobian with the node columns from the variational equations: for node unknown j of segment
   * k, F depends on y_k directly (continuity, junction and endpoint rows read z) and through the
   * flow Φ_k(y_k); the column is the central difference of the assembly alone (no integration)
   * along (e_j, Φ_k e_j): [F(z + h e_j, flows + hΦe_j) − F(z − h e_j, flows − hΦe_j)] / 2h, whose
   * error is O(h²) in smooth closed-form functions (h = 1e-6·max(1, |z_j|): common practice, no
   * source) instead of the O(h) + integration-noise/h of differencing the flows. Junction-time,
   * tf, ν and π columns (a few) keep forward differences with re-integration.
   */
  jacobianVariational(z: Float64Array, Fz: Float64Array): Matrix | null {
    const m = Fz.length;
    const T = this.times(z);
    const base = this.flows.map((f) => Float64Array.from(f));
    const J = new Matrix(m, this.nz);
    const n2 = this.n2;
    const zp = Float64Array.from(z);
    for (let k = 0; k < this.K; k++) {
      const v = segmentSensitivity(this, k, z, T);
      if (!v) return null;
      for (let jj = 0; jj < n2; jj++) {
        const j = n2 * k + jj;
        const h = 1e-6 * Math.max(1, Math.abs(z[j]));
        const side = (sgn: number): Float64Array | null => {
          zp[j] = z[j] + sgn * h;
          for (let i = 0; i < n2; i++) this.flows[k][i] = base[k][i] + sgn * h * v.Phi[i * n2 + jj];
          const F = this.evaluate(zp, []);
          zp[j] = z[j];
          this.flows[k].set(base[k]);
          return F;
        };
        const Fp = side(1);
        const Fm = side(-1);
        if (!Fp || !Fm || Fp.length !== m || Fm.length !== m) return null;
        for (let i = 0; i < m; i++) J.set(i, j, (Fp[i] - Fm[i]) / (2 * h));
      }
    }
    const rest = this.jacobianDifferences(z, Fz, this.offT);
    if (!rest) return null;
    for (let j = this.offT; j < this.nz; j++) for (let i = 0; i < m; i++) J.set(i, j, rest.get(i, j));
    return J;
  }

  /** Forward-difference Jacobian of F at z (F = F(z) already evaluated, flows current), columns from `from`. */
  jacobianDifferences(z: Float64Array, Fz: Float64Array, from = 0): Matrix | null {
    const m = Fz.length;
    const J = new Matrix(m, this.nz);
    const base = this.flows.map((f) => Float64Array.from(f));
    const A = this.arcs.length;
    const lastArcSegs: number[] = [];
    for (let k = 0; k < this.K; k++) if (this.segArc[k] === A - 1) lastArcSegs.push(k);
    const zp = Float64Array.from(z);
    for (let j = from; j < this.nz; j++) {
      let deps: number[];
      if (j < this.offT) deps = [Math.floor(j / this.n2)];
      else if (j < this.offTf) {
        const a = j - this.offT + 1; // junction T_a
        deps = [];
        for (let k = 0; k < this.K; k++) if (this.segArc[k] === a - 1 || this.segArc[k] === a) deps.push(k);
      } else if (j < this.offNu) deps = lastArcSegs;
      else deps = [];
      const h = 1e-7 * Math.max(1, Math.abs(z[j]));
      zp[j] = z[j] + h;
      const Fp = this.evaluate(zp, deps);
      zp[j] = z[j];
      for (const k of deps) this.flows[k].set(base[k]);
      if (!Fp || Fp.length !== m) return null;
      for (let i = 0; i < m; i++) J.set(i, j, (Fp[i] - Fz[i]) / h);
    }
    return J;
  }

  /**
   * Dense trajectory at every accepted ODEX step: t, x, λ, u per point. Junction times appear
   * twice (left and right limits, different arcs); segment boundaries inside an arc once.
   */
  trajectory(z: Float64Array): { t: number[]; x: number[][]; lambda: number[][]; u: number[][]; arc: number[] } | null {
    const { nx, nu } = this.problem;
    const T = this.times(z);
    const out = { t: [] as number[], x: [] as number[][], lambda: [] as number[][], u: [] as number[][], arc: [] as number[] };
    for (let k = 0; k < this.K; k++) {
      const a = this.segArc[k];
      const ok = this.integrate(k, z, T, (t, y) => {
        const n = out.t.length;
        if (n > 0 && out.arc[n - 1] === a && out.t[n - 1] === t) return; // segment boundary inside an arc
        const w = this.point(a, t, y);
        out.t.push(t);
        out.x.push(Array.from(y.subarray(0, nx)));
        out.lambda.push(Array.from(y.subarray(nx, 2 * nx)));
        out.u.push(w ? Array.from(w.subarray(this.oc.iU, this.oc.iU + nu)) : Array<number>(nu).fill(NaN));
        out.arc.push(a);
      });
      if (!ok) return null;
    }
    return out;
  }
}

function sameConstraint(a: ConstraintSide | null, b: ConstraintSide | null): boolean {
  return !!a && !!b && a.name === b.name && a.side === b.side;
}
