/**
 * Switching functions and control affinity, evaluated numerically from the compiled problem.
 *
 * With the Hamiltonian of the minimised objective J' = s·(φ + ∫L), s = objectiveSign,
 *   H(t, x, u, λ) = s·L(t, x, u) + λᵀ f(t, x, u)                (Bryson and Ho 1975, eq. (2.3.4))
 * the switching function of control j is σ_j = ∂H/∂u_j = s·∂L/∂u_j + Σ_i λ_i ∂f_i/∂u_j.
 * Pontryagin's minimum principle gives u_j = lower where σ_j > 0 and u_j = upper where σ_j < 0
 * when H is affine in u_j; an arc with σ_j ≡ 0 is singular (Bryson and Ho 1975, §8.3).
 */
import type { CompiledProblem, PointFunction } from "../problem/types";
import type { Solution } from "../schemes/types";
import { interpLinear } from "./interp";

/**
 * Whether H is affine in each control: no structural nonzero ∂²f/∂u_j² or ∂²L/∂u_j² (nor
 * ∂²/∂u_j∂u_k). Structural nonzeros whose values vanish at sample points are accepted as zero.
 * Returns one flag per control.
 */
export function controlAffine(problem: CompiledProblem, samples: Float64Array[] = []): boolean[] {
  const nx = problem.nx;
  const out: boolean[] = [];
  for (let j = 0; j < problem.nu; j++) {
    const col = 1 + nx + j;
    let affine = true;
    for (const fn of [problem.dynamics, problem.runningCost]) {
      if (!fn || !affine) continue;
      const hits: number[] = [];
      for (let k = 0; k < fn.hessRows.length; k++) {
        const r = fn.hessRows[k];
        const c = fn.hessCols[k];
        if ((r === col && c > nx) || (c === col && r > nx)) hits.push(k);
      }
      if (hits.length === 0) continue;
      if (samples.length === 0) {
        affine = false;
        continue;
      }
      // Structural entries present: check their values with unit weights at the samples.
      const w = new Float64Array(fn.nOut);
      const h = new Float64Array(fn.hessRows.length);
      for (const z of samples) {
        for (let i = 0; i < fn.nOut; i++) {
          w.fill(0);
          w[i] = 1;
          fn.hess(z, w, h);
          for (const k of hits) if (Math.abs(h[k]) > 1e-12) affine = false;
        }
      }
    }
    out.push(affine);
  }
  return out;
}

/** Column-j values of the Jacobian of fn at z into grad (length fn.nOut). */
function jacColumn(fn: PointFunction, z: Float64Array, col: number, jac: Float64Array, grad: Float64Array): void {
  fn.jac(z, jac);
  grad.fill(0);
  for (let k = 0; k < fn.jacRows.length; k++) if (fn.jacCols[k] === col) grad[fn.jacRows[k]] += jac[k];
}

/**
 * σ_j at every control grid point of the solution (arrays of length tu.length, one per control),
 * with costates interpolated linearly from the scheme's costate grid. Null without costates.
 * `lambdaSign` multiplies the costate estimates (±1) to absorb a scheme's sign convention.
 */
export function switchingFunctions(problem: CompiledProblem, sol: Solution, lambdaSign = 1): Float64Array[] | null {
  if (!sol.costates || !sol.tLambda || sol.costates.length !== problem.nx) return null;
  const { nx, nu } = problem;
  const nt = sol.tu.length;
  const z = new Float64Array(1 + nx + nu);
  const x = new Float64Array(nx);
  const lam = new Float64Array(nx);
  const jf = new Float64Array(problem.dynamics.jacRows.length);
  const gf = new Float64Array(nx);
  const L = problem.runningCost;
  const jl = new Float64Array(L ? L.jacRows.length : 0);
  const gl = new Float64Array(1);
  const s = problem.objectiveSign;
  const out = Array.from({ length: nu }, () => new Float64Array(nt));
  for (let k = 0; k < nt; k++) {
    const t = sol.tu[k];
    sol.stateAt(t, x);
    z[0] = t;
    z.set(x, 1);
    for (let j = 0; j < nu; j++) z[1 + nx + j] = sol.controls[j][k];
    for (let i = 0; i < nx; i++) lam[i] = lambdaSign * interpLinear(sol.tLambda, sol.costates[i], t);
    for (let j = 0; j < nu; j++) {
      const col = 1 + nx + j;
      jacColumn(problem.dynamics, z, col, jf, gf);
      let sigma = 0;
      for (let i = 0; i < nx; i++) sigma += lam[i] * gf[i];
      if (L) {
        jacColumn(L, z, col, jl, gl);
        sigma += s * gl[0];
      }
      out[j][k] = sigma;
    }
  }
  return out;
}
