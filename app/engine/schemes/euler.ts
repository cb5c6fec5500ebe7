/**
 * Explicit (forward) Euler transcription.
 *
 * Origin: the simplest direct transcription; analysed for optimal control by Dontchev and Hager,
 * "The Euler approximation in state constrained optimal control", Math. Comp. 70, 2001 (first-order
 * convergence of states, controls and costates under coercivity).
 *
 * Assumptions: on mesh τ_0 = 0 < … < τ_N = 1 (h_k = τ_{k+1} − τ_k, time t = t0 + τ T)
 *   state variables x_k at every node (k = 0..N), control variables u_k on every interval (held
 *   constant on [t_k, t_{k+1}), k = 0..N−1);
 *   defects   x_{k+1} − x_k − h_k T f(t_k, x_k, u_k) = 0                     (nx rows per interval)
 *   cost      ∫L ≈ Σ_k h_k T L(t_k, x_k, u_k)   (left rectangle rule, the quadrature of the scheme)
 *   path      c(t_k, x_k, u_k) within bounds at k = 0..N−1 (the points with states and controls).
 * The state between nodes is the straight line the scheme integrates along; the control is held.
 *
 * Costates: stationarity in x_k gives (p_k − p_{k−1})/(h T) = −f_xᵀ p_k − L_x with p_k = −λ_k, the
 * backward-Euler adjoint recursion ending at p_{N−1} = φ_x (Dontchev and Hager 2001, §2), so
 * λ(t_{k+1}) ≈ −λ_k, the multiplier of defect k (no division: the defect is not divided by h).
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpResult } from "../nlp/types";
import type { Mesh, Scheme, Solution, Transcription } from "./types";
import { TranscriptionBuilder, meshBreakpoints } from "./builder";
import { allocSeries, pathMultipliers, recoverCommon } from "./recover";
import { heldAt, linearAt } from "./interpolation";

export const euler: Scheme = {
  id: "euler",
  label: "Explicit Euler",
  order: 1,
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription {
    const tau = meshBreakpoints(mesh);
    const N = mesh.intervals;
    const { nx, nu } = problem;
    const b = new TranscriptionBuilder(problem);
    const xs: number[] = [], us: number[] = [];
    for (let k = 0; k <= N; k++) {
      xs.push(b.addStates(tau[k], `node ${k}`));
      if (k < N) us.push(b.addControls(tau[k], `interval ${k}`));
    }
    const defects: number[] = [];
    for (let k = 0; k < N; k++) {
      const h = tau[k + 1] - tau[k];
      const p = b.point(tau[k], { start: xs[k] }, nu > 0 ? { start: us[k] } : null);
      defects.push(b.addDefect([{ start: xs[k + 1], coef: 1 }, { start: xs[k], coef: -1 }], [{ point: p, weight: -h }], `interval ${k}`));
      b.addPath(p, `node ${k}`);
      b.addRunningCost(p, h);
    }
    b.setEndpoints(xs[0], xs[N]);
    const asm = b.build();
    return {
      nlp: asm.nlp(),
      recover(result: NlpResult): Solution {
        const r = recoverCommon(problem, asm, b, result);
        const t = new Float64Array(N + 1);
        for (let k = 0; k <= N; k++) t[k] = r.time(tau[k]);
        const states = allocSeries(nx, N + 1);
        for (let k = 0; k <= N; k++) for (let i = 0; i < nx; i++) states[i][k] = r.X[xs[k] + i];
        const tu = t.slice(0, N);
        const controls = allocSeries(nu, N);
        for (let k = 0; k < N; k++) for (let i = 0; i < nu; i++) controls[i][k] = r.X[us[k] + i];
        const tLambda = t.slice(1);
        const costates = allocSeries(nx, N);
        for (let k = 0; k < N; k++) for (let i = 0; i < nx; i++) costates[i][k] = -r.lambda[defects[k] + i];
        return {
          scheme: "euler", t, states, tu, controls, tLambda, costates,
          pathMultipliers: pathMultipliers(problem, b.pathRows, r.lambda),
          t0: r.t0, tf: r.tf, objective: r.objective,
          stateAt(s, out) {
            for (let i = 0; i < nx; i++) out[i] = linearAt(t, states[i], s);
          },
          controlAt(s, out) {
            for (let i = 0; i < nu; i++) out[i] = heldAt(tu, controls[i], s);
          },
        };
      },
    };
  },
};
