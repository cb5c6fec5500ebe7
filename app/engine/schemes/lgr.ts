/**
 * Legendre–Gauss–Radau (LGR) pseudospectral collocation, global (one interval) or multi-interval.
 *
 * Origin: Garg, Patterson, Hager, Rao, Benson and Huntington, "A unified framework for the
 * numerical solution of optimal control problems using pseudospectral methods", Automatica 46(11),
 * 2010 (the LGR differential form and its costate estimate); multi-interval form as in Patterson
 * and Rao, "GPOPS-II", ACM Trans. Math. Software 41(1), 2014, §3.
 *
 * Assumptions: mesh interval s = [τ_s, τ_{s+1}] (width h_s) is mapped to σ ∈ [−1, 1]; on it the state
 * is the polynomial of degree K interpolating the K LGR points σ_0 = −1 < … < σ_{K−1} and the
 * non-collocated end σ_K = +1 (which is the first point of the next interval, so the state is
 * continuous); the control is a variable at the K collocation points only and is interpolated by the
 * polynomial of degree K − 1 through them (extrapolated up to the interval end).
 *   defects   Σ_{l=0}^{K} D_jl x_{s,l} − (h_s T/2) f(t_{s,j}, x_{s,j}, u_{s,j}) = 0,   j = 0..K−1
 *   cost      ∫L ≈ Σ_s Σ_j (h_s T/2) w_j L(t_{s,j}, x_{s,j}, u_{s,j})   (LGR quadrature)
 *   path      at every collocation point (the points with both states and controls).
 * Points, weights and D: lgr-points.ts. mesh.degree = K (default 4), mesh.intervals = number of
 * intervals (1 gives the global method).
 *
 * Costates: Garg et al. 2010 (Theorem 2 of the LGR part): λ(t_{s,j}) = Λ_{s,j}/w_j, with their
 * Lagrangian sign; ours (f + λᵀg) gives λ(t_{s,j}) ≈ −Λ_{s,j}/w_j (the h_s/2 of the interval map
 * cancels because the defect carries it).
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpResult } from "../nlp/types";
import type { Mesh, Scheme, Solution, Transcription } from "./types";
import { TranscriptionBuilder, meshBreakpoints, type PointRef } from "./builder";
import { allocSeries, pathMultipliers, recoverCommon } from "./recover";
import { lgrRule } from "./lgr-points";
import { barycentricAt, barycentricWeights, locate } from "./interpolation";

export const DEFAULT_LGR_DEGREE = 4;

export const lgr: Scheme = {
  id: "lgr",
  label: "Legendre–Gauss–Radau pseudospectral",
  order: Infinity,
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription {
    const tau = meshBreakpoints(mesh);
    const N = mesh.intervals;
    const K = mesh.degree ?? DEFAULT_LGR_DEGREE;
    const rule = lgrRule(K);
    const { nx, nu } = problem;
    const b = new TranscriptionBuilder(problem);
    // state blocks: xs[s][j] for j < K, shared end block; control blocks us[s][j]
    const xs: number[][] = [], us: number[][] = [];
    const pts: PointRef[][] = [];
    const tauOf = (s: number, j: number) => tau[s] + ((rule.support[j] + 1) / 2) * (tau[s + 1] - tau[s]);
    for (let s = 0; s < N; s++) {
      xs.push([]);
      us.push([]);
      pts.push([]);
      for (let j = 0; j < K; j++) {
        const tj = tauOf(s, j);
        xs[s].push(b.addStates(tj, `interval ${s} point ${j}`));
        us[s].push(b.addControls(tj, `interval ${s} point ${j}`));
        pts[s].push(b.point(tj, { start: xs[s][j] }, nu > 0 ? { start: us[s][j] } : null));
      }
    }
    const xEnd = b.addStates(1, "final");
    const support = (s: number, l: number) => (l < K ? xs[s][l] : s + 1 < N ? xs[s + 1][0] : xEnd);
    const defects: number[][] = [];
    for (let s = 0; s < N; s++) {
      const h = tau[s + 1] - tau[s];
      defects.push([]);
      for (let j = 0; j < K; j++) {
        const lin: Array<{ start: number; coef: number }> = [];
        for (let l = 0; l <= K; l++) lin.push({ start: support(s, l), coef: rule.D[j * (K + 1) + l] });
        defects[s].push(b.addDefect(lin, [{ point: pts[s][j], weight: -h / 2 }], `interval ${s} point ${j}`));
        b.addPath(pts[s][j], `interval ${s} point ${j}`);
        b.addRunningCost(pts[s][j], (h / 2) * rule.weights[j]);
      }
    }
    b.setEndpoints(xs[0][0], xEnd);
    const asm = b.build();
    const bw = barycentricWeights(rule.support);
    const bwu = barycentricWeights(rule.points);
    return {
      nlp: asm.nlp(),
      recover(result: NlpResult): Solution {
        const r = recoverCommon(problem, asm, b, result);
        const nPts = N * K + 1;
        const t = new Float64Array(nPts);
        const states = allocSeries(nx, nPts);
        const tu = new Float64Array(N * K);
        const controls = allocSeries(nu, N * K);
        const costates = allocSeries(nx, N * K);
        for (let s = 0; s < N; s++)
          for (let j = 0; j < K; j++) {
            const k = s * K + j;
            t[k] = r.time(tauOf(s, j));
            tu[k] = t[k];
            for (let i = 0; i < nx; i++) {
              states[i][k] = r.X[xs[s][j] + i];
              costates[i][k] = -r.lambda[defects[s][j] + i] / rule.weights[j];
            }
            for (let i = 0; i < nu; i++) controls[i][k] = r.X[us[s][j] + i];
          }
        t[nPts - 1] = r.tf;
        for (let i = 0; i < nx; i++) states[i][nPts - 1] = r.X[xEnd + i];
        const tb = new Float64Array(N + 1);
        for (let s = 0; s <= N; s++) tb[s] = r.time(tau[s]);
        const sig = new Float64Array(K + 1);
        const ys = new Float64Array(K + 1);
        const yu = new Float64Array(K);
        const local = (sq: number) => {
          const s = locate(tb, sq);
          const sc = Math.min(Math.max(sq, tb[s]), tb[s + 1]);
          return { s, sigma: (2 * (sc - tb[s])) / (tb[s + 1] - tb[s]) - 1 };
        };
        sig.set(rule.support);
        return {
          scheme: "lgr", t, states, tu, controls, tLambda: tu.slice(), costates,
          pathMultipliers: pathMultipliers(problem, b.pathRows, r.lambda),
          t0: r.t0, tf: r.tf, objective: r.objective,
          stateAt(sq, out) {
            const { s, sigma } = local(sq);
            for (let i = 0; i < nx; i++) {
              for (let l = 0; l <= K; l++) ys[l] = states[i][s * K + l];
              out[i] = barycentricAt(sig, bw, ys, sigma);
            }
          },
          controlAt(sq, out) {
            const { s, sigma } = local(sq);
            for (let i = 0; i < nu; i++) {
              for (let j = 0; j < K; j++) yu[j] = controls[i][s * K + j];
              out[i] = K === 1 ? yu[0] : barycentricAt(rule.points, bwu, yu, sigma);
            }
          },
        };
      },
    };
  },
};
