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
 * Variant "compressed" (mesh.variant): the midpoint state is not a variable but the Hermite
 * interpolant x_{k+½} = (x_k + x_{k+1})/2 + (h_k T/8)(f_k − f_{k+1}) substituted into the Simpson
 * defect, the midpoint path constraints and the midpoint cost (composite functions, hs-midpoint.ts);
 * only the Simpson defects remain. Fewer variables, denser Jacobian and Hessian blocks.
 *
 * Costates: the Simpson-defect multiplier −λ^S_k estimates the costate (Betts 2010 §4.11, our sign
 * and row convention: defects not divided by h) — more precisely its interval average, to O(h⁴)
 * (measured on the LQ problem, tests/schemes/convergence.test.ts), while it differs from the midpoint
 * value by O(h²). The reported midpoint costates are therefore point values reconstructed from these
 * averages (interval-averages.ts), fourth order; the Hermite-defect multipliers are O(h).
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpResult } from "../nlp/types";
import type { Mesh, Scheme, Solution, Transcription } from "./types";
import { TranscriptionBuilder, meshBreakpoints, type PointRef } from "./builder";
import { allocSeries, pathMultipliers, recoverCommon } from "./recover";
import { hermiteCubic, locate, quadratic3 } from "./interpolation";
import { hsMidpointFunction } from "./hs-midpoint";
import { valuesFromAverages } from "./interval-averages";

export const hermiteSimpson: Scheme = {
  id: "hermite-simpson",
  label: "Hermite–Simpson (separated; compressed as a variant)",
  order: 4,
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription {
    if (mesh.variant !== undefined && mesh.variant !== "separated" && mesh.variant !== "compressed")
      throw new Error(`hermite-simpson: unknown variant "${mesh.variant}" (available: separated, compressed)`);
    const compressed = mesh.variant === "compressed";
    const tau = meshBreakpoints(mesh);
    const N = mesh.intervals;
    const { nx, nu } = problem;
    const b = new TranscriptionBuilder(problem);
    const xs: number[] = [], us: number[] = [], xm: number[] = [], um: number[] = [];
    const pts: PointRef[] = [], mids: PointRef[] = [];
    for (let k = 0; k <= N; k++) {
      const label = `node ${k}`; // one string for both blocks (the builder keeps it for the names)
      xs.push(b.addStates(tau[k], label));
      us.push(b.addControls(tau[k], label));
      pts.push(b.point(tau[k], { start: xs[k] }, nu > 0 ? { start: us[k] } : null));
      if (k < N) {
        const tm = 0.5 * (tau[k] + tau[k + 1]);
        const mLabel = `midpoint ${k}`;
        if (!compressed) xm.push(b.addStates(tm, mLabel));
        um.push(b.addControls(tm, mLabel));
        if (!compressed) mids.push(b.point(tm, { start: xm[k] }, nu > 0 ? { start: um[k] } : null));
      }
    }
    const simpson: number[] = [];
    if (compressed) {
      const fm = hsMidpointFunction(problem.dynamics, problem.dynamics, nx, nu);
      const cm = hsMidpointFunction(problem.dynamics, problem.path, nx, nu);
      const Lm = problem.runningCost ? hsMidpointFunction(problem.dynamics, problem.runningCost, nx, nu) : null;
      for (let k = 0; k < N; k++) {
        const h = tau[k + 1] - tau[k];
        const uIn = Array.from({ length: nu }, (_, j) => ({ c: 0, vars: [um[k] + j], coefs: [1] }));
        const v = [{ c: h, vars: [], coefs: [] }, b.spanInput(), b.timeInput(0.5 * (tau[k] + tau[k + 1])), ...pts[k].inputs, ...pts[k + 1].inputs, ...uIn];
        const site = b.addSite(fm, v, true);
        simpson.push(
          b.addDefect(
            [{ start: xs[k + 1], coef: 1 }, { start: xs[k], coef: -1 }],
            [{ point: pts[k], weight: -h / 6 }, { site, weight: (-4 * h) / 6 }, { point: pts[k + 1], weight: -h / 6 }],
            `Simpson interval ${k}`,
          ),
        );
        b.addPath(pts[k], `node ${k}`);
        b.addRunningCost(pts[k], (k > 0 ? (tau[k] - tau[k - 1]) / 6 : 0) + h / 6);
        b.addPath(pts[k], `midpoint ${k}`, { fn: cm, inputs: v });
        if (Lm) b.addRunningCost(pts[k], (4 * h) / 6, { fn: Lm, inputs: v });
      }
      b.addPath(pts[N], `node ${N}`);
      b.addRunningCost(pts[N], (tau[N] - tau[N - 1]) / 6);
    }
    for (let k = 0; k < N && !compressed; k++) {
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
    for (let k = 0; k <= N && !compressed; k++) {
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
            if (!compressed) for (let i = 0; i < nx; i++) states[i][2 * k + 1] = r.X[xm[k] + i];
            for (let i = 0; i < nu; i++) controls[i][2 * k + 1] = r.X[um[k] + i];
          }
        }
        if (compressed)
          for (let k = 0; k < N; k++) {
            const hT = tn[k + 1] - tn[k];
            for (let i = 0; i < nx; i++) states[i][2 * k + 1] = 0.5 * (states[i][2 * k] + states[i][2 * k + 2]) + (hT / 8) * (fNode[i][k] - fNode[i][k + 1]);
          }
        const tLambda = new Float64Array(N);
        const costates = allocSeries(nx, N);
        const avg = new Float64Array(N);
        for (let k = 0; k < N; k++) tLambda[k] = t[2 * k + 1];
        for (let i = 0; i < nx; i++) {
          for (let k = 0; k < N; k++) avg[k] = -r.lambda[simpson[k] + i];
          costates[i].set(valuesFromAverages(tn, avg, tLambda));
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
