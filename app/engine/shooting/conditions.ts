/**
 * Necessary conditions of optimality derived symbolically from the compiled problem
 * (Pontryagin's minimum principle; Bryson and Ho, Applied Optimal Control, 1975, §2.4, §3.3–3.11).
 *
 * With s = objectiveSign (the scheme minimises s·(φ + ∫L)) and λ0 = 1:
 *   H(t, x, u, λ) = s·L(t, x, u) + λᵀ f(t, x, u)                     (Bryson and Ho, eq. (2.3.4))
 *   ẋ = ∂H/∂λ = f,   λ̇ = −∂H/∂x                                      (eq. (2.3.6))
 * On a boundary arc of the constraint S(t, x) ≤ 0 of order p (u first appears in S⁽ᵖ⁾), the
 * indirect adjoining form is used (Bryson and Ho 1975, §3.11, eqs. (3.11.7)–(3.11.11)):
 *   H̃ = H + η S⁽ᵖ⁾,  u from S⁽ᵖ⁾ = 0,  η from ∂H̃/∂u = 0,  λ̇ = −∂H̃/∂x,
 * with tangency S = Ṡ = … = S⁽ᵖ⁻¹⁾ = 0 and the jump λ(t₁⁺) = λ(t₁⁻) − Σ_k π_k ∇ₓS⁽ᵏ⁾ at entry.
 * A mixed constraint c(t, x, u) (order 0) gives u from c = bound and the same H̃.
 * Singular arcs of control u_j (H affine in u_j): σ = ∂H/∂u_j ≡ 0 is differentiated along the
 * state–costate flow, D e = ∂e/∂t + Σ ∂e/∂x_i f_i − Σ ∂e/∂λ_i ∂H/∂x_i (controls held fixed),
 * until u_j appears, at derivative 2p (p the order of the arc; Bryson and Ho 1975, §8.3); the
 * singular control solves σ⁽²ᵖ⁾ = 0 and the entry conditions are σ = … = σ⁽²ᵖ⁻¹⁾ = 0.
 *
 * Everything is built in one expression DAG (app/engine/expr/dag.ts) over the input layout
 *   w = [t, x_1..x_nx, u_1..u_nu, λ_1..λ_nx, η]          (nW = 2 + 2nx + nu)
 * and compiled to PointFunctions with exact derivatives (app/engine/expr/codegen.ts).
 */
import type { CompiledProblem, PointFunction } from "../problem/types";
import { Dag } from "../expr/dag";
import { inputResolver, toDag } from "../expr/compile";
import { buildPointFunction } from "../expr/codegen";
import type { MathNode } from "mathjs";

/** A one-sided path or state constraint written as S(t, x[, u]) ≤ 0. */
export interface ConstraintSide {
  /** Name as in arc labels ("qmax", or a state name for a state bound). */
  name: string;
  /** +1: c ≤ upper (S = c − upper); −1: c ≥ lower (S = lower − c). */
  side: 1 | -1;
  bound: number;
  /** Index of the path constraint, or −1 − i for the bound of state i. */
  source: number;
}

export interface ConstraintDerivatives {
  constraint: ConstraintSide;
  /** Order p: the first derivative S⁽ᵖ⁾ in which a control appears (0 for mixed constraints). */
  order: number;
  /** Outputs [S, Ṡ, …, S⁽ᵖ⁾] over w. */
  fn: PointFunction;
  /** Outputs [f_1..f_nx, −∂H̃/∂x_1..nx] over w (H̃ = H + η S⁽ᵖ⁾). */
  flow: PointFunction;
  /** Outputs [∂H̃/∂u_1..nu] over w. */
  hu: PointFunction;
}

export interface SingularDerivatives {
  control: number;
  /** Order p: u_j appears first in σ⁽²ᵖ⁾. */
  order: number;
  /** Outputs [σ, σ̇, …, σ⁽²ᵖ⁾] over w. */
  fn: PointFunction;
}

/** Largest number of time derivatives tried before giving up on an order. */
const MAX_DERIVATIVES = 6;

export class OptimalityConditions {
  readonly problem: CompiledProblem;
  readonly nx: number;
  readonly nu: number;
  readonly nW: number;
  readonly iU: number;
  readonly iL: number;
  readonly iEta: number;
  readonly dag = new Dag();
  /** DAG nodes: H, f_i, ∂H/∂x_i, ∂H/∂u_j. */
  readonly H: number;
  readonly f: number[];
  readonly Hx: number[];
  readonly Hu: number[];
  /** Outputs [H] over w (η ignored). */
  readonly hamiltonian: PointFunction;
  /** Outputs [f, −∂H/∂x] over w. */
  readonly flow: PointFunction;
  /** Outputs [∂H/∂u] over w. */
  readonly hu: PointFunction;
  private readonly resolve: (name: string) => number | undefined;
  private readonly memo = new Map<MathNode, number>();
  private readonly singular = new Map<number, SingularDerivatives>();
  private readonly constraints = new Map<string, ConstraintDerivatives>();
  /** Sample inputs w used to decide whether a control appears in a derivative. */
  samples: Float64Array[] = [];

  constructor(problem: CompiledProblem) {
    this.problem = problem;
    const { nx, nu } = problem;
    this.nx = nx;
    this.nu = nu;
    this.iU = 1 + nx;
    this.iL = 1 + nx + nu;
    this.iEta = 1 + 2 * nx + nu;
    this.nW = 2 + 2 * nx + nu;
    const sym = problem.symbolic;
    if (sym.dynamics.length !== nx) {
      throw new Error(`shooting (${problem.id}): the compiled problem has no symbolic dynamics (${sym.dynamics.length} of ${nx})`);
    }
    const names = [...sym.pointInputs];
    for (let i = 0; i < nx; i++) names.push(`__lambda${i}`);
    names.push("__eta");
    this.resolve = inputResolver(this.dag, names, problem.constants);
    const d = this.dag;
    this.f = sym.dynamics.map((n) => this.node(n));
    let H = sym.runningCost ? d.mul(d.konst(problem.objectiveSign), this.node(sym.runningCost)) : d.zero;
    for (let i = 0; i < nx; i++) H = d.add(H, d.mul(d.variable(this.iL + i), this.f[i]));
    this.H = H;
    this.Hx = Array.from({ length: nx }, (_, i) => d.derivative(H, 1 + i));
    this.Hu = Array.from({ length: nu }, (_, j) => d.derivative(H, this.iU + j));
    this.hamiltonian = this.compile([H]);
    this.flow = this.compile([...this.f, ...this.Hx.map((n) => d.neg(n))]);
    this.hu = this.compile(this.Hu);
  }

  node(tree: MathNode): number {
    return toDag(this.dag, tree, this.resolve, this.memo);
  }

  compile(outputs: number[]): PointFunction {
    return buildPointFunction(this.dag, outputs, this.nW);
  }

  /** Total time derivative along the state–costate flow with the controls held fixed. */
  D(e: number): number {
    const d = this.dag;
    let r = d.derivative(e, 0);
    for (let i = 0; i < this.nx; i++) {
      r = d.add(r, d.mul(d.derivative(e, 1 + i), this.f[i]));
      r = d.sub(r, d.mul(d.derivative(e, this.iL + i), this.Hx[i]));
    }
    return r;
  }

  /** Whether control j appears in node e: |∂e/∂u_j| above 1e-8 of the gradient's size at a sample. */
  dependsOnControl(e: number, j: number): boolean {
    const dj = this.dag.derivative(e, this.iU + j);
    if (this.dag.isConst(dj) && this.dag.value[dj] === 0) return false;
    if (this.samples.length === 0) return true;
    const grads = Array.from({ length: this.nW }, (_, k) => this.dag.derivative(e, k));
    for (const w of this.samples) {
      const g = this.dag.evaluate(grads, w);
      let scale = 1;
      for (const v of g) if (Number.isFinite(v)) scale = Math.max(scale, Math.abs(v));
      if (Math.abs(g[this.iU + j]) > 1e-8 * scale) return true;
    }
    return false;
  }

  /** Whether H is affine in u_j (∂²H/∂u_j² ≡ 0 structurally or at every sample). */
  affineIn(j: number): boolean {
    return !this.dependsOnControl(this.Hu[j], j);
  }

  singularDerivatives(j: number): SingularDerivatives {
    const hit = this.singular.get(j);
    if (hit) return hit;
    const name = this.problem.controls[j].name;
    if (!this.affineIn(j)) throw new Error(`shooting (${this.problem.id}): H is not affine in control '${name}', so it has no singular arcs`);
    const chain = [this.Hu[j]];
    for (let k = 1; k <= MAX_DERIVATIVES; k++) {
      chain.push(this.D(chain[k - 1]));
      if (this.dependsOnControl(chain[k], j)) {
        if (k % 2 === 1) throw new Error(`shooting (${this.problem.id}): control '${name}' appears in an odd derivative (${k}) of its switching function`);
        const r = { control: j, order: k / 2, fn: this.compile(chain) };
        this.singular.set(j, r);
        return r;
      }
    }
    throw new Error(`shooting (${this.problem.id}): control '${name}' does not appear in the first ${MAX_DERIVATIVES} derivatives of its switching function`);
  }

  /** S(t, x[, u]) ≤ 0 as a DAG node. */
  private constraintNode(c: ConstraintSide): number {
    const d = this.dag;
    const base = c.source >= 0 ? this.node(this.problem.symbolic.path[c.source]) : d.variable(1 + (-1 - c.source));
    const diff = d.sub(base, d.konst(c.bound));
    return c.side === 1 ? diff : d.neg(diff);
  }

  constraintDerivatives(c: ConstraintSide): ConstraintDerivatives {
    const key = `${c.name}:${c.side}`;
    const hit = this.constraints.get(key);
    if (hit) return hit;
    const d = this.dag;
    const chain = [this.constraintNode(c)];
    const appears = (e: number) => {
      for (let j = 0; j < this.nu; j++) if (this.dependsOnControl(e, j)) return true;
      return false;
    };
    let order = 0;
    while (!appears(chain[order])) {
      if (order >= MAX_DERIVATIVES) throw new Error(`shooting (${this.problem.id}): no control appears in the first ${MAX_DERIVATIVES} derivatives of constraint '${c.name}'`);
      chain.push(this.D(chain[order]));
      order++;
    }
    const Sp = chain[order];
    const eta = d.variable(this.iEta);
    const Ht = d.add(this.H, d.mul(eta, Sp));
    const r: ConstraintDerivatives = {
      constraint: c,
      order,
      fn: this.compile(chain),
      flow: this.compile([...this.f, ...Array.from({ length: this.nx }, (_, i) => d.neg(d.derivative(Ht, 1 + i)))]),
      hu: this.compile(Array.from({ length: this.nu }, (_, j) => d.derivative(Ht, this.iU + j))),
    };
    this.constraints.set(key, r);
    return r;
  }
}

/** Dense row-major Jacobian (nOut × nIn) of a PointFunction at z; jacBuf has the triplet length. */
export function denseJacobian(fn: PointFunction, z: Float64Array, jacBuf: Float64Array, out: Float64Array): void {
  fn.jac(z, jacBuf);
  out.fill(0);
  for (let k = 0; k < fn.jacRows.length; k++) out[fn.jacRows[k] * fn.nIn + fn.jacCols[k]] += jacBuf[k];
}
