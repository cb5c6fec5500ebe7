/**
 * Hermite–Simpson collocation, separated form.
 *
 * Origin: Hargraves and Paris, "Direct trajectory optimization using nonlinear programming and
 * collocation", J. Guidance 10(4), 1987; separated form as in Betts, Practical Methods for Optimal
 * Control and Estimation Using Nonlinear Programming, 2nd ed., SIAM 2010, §4.6.8.
 *
 * Assumptions: states and controls are variables at every node τ_k and at every interval midpoint
 * τ_{k+½} (the separated form); the state is the cubic Hermite interpolant of (x_k, f_k, x_{k+1},
 * f_{k+1}) and the control the quadratic through u_k, u_{k+½}, u_{k+1}.
 *   Hermite defect   x_{k+½} − (x_k + x_{k+1})/2 − (h_k T/8)(f_k − f_{k+1}) = 0
 *   Simpson defect   x_{k+1} − x_k − (h_k T/6)(f_k + 4 f_{k+½} + f_{k+1}) = 0
 *   cost             ∫L ≈ Σ_k (h_k T/6)(L_k + 4 L_{k+½} + L_{k+1})   (Simpson's rule)
 *   path             at every node and every midpoint.
 * The compressed form (midpoint state eliminated) is not offered: mesh.variant must be absent or
 * "separated" (see DEVELOPERS.md, Decisions).
 *
 * Costates: the Simpson-defect multipliers estimate the costate at the midpoints,
 * λ(t_{k+½}) ≈ −λ^S_k; the Hermite-defect multipliers are O(h) (Betts 2010 §4.11, our sign and
 * row convention: defects not divided by h).
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpResult } from "../nlp/types";
import type { Mesh, Scheme, Solution, Transcription } from "./types";
import { TranscriptionBuilder, meshBreakpoints, type PointRef } from "./builder";
import { allocSeries, pathMultipliers, recoverCommon } from "./recover";
import { hermiteCubic, locate, quadratic3 } from "./interpolation";

export const hermiteSimpson: Scheme = {
  id: "hermite-simpson",
  label: "Hermite–Simpson (separated)",
  order: 4,
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription {
    if (mesh.variant !== undefined && mesh.variant !== "separated")
      throw new Error(`hermite-simpson: unknown variant "${mesh.variant}" (available: separated)`);
    const tau = meshBreakpoints(mesh);
    const N = mesh.intervals;
    const { nx, nu } = problem;
    const b = new TranscriptionBuilder(problem);
    const xs: number[] = [], us: number[] = [], xm: number[] = [], um: number[] = [];
    const pts: PointRef[] = [], mids: PointRef[] = [];
    for (let k = 0; k <= N; k++) {
      xs.push(b.addStates(tau[k], `node ${k}`));
      us.push(b.addControls(tau[k], `node ${k}`));
      pts.push(b.point(tau[k], { start: xs[k] }, nu > 0 ? { start: us[k] } : null));
      if (k < N) {
        const tm = 0.5 * (tau[k] + tau[k + 1]);
        xm.push(b.addStates(tm, `midpoint ${k}`));
        um.push(b.addControls(tm, `midpoint ${k}`));
        mids.push(b.point(tm, { start: xm[k] }, nu > 0 ? { start: um[k] } : null));
      }
    }
    const simpson: number[] = [];
    for (let k = 0; k < N; k++) {
      const h = tau[k + 1] - tau[k];
      b.addDefect(
        [{ start: xm[k], coef: 1 }, { start: xs[k], coef: -0.5 }, { start: xs[k + 1], coef: -0.5 }],
        [{ point: pts[k], weight: -h / 8 }, { point: pts[k + 1], weight: h / 8 }],
        `Hermite interval ${k}`,
      );
      simpson.push(
        b.addDefect(
          [{ start: xs[k + 1], coef: 1 }, { start: xs[k], coef: -1 }],
          [{ point: pts[k], weight: -h / 6 }, { point: mids[k], weight: (-4 * h) / 6 }, { point: pts[k + 1], weight: -h / 6 }],
          `Simpson interval ${k}`,
        ),
      );
    }
    for (let k = 0; k <= N; k++) {
      b.addPath(pts[k], `node ${k}`);
      const wq = (k > 0 ? (tau[k] - tau[k - 1]) / 6 : 0) + (k < N ? (tau[k + 1] - tau[k]) / 6 : 0);
      b.addRunningCost(pts[k], wq);
      if (k < N) {
        b.addPath(mids[k], `midpoint ${k}`);
        b.addRunningCost(mids[k], (4 * (tau[k + 1] - tau[k])) / 6);
      }
    }
    b.setEndpoints(xs[0], xs[N]);
    const asm = b.build();
    return {
      nlp: asm.nlp(),
      recover(result: NlpResult): Solution {
        const r = recoverCommon(problem, asm, b, result);
        // grid: nodes and midpoints interleaved, t[2k] = node k, t[2k+1] = midpoint k
        const M = 2 * N + 1;
        const t = new Float64Array(M);
        const states = allocSeries(nx, M);
        const controls = allocSeries(nu, M);
        const tn = new Float64Array(N + 1);
        const fNode = allocSeries(nx, N + 1);
        const fk = new Float64Array(nx);
        for (let k = 0; k <= N; k++) {
          tn[k] = r.time(tau[k]);
          t[2 * k] = tn[k];
          for (let i = 0; i < nx; i++) states[i][2 * k] = r.X[xs[k] + i];
          for (let i = 0; i < nu; i++) controls[i][2 * k] = r.X[us[k] + i];
          r.dynamics(tn[k], r.X.subarray(xs[k], xs[k] + nx), r.X.subarray(us[k], us[k] + nu), fk);
          for (let i = 0; i < nx; i++) fNode[i][k] = fk[i];
          if (k < N) {
            t[2 * k + 1] = r.time(0.5 * (tau[k] + tau[k + 1]));
            for (let i = 0; i < nx; i++) states[i][2 * k + 1] = r.X[xm[k] + i];
            for (let i = 0; i < nu; i++) controls[i][2 * k + 1] = r.X[um[k] + i];
          }
        }
        const tLambda = new Float64Array(N);
        const costates = allocSeries(nx, N);
        for (let k = 0; k < N; k++) {
          tLambda[k] = t[2 * k + 1];
          for (let i = 0; i < nx; i++) costates[i][k] = -r.lambda[simpson[k] + i];
        }
        return {
          scheme: "hermite-simpson", t, states, tu: t, controls, tLambda, costates,
          pathMultipliers: pathMultipliers(problem, b.pathRows, r.lambda),
          t0: r.t0, tf: r.tf, objective: r.objective,
          stateAt(s, out) {
            const k = locate(tn, s);
            const h = tn[k + 1] - tn[k];
            const sc = Math.min(Math.max(s, tn[k]), tn[k + 1]);
            for (let i = 0; i < nx; i++)
              out[i] = hermiteCubic(tn[k], tn[k] + h, states[i][2 * k], states[i][2 * k + 2], fNode[i][k], fNode[i][k + 1], sc);
          },
          controlAt(s, out) {
            const k = locate(tn, s);
            const sc = Math.min(Math.max(s, tn[k]), tn[k + 1]);
            for (let i = 0; i < nu; i++)
              out[i] = quadratic3(tn[k], tn[k + 1], controls[i][2 * k], controls[i][2 * k + 1], controls[i][2 * k + 2], sc);
          },
        };
      },
    };
  },
};
