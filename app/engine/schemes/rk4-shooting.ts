/**
 * Direct multiple shooting with one classical fourth-order Runge–Kutta step per mesh interval,
 * in lifted form.
 *
 * Origin: multiple shooting for optimal control, Bock and Plitt, Proc. 9th IFAC World Congress,
 * 1984; lifted form (intermediate values of the integrator as NLP variables, which gives the same
 * solution as condensed shooting) as in Albersmeyer and Diehl, "The lifted Newton method and its
 * application in optimization", SIAM J. Optim. 20(3), 2010. Convergence of Runge–Kutta
 * discretisations of optimal control: Hager, Numer. Math. 87, 2000 (order 4 for the classical
 * method, whose weights b_i are all positive).
 *
 * Assumptions: node states x_k (k = 0..N) are shooting variables; on interval k the RK4 stages
 * (tableau RK4_CLASSICAL in butcher.ts, data with its source) use the control values u_k at stage
 * c = 0, u_{k+½} at the two stages with c = ½ and u_{k+1} at stage c = 1: the control is the
 * continuous piecewise-quadratic function through node and midpoint values (interpolated so in
 * re-simulation). Stage states y_i (i ≥ 2) are variables:
 *   stage rows   y_i − x_k − h_k T Σ_{j<i} a_ij f(t_k + c_j h_k T, y_j, u(c_j)) = 0,   y_1 = x_k
 *   step rows    x_{k+1} − x_k − h_k T Σ_i b_i f(t_k + c_i h_k T, y_i, u(c_i)) = 0
 *   cost         ∫L ≈ Σ_k h_k T Σ_i b_i L(stage i)  (the RK4 quadrature of the cost integral)
 *   path         at the nodes (k = 0..N) and once per interval at its midpoint, with the midpoint
 *                control u_{k+½} and the state of RK4's continuous extension at θ = ½,
 *                  x_{k+½} = (y_2 + y_3)/2 + (y_4 − x_{k+1})/4
 *                (the weights b_i(½) = 5/24, 1/6, 1/6, −1/24 of the dense output of the classical
 *                method, order 3, local error O(h⁴): Hairer, Nørsett and Wanner, Solving Ordinary
 *                Differential Equations I, 2nd ed., 1993, §II.6, eq. (6.7) and Table 6.1 context;
 *                rewritten in the stage states). The two stages with c = ½ share the control
 *                u_{k+½} but their states y_2, y_3 differ by O(h²) from x(t_{k+½}) and from each
 *                other; imposing a mixed constraint c(x, u) ≤ 0 at both made the control satisfy
 *                the worse of the two, an O(h²) error in u on a boundary arc of a mixed
 *                constraint, which held the scheme at order 2 there (measured: errors 2.1e-3,
 *                5.5e-4, 1.4e-4, 3.6e-5 at N = 10…80 on tests/fixtures/analytic/capped-growth).
 *                At the dense-output midpoint state the control error is O(h⁴) and the order
 *                is 4 again (issue 17 item 5; tests/schemes/rk4-mixed-constraint.test.ts).
 * Between nodes the state is reported by the cubic Hermite interpolant of (x_k, f_k, x_{k+1}, f_{k+1}).
 *
 * Costates: Hager 2000 shows the multiplier of the step equation of interval k approximates the
 * costate at t_{k+1}; with our sign, λ(t_{k+1}) ≈ −λ^step_k.
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpResult } from "../nlp/types";
import type { Mesh, Scheme, Solution, Transcription } from "./types";
import { TranscriptionBuilder, meshBreakpoints, type PointRef } from "./builder";
import { allocSeries, recoverCommon } from "./recover";
import { hermiteCubic, locate, quadratic3 } from "./interpolation";
import { RK4_CLASSICAL, type ButcherTableau } from "./butcher";

export const rk4Shooting: Scheme = {
  id: "rk4-shooting",
  label: "RK4 multiple shooting",
  order: 4,
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription {
    const tab: ButcherTableau = RK4_CLASSICAL;
    const tau = meshBreakpoints(mesh);
    const N = mesh.intervals;
    const S = tab.b.length;
    const { nx, nu } = problem;
    const b = new TranscriptionBuilder(problem);
    const xs: number[] = [], us: number[] = [], um: number[] = [];
    const nodes: PointRef[] = [];
    for (let k = 0; k <= N; k++) {
      xs.push(b.addStates(tau[k], `node ${k}`));
      us.push(b.addControls(tau[k], `node ${k}`));
      nodes.push(b.point(tau[k], { start: xs[k] }, nu > 0 ? { start: us[k] } : null));
      if (k < N) um.push(b.addControls(0.5 * (tau[k] + tau[k + 1]), `midpoint ${k}`));
    }
    const controlFor = (k: number, c: number) => {
      if (c === 0) return us[k];
      if (c === 1) return us[k + 1];
      if (c === 0.5) return um[k];
      throw new Error(`rk4-shooting: stage abscissa ${c} has no control value (supported: 0, 1/2, 1)`);
    };
    if (tab !== RK4_CLASSICAL) throw new Error("rk4-shooting: the midpoint dense-output weights belong to the classical tableau");
    const steps: number[] = [];
    const innerPathRows: number[][] = [];
    for (let k = 0; k < N; k++) {
      const h = tau[k + 1] - tau[k];
      const stagePts: PointRef[] = [];
      const stageStates: number[] = [xs[k]];
      for (let i = 0; i < S; i++) {
        const ti = tau[k] + tab.c[i] * h;
        const ui = nu > 0 ? { start: controlFor(k, tab.c[i]) } : null;
        if (i === 0) {
          stagePts.push(b.point(ti, { start: xs[k] }, ui));
          continue;
        }
        const yi = b.addStates(ti, `interval ${k} stage ${i + 1}`);
        stageStates.push(yi);
        stagePts.push(b.point(ti, { start: yi }, ui));
        const dyn = [];
        for (let j = 0; j < i; j++) if (tab.a[i][j] !== 0) dyn.push({ point: stagePts[j], weight: -h * tab.a[i][j] });
        b.addDefect([{ start: yi, coef: 1 }, { start: xs[k], coef: -1 }], dyn, `interval ${k} stage ${i + 1}`);
      }
      steps.push(
        b.addDefect(
          [{ start: xs[k + 1], coef: 1 }, { start: xs[k], coef: -1 }],
          stagePts.map((p, i) => ({ point: p, weight: -h * tab.b[i] })),
          `interval ${k} step`,
        ),
      );
      stagePts.forEach((p, i) => b.addRunningCost(p, h * tab.b[i]));
      b.addPath(nodes[k], `node ${k}`);
      // Midpoint state of the continuous extension (see the header) from the stage states y_2, y_3,
      // y_4 and the next node x_{k+1}.
      const stageState = (i: number) => stageStates[i];
      const mid = b.point(0.5 * (tau[k] + tau[k + 1]), {
        combo: [
          { start: stageState(1), coef: 0.5 },
          { start: stageState(2), coef: 0.5 },
          { start: stageState(3), coef: 0.25 },
          { start: xs[k + 1], coef: -0.25 },
        ],
      }, nu > 0 ? { start: um[k] } : null);
      innerPathRows.push([b.addPath(mid, `interval ${k} midpoint`)]);
    }
    b.addPath(nodes[N], `node ${N}`);
    b.setEndpoints(xs[0], xs[N]);
    const asm = b.build();
    return {
      nlp: asm.nlp(),
      recover(result: NlpResult): Solution {
        const r = recoverCommon(problem, asm, b, result);
        const t = new Float64Array(N + 1);
        const states = allocSeries(nx, N + 1);
        const fNode = allocSeries(nx, N + 1);
        const fk = new Float64Array(nx);
        const tu = new Float64Array(2 * N + 1);
        const controls = allocSeries(nu, 2 * N + 1);
        for (let k = 0; k <= N; k++) {
          t[k] = r.time(tau[k]);
          for (let i = 0; i < nx; i++) states[i][k] = r.X[xs[k] + i];
          r.dynamics(t[k], r.X.subarray(xs[k], xs[k] + nx), r.X.subarray(us[k], us[k] + nu), fk);
          for (let i = 0; i < nx; i++) fNode[i][k] = fk[i];
          tu[2 * k] = t[k];
          for (let i = 0; i < nu; i++) controls[i][2 * k] = r.X[us[k] + i];
          if (k < N) {
            tu[2 * k + 1] = r.time(0.5 * (tau[k] + tau[k + 1]));
            for (let i = 0; i < nu; i++) controls[i][2 * k + 1] = r.X[um[k] + i];
          }
        }
        // path multipliers on the control grid tu: node rows, and at midpoints the sum over the
        // stages with c = ½ (both use the midpoint control)
        const rk4PathMultipliers = (): Float64Array[] | null => {
          const np = problem.pathInfo.length;
          if (np === 0) return null;
          const out = allocSeries(np, 2 * N + 1);
          const inner = new Set(innerPathRows.flat());
          const nodeRows = b.pathRows.filter((r0) => !inner.has(r0));
          for (let k = 0; k <= N; k++) for (let i = 0; i < np; i++) out[i][2 * k] = r.lambda[nodeRows[k] + i];
          for (let k = 0; k < N; k++)
            for (const r0 of innerPathRows[k]) for (let i = 0; i < np; i++) out[i][2 * k + 1] += r.lambda[r0 + i];
          return out;
        };
        const tLambda = t.slice(1);
        const costates = allocSeries(nx, N);
        for (let k = 0; k < N; k++) for (let i = 0; i < nx; i++) costates[i][k] = -r.lambda[steps[k] + i];
        return {
          scheme: "rk4-shooting", t, states, tu, controls, tLambda, costates,
          pathMultipliers: rk4PathMultipliers(),
          t0: r.t0, tf: r.tf, objective: r.objective,
          stateAt(s, out) {
            const k = locate(t, s);
            const sc = Math.min(Math.max(s, t[k]), t[k + 1]);
            for (let i = 0; i < nx; i++) out[i] = hermiteCubic(t[k], t[k + 1], states[i][k], states[i][k + 1], fNode[i][k], fNode[i][k + 1], sc);
          },
          controlAt(s, out) {
            const k = locate(t, s);
            const sc = Math.min(Math.max(s, t[k]), t[k + 1]);
            for (let i = 0; i < nu; i++) out[i] = quadratic3(t[k], t[k + 1], controls[i][2 * k], controls[i][2 * k + 1], controls[i][2 * k + 2], sc);
          },
        };
      },
    };
  },
};
