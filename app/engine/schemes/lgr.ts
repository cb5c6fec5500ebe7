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
 * intervals (1 gives the global method); mesh.degrees gives each interval its own K_s (hp meshes).
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

/** The degree K_s of every interval: mesh.degrees when given (checked), else mesh.degree (default 4) for all. */
export function lgrDegrees(mesh: Mesh): number[] {
  const N = mesh.intervals;
  if (mesh.degrees) {
    if (mesh.degrees.length !== N) throw new Error(`mesh.degrees must have one entry per interval (${N}, got ${mesh.degrees.length})`);
    mesh.degrees.forEach((K, s) => {
      if (!Number.isInteger(K) || K < 1) throw new Error(`mesh.degrees[${s}] must be a positive integer (got ${K})`);
    });
    return mesh.degrees.slice();
  }
  return new Array<number>(N).fill(mesh.degree ?? DEFAULT_LGR_DEGREE);
}

export const lgr: Scheme = {
  id: "lgr",
  label: "Legendre–Gauss–Radau pseudospectral",
  order: Infinity,
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription {
    const tau = meshBreakpoints(mesh);
    const N = mesh.intervals;
    const Ks = lgrDegrees(mesh);
    const rules = Ks.map((K) => lgrRule(K));
    const { nx, nu } = problem;
    const b = new TranscriptionBuilder(problem);
    // state blocks: xs[s][j] for j < K_s, shared end block; control blocks us[s][j]
    const xs: number[][] = [], us: number[][] = [];
    const pts: PointRef[][] = [];
    const tauOf = (s: number, j: number) => tau[s] + ((rules[s].support[j] + 1) / 2) * (tau[s + 1] - tau[s]);
    for (let s = 0; s < N; s++) {
      xs.push([]);
      us.push([]);
      pts.push([]);
      for (let j = 0; j < Ks[s]; j++) {
        const tj = tauOf(s, j);
        xs[s].push(b.addStates(tj, `interval ${s} point ${j}`));
        us[s].push(b.addControls(tj, `interval ${s} point ${j}`));
        pts[s].push(b.point(tj, { start: xs[s][j] }, nu > 0 ? { start: us[s][j] } : null));
      }
    }
    const xEnd = b.addStates(1, "final");
    const support = (s: number, l: number) => (l < Ks[s] ? xs[s][l] : s + 1 < N ? xs[s + 1][0] : xEnd);
    const defects: number[][] = [];
    for (let s = 0; s < N; s++) {
      const h = tau[s + 1] - tau[s];
      const K = Ks[s], rule = rules[s];
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
    const bw = rules.map((r) => barycentricWeights(r.support));
    const bwu = rules.map((r) => barycentricWeights(r.points));
    // first grid index of interval s (its K_s collocation points follow; the last grid point is tf)
    const first: number[] = [0];
    for (let s = 0; s < N; s++) first.push(first[s] + Ks[s]);
    return {
      nlp: asm.nlp(),
      recover(result: NlpResult): Solution {
        const r = recoverCommon(problem, asm, b, result);
        const nColl = first[N];
        const nPts = nColl + 1;
        const t = new Float64Array(nPts);
        const states = allocSeries(nx, nPts);
        const tu = new Float64Array(nColl);
        const controls = allocSeries(nu, nColl);
        const costates = allocSeries(nx, nColl);
        for (let s = 0; s < N; s++)
          for (let j = 0; j < Ks[s]; j++) {
            const k = first[s] + j;
            t[k] = r.time(tauOf(s, j));
            tu[k] = t[k];
            for (let i = 0; i < nx; i++) {
              states[i][k] = r.X[xs[s][j] + i];
              costates[i][k] = -r.lambda[defects[s][j] + i] / rules[s].weights[j];
            }
            for (let i = 0; i < nu; i++) controls[i][k] = r.X[us[s][j] + i];
          }
        t[nPts - 1] = r.tf;
        for (let i = 0; i < nx; i++) states[i][nPts - 1] = r.X[xEnd + i];
        const tb = new Float64Array(N + 1);
        for (let s = 0; s <= N; s++) tb[s] = r.time(tau[s]);
        const Kmax = Math.max(...Ks);
        const ys = new Float64Array(Kmax + 1);
        const local = (sq: number) => {
          const s = locate(tb, sq);
          const sc = Math.min(Math.max(sq, tb[s]), tb[s + 1]);
          return { s, sigma: (2 * (sc - tb[s])) / (tb[s + 1] - tb[s]) - 1 };
        };
        return {
          scheme: "lgr", t, states, tu, controls, tLambda: tu.slice(), costates,
          pathMultipliers: pathMultipliers(problem, b.pathRows, r.lambda),
          t0: r.t0, tf: r.tf, objective: r.objective,
          stateAt(sq, out) {
            const { s, sigma } = local(sq);
            const K = Ks[s];
            const y = ys.subarray(0, K + 1);
            for (let i = 0; i < nx; i++) {
              for (let l = 0; l <= K; l++) y[l] = states[i][first[s] + l];
              out[i] = barycentricAt(rules[s].support, bw[s], y, sigma);
            }
          },
          controlAt(sq, out) {
            const { s, sigma } = local(sq);
            const K = Ks[s];
            const y = ys.subarray(0, K);
            for (let i = 0; i < nu; i++) {
              for (let j = 0; j < K; j++) y[j] = controls[i][first[s] + j];
              out[i] = K === 1 ? y[0] : barycentricAt(rules[s].points, bwu[s], y, sigma);
            }
          },
        };
      },
    };
  },
};
