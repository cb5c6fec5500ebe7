/**
 * Trapezoidal (Crank–Nicolson) collocation.
 *
 * Origin: Betts, Practical Methods for Optimal Control and Estimation Using Nonlinear Programming,
 * 2nd ed., SIAM 2010, §4.6.7 (trapezoidal method) and §4.7.
 *
 * Assumptions: states and controls are variables at every node τ_k (k = 0..N); the control is
 * piecewise linear between nodes and the state the quadratic whose derivative is the linear
 * interpolant of f (Betts 2010 §4.7.1):  x(t_k + s) = x_k + s f_k + s²/(2h)(f_{k+1} − f_k).
 *   defects   x_{k+1} − x_k − (h_k T/2)(f_k + f_{k+1}) = 0
 *   cost      ∫L ≈ Σ_k (h_k T/2)(L_k + L_{k+1})   (trapezoidal rule)
 *   path      at every node.
 *
 * Costates: the defect multipliers give the costate at the interval midpoints,
 * λ(t_{k+½}) ≈ −λ_k (Betts 2010 §4.11; there the defect is divided by h, here it is not, so no
 * division by the interval length; the sign follows our Lagrangian f + λᵀg).
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpResult } from "../nlp/types";
import type { Mesh, Scheme, Solution, Transcription } from "./types";
import { TranscriptionBuilder, meshBreakpoints, type PointRef } from "./builder";
import { allocSeries, pathMultipliers, recoverCommon } from "./recover";
import { linearAt, locate } from "./interpolation";

export const trapezoidal: Scheme = {
  id: "trapezoidal",
  label: "Trapezoidal",
  order: 2,
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription {
    const tau = meshBreakpoints(mesh);
    const N = mesh.intervals;
    const { nx, nu } = problem;
    const b = new TranscriptionBuilder(problem);
    const xs: number[] = [], us: number[] = [];
    const pts: PointRef[] = [];
    for (let k = 0; k <= N; k++) {
      const label = `node ${k}`; // one string for both blocks (the builder keeps it for the names)
      xs.push(b.addStates(tau[k], label));
      us.push(b.addControls(tau[k], label));
      pts.push(b.point(tau[k], { start: xs[k] }, nu > 0 ? { start: us[k] } : null));
    }
    const defects: number[] = [];
    for (let k = 0; k < N; k++) {
      const h = tau[k + 1] - tau[k];
      defects.push(
        b.addDefect(
          [{ start: xs[k + 1], coef: 1 }, { start: xs[k], coef: -1 }],
          [{ point: pts[k], weight: -h / 2 }, { point: pts[k + 1], weight: -h / 2 }],
          `interval ${k}`,
        ),
      );
    }
    for (let k = 0; k <= N; k++) {
      b.addPath(pts[k], `node ${k}`);
      const wq = (k > 0 ? (tau[k] - tau[k - 1]) / 2 : 0) + (k < N ? (tau[k + 1] - tau[k]) / 2 : 0);
      b.addRunningCost(pts[k], wq);
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
        const controls = allocSeries(nu, N + 1);
        const fNode = allocSeries(nx, N + 1);
        const fk = new Float64Array(nx);
        for (let k = 0; k <= N; k++) {
          for (let i = 0; i < nx; i++) states[i][k] = r.X[xs[k] + i];
          for (let i = 0; i < nu; i++) controls[i][k] = r.X[us[k] + i];
          r.dynamics(t[k], r.X.subarray(xs[k], xs[k] + nx), r.X.subarray(us[k], us[k] + nu), fk);
          for (let i = 0; i < nx; i++) fNode[i][k] = fk[i];
        }
        const tLambda = new Float64Array(N);
        const costates = allocSeries(nx, N);
        for (let k = 0; k < N; k++) {
          tLambda[k] = 0.5 * (t[k] + t[k + 1]);
          for (let i = 0; i < nx; i++) costates[i][k] = -r.lambda[defects[k] + i];
        }
        return {
          scheme: "trapezoidal", t, states, tu: t, controls, tLambda, costates,
          pathMultipliers: pathMultipliers(problem, b.pathRows, r.lambda),
          t0: r.t0, tf: r.tf, objective: r.objective,
          stateAt(sq, out) {
            const k = locate(t, sq);
            const h = t[k + 1] - t[k];
            const s = Math.min(Math.max(sq - t[k], 0), h);
            for (let i = 0; i < nx; i++)
              out[i] = states[i][k] + s * fNode[i][k] + ((s * s) / (2 * h)) * (fNode[i][k + 1] - fNode[i][k]);
          },
          controlAt(s, out) {
            for (let i = 0; i < nu; i++) out[i] = linearAt(t, controls[i], s);
          },
        };
      },
    };
  },
};
