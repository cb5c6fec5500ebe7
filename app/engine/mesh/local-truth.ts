/**
 * The true local error of a discrete solution on each mesh interval, to check the estimates
 * (estimate.ts) against: on interval [t_k, t_{k+1}] integrate ẋ = f(t, x, ũ(t)) from the solution's
 * own x̃(t_k) with the solution's own control ũ (ODEX at rtol 1e-12, analysis/odex.ts) and take
 *   e_k = max_i max_q |x_i(s_q) − x̃_i(s_q)| / d_{i,k},   s_q = t_k + q h/8, q = 1..8,
 * with d_{i,k} the estimate's own denominators, so that the ratio estimate/truth compares the
 * numerators only. This is the error the interval adds (what Betts 2010 §4.7 and Patterson, Hager and
 * Rao 2015 estimate), not the accumulated (global) error, which the reference comparison measures.
 */
import type { CompiledProblem } from "../problem/types";
import type { Solution } from "../schemes/types";
import { integrate } from "../analysis/odex";
import { controlInside, dynamicsEvaluator } from "./intervals";
import type { MeshEstimate } from "./estimate";

const SAMPLES = 8;

export function trueLocalErrors(problem: CompiledProblem, sol: Solution, est: MeshEstimate, rtol = 1e-12): number[] {
  const { nx, nu } = problem;
  const f = dynamicsEvaluator(problem);
  const u = new Float64Array(nu), out = new Float64Array(nx), xt = new Float64Array(nx);
  const N = est.error.length;
  const res: number[] = [];
  for (let k = 0; k < N; k++) {
    const a = est.t[k], b = est.t[k + 1];
    const rhs = (t: number, y: number[]) => {
      controlInside(sol, a, b, t, u);
      f(t, y, u, out);
      return Array.from(out);
    };
    sol.stateAt(a, xt);
    let y = Array.from(xt);
    let worst = 0;
    const atol = est.denominators.map((d) => rtol * d[k]);
    for (let q = 1; q <= SAMPLES; q++) {
      const s0 = a + ((q - 1) / SAMPLES) * (b - a), s1 = q === SAMPLES ? b : a + (q / SAMPLES) * (b - a);
      const r = integrate(rhs, s0, y, s1, { rtol, atol });
      if (!r.ok) {
        worst = Infinity;
        break;
      }
      y = r.y;
      sol.stateAt(s1, xt);
      for (let i = 0; i < nx; i++) worst = Math.max(worst, Math.abs(y[i] - xt[i]) / est.denominators[i][k]);
    }
    res.push(worst);
  }
  return res;
}
