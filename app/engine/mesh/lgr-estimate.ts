/**
 * Relative error of an LGR solution on each mesh interval, by integrating the dynamics with a rule
 * one degree higher than the one the solution was collocated with.
 *
 * Source: Patterson, Hager and Rao, "A ph mesh refinement method for optimal control", Optimal
 * Control Applications and Methods 36(4), 2015, §3 (the same estimate as Liu, Hager and Rao,
 * "Adaptive mesh refinement method for optimal control using nonsmoothness detection and mesh size
 * reduction", J. Franklin Inst. 352(10), 2015, §3). On interval s = [t_s, t_{s+1}] (width h) with
 * K collocation points, take the M = K + 1 LGR points ŝ_0 = −1 < … < ŝ_K of lgrRule(M) and the end
 * ŝ_M = +1. With Y(ŝ), U(ŝ) the solution's own state and control polynomials (Solution.stateAt /
 * controlAt), integrate the dynamics from the interval's start on the M points:
 *   X̂_i(ŝ_l) = Y_i(ŝ_0) + (h/2) Σ_{j<M} Î_{lj} f_i(t(ŝ_j), Y(ŝ_j), U(ŝ_j)),   l = 1..M,
 * with Î_{lj} = ∫_{−1}^{ŝ_l} L̂_j(σ) dσ (L̂_j the Lagrange basis of the M points), and take the
 * relative error
 *   e_s = max_{i, l} |X̂_i(ŝ_l) − Y_i(ŝ_l)| / (1 + max_{j ≤ M} |Y_i(ŝ_j)|).
 * Î is computed by LGR quadrature with M points on [−1, ŝ_l] (exact for the degree M − 1 basis).
 */
import type { CompiledProblem } from "../problem/types";
import type { Mesh, Solution } from "../schemes/types";
import { lgrRule } from "../schemes/lgr-points";
import { lgrDegrees } from "../schemes/lgr";
import { barycentricAt, barycentricWeights } from "../schemes/interpolation";
import { controlInside, dynamicsEvaluator, intervalTimes } from "./intervals";

export interface LgrEstimate {
  t: Float64Array;
  /** e_s, length N. */
  error: Float64Array;
  /** Per state, nx × N. */
  perState: Float64Array[];
  /** 1 + max_j |Y_i(ŝ_j)| per state and interval (the denominators), nx × N. */
  scales: Float64Array[];
  evaluations: number;
}

interface HigherRule {
  /** ŝ_0..ŝ_M (M LGR points and +1). */
  s: Float64Array;
  /** Î, (M) × M row-major: row l − 1 for l = 1..M. */
  I: Float64Array;
}

const rules = new Map<number, HigherRule>();

/** The M-point LGR points with +1 and the integration matrix Î (cached per M). */
export function integrationRule(M: number): HigherRule {
  const hit = rules.get(M);
  if (hit) return hit;
  const rule = lgrRule(M);
  const s = new Float64Array(M + 1);
  s.set(rule.points);
  s[M] = 1;
  const bw = barycentricWeights(rule.points);
  const I = new Float64Array(M * M);
  const e = new Float64Array(M);
  for (let l = 1; l <= M; l++) {
    const half = (s[l] + 1) / 2;
    for (let q = 0; q < M; q++) {
      const sq = -1 + (rule.points[q] + 1) * half;
      for (let j = 0; j < M; j++) {
        e.fill(0);
        e[j] = 1;
        I[(l - 1) * M + j] += half * rule.weights[q] * barycentricAt(rule.points, bw, e, sq);
      }
    }
  }
  const out = { s, I };
  rules.set(M, out);
  return out;
}

export function lgrEstimate(problem: CompiledProblem, sol: Solution, mesh: Mesh): LgrEstimate {
  const { nx, nu } = problem;
  const t = intervalTimes(sol, mesh);
  const N = mesh.intervals;
  const Ks = lgrDegrees(mesh);
  const f = dynamicsEvaluator(problem);
  const error = new Float64Array(N);
  const perState = Array.from({ length: nx }, () => new Float64Array(N));
  const scales = Array.from({ length: nx }, () => new Float64Array(N));
  const u = new Float64Array(nu);
  let evaluations = 0;
  for (let k = 0; k < N; k++) {
    const M = Ks[k] + 1;
    const { s, I } = integrationRule(M);
    const a = t[k], b = t[k + 1], h = b - a;
    const Y = Array.from({ length: M + 1 }, () => new Float64Array(nx));
    const F = Array.from({ length: M }, () => new Float64Array(nx));
    for (let l = 0; l <= M; l++) {
      const tl = a + ((s[l] + 1) / 2) * h;
      sol.stateAt(l === M ? b : tl, Y[l]);
      if (l < M) {
        controlInside(sol, a, b, tl, u);
        f(tl, Y[l], u, F[l]);
        evaluations++;
      }
    }
    for (let i = 0; i < nx; i++) {
      let scale = 0;
      for (let l = 0; l <= M; l++) scale = Math.max(scale, Math.abs(Y[l][i]));
      scale += 1;
      scales[i][k] = scale;
      let e = 0;
      for (let l = 1; l <= M; l++) {
        let xh = Y[0][i];
        for (let j = 0; j < M; j++) xh += (h / 2) * I[(l - 1) * M + j] * F[j][i];
        e = Math.max(e, Math.abs(xh - Y[l][i]) / scale);
      }
      perState[i][k] = Number.isFinite(e) ? e : Infinity;
      error[k] = Math.max(error[k], perState[i][k]);
    }
  }
  return { t, error, perState, scales, evaluations };
}
