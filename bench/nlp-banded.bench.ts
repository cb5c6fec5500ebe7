/**
 * Banded NLP benchmark for the interior-point solver (issue 4): a trapezoidal transcription,
 * written by hand, of a swing-down problem for a damped pendulum of our own choosing,
 *
 *   minimise   ∫₀ᵀ (θ² + 0.1 ω² + u²) dt
 *   subject to θ' = ω,  ω' = −sin θ − c ω + u,  |u| ≤ u_max,  θ(0) = θ₀, ω(0) = 0,
 *
 * with T = 8, c = 0.1, u_max = 0.6, θ₀ = 2. Trapezoidal rule on N intervals (h = T/N):
 *   defects  x_{k+1} − x_k − h/2 (F(x_k, u_k) + F(x_{k+1}, u_{k+1})) = 0,  cost Σ w_k L_k
 * with w = h (h/2 at the ends). Variables (θ_k, ω_k, u_k), k = 0..N: n = 3(N+1); rows 2N.
 * The KKT matrix is banded, so factorisation and solve should scale linearly with n.
 *
 * Prints, per size: iterations, whole-solve time, time per iteration, share of time in the
 * numeric factorisations, and the least-squares slope of log(time) against log(n) (must be
 * below 1.2). Run: npx tsx bench/nlp-banded.bench.ts [--max 64000]
 */
import { pathToFileURL } from "node:url";
import { solveNlp, type NlpProblem, type NlpResult } from "../app/engine/nlp/index";
import { SymmetricSolver } from "../app/engine/sparse/index";

const T = 8, c = 0.1, uMax = 0.6, theta0 = 2;

export function pendulumProblem(N: number): NlpProblem {
  const h = T / N;
  const n = 3 * (N + 1), m = 2 * N;
  const th = (k: number) => 3 * k, om = (k: number) => 3 * k + 1, uu = (k: number) => 3 * k + 2;
  const wk = (k: number) => (k === 0 || k === N ? h / 2 : h);
  const xL = new Float64Array(n).fill(-Infinity), xU = new Float64Array(n).fill(Infinity);
  for (let k = 0; k <= N; k++) { xL[uu(k)] = -uMax; xU[uu(k)] = uMax; }
  xL[th(0)] = xU[th(0)] = theta0;
  xL[om(0)] = xU[om(0)] = 0;
  const x0 = new Float64Array(n);
  for (let k = 0; k <= N; k++) x0[th(k)] = theta0 * (1 - k / N);
  const gL = new Float64Array(m), gU = new Float64Array(m);
  // Jacobian pattern: defect θ (row 2k): 4 entries; defect ω (row 2k+1): 6 entries.
  const jr: number[] = [], jc: number[] = [];
  for (let k = 0; k < N; k++) {
    for (const col of [th(k), om(k), th(k + 1), om(k + 1)]) { jr.push(2 * k); jc.push(col); }
    for (const col of [th(k), om(k), uu(k), th(k + 1), om(k + 1), uu(k + 1)]) { jr.push(2 * k + 1); jc.push(col); }
  }
  const hr = new Int32Array(n), hc = new Int32Array(n);
  for (let i = 0; i < n; i++) { hr[i] = i; hc[i] = i; }
  return {
    n, m, xL, xU, gL, gU, x0,
    jacRows: Int32Array.from(jr), jacCols: Int32Array.from(jc), hessRows: hr, hessCols: hc,
    f(x) {
      let s = 0;
      for (let k = 0; k <= N; k++) s += wk(k) * (x[th(k)] ** 2 + 0.1 * x[om(k)] ** 2 + x[uu(k)] ** 2);
      return s;
    },
    gradF(x, o) {
      for (let k = 0; k <= N; k++) {
        const w = wk(k);
        o[th(k)] = 2 * w * x[th(k)]; o[om(k)] = 0.2 * w * x[om(k)]; o[uu(k)] = 2 * w * x[uu(k)];
      }
    },
    g(x, o) {
      for (let k = 0; k < N; k++) {
        const F0 = -Math.sin(x[th(k)]) - c * x[om(k)] + x[uu(k)];
        const F1 = -Math.sin(x[th(k + 1)]) - c * x[om(k + 1)] + x[uu(k + 1)];
        o[2 * k] = x[th(k + 1)] - x[th(k)] - (h / 2) * (x[om(k)] + x[om(k + 1)]);
        o[2 * k + 1] = x[om(k + 1)] - x[om(k)] - (h / 2) * (F0 + F1);
      }
    },
    jacValues(x, o) {
      let t = 0;
      const a = h / 2;
      for (let k = 0; k < N; k++) {
        o[t++] = -1; o[t++] = -a; o[t++] = 1; o[t++] = -a;
        o[t++] = a * Math.cos(x[th(k)]); o[t++] = -1 + a * c; o[t++] = -a;
        o[t++] = a * Math.cos(x[th(k + 1)]); o[t++] = 1 + a * c; o[t++] = -a;
      }
    },
    hessValues(x, sigma, lambda, o) {
      for (let k = 0; k <= N; k++) {
        const w = wk(k);
        o[th(k)] = 2 * sigma * w; o[om(k)] = 0.2 * sigma * w; o[uu(k)] = 2 * sigma * w;
      }
      const a = h / 2;
      for (let k = 0; k < N; k++) {
        const l = lambda[2 * k + 1];
        o[th(k)] -= l * a * Math.sin(x[th(k)]);
        o[th(k + 1)] -= l * a * Math.sin(x[th(k + 1)]);
      }
    },
    variableName: (i) => `${["theta", "omega", "u"][i % 3]} at node ${Math.floor(i / 3)}`,
    constraintName: (j) => `defect ${j % 2 === 0 ? "theta" : "omega"}, interval ${Math.floor(j / 2)}`,
  };
}

/** solveNlp with the default sparse solver, timing its symbolic analysis and its solves (s). */
function timedSolve(p: NlpProblem): { r: NlpResult; symbolic: number; solves: number } {
  let symbolic = 0, solves = 0;
  const r = solveNlp(p, {
    linearSolver: (n, rows, cols, signs) => {
      const t = performance.now();
      const s = new SymmetricSolver(n, rows, cols, { pivotTolerance: 1e-20, signs, pairs: signs !== undefined }); // as the default factory (nlp/index.ts)
      symbolic += (performance.now() - t) / 1000;
      // With pairs the ordering and symbolic analysis run in the first factor() call: that call is
      // counted as symbolic (it includes one numeric factorisation, a small overcount).
      let first = true;
      return {
        n: s.n,
        get nnzL() { return s.nnzL; },
        factor: (v) => {
          if (!first) return s.factor(v);
          first = false;
          const t1 = performance.now();
          const inertia = s.factor(v);
          symbolic += (performance.now() - t1) / 1000;
          return inertia;
        },
        solve: (b, x, k) => { const t0 = performance.now(); s.solve(b, x, k); solves += (performance.now() - t0) / 1000; },
      };
    },
  });
  return { r, symbolic, solves };
}

function fitSlope(xs: number[], ys: number[]): number {
  const lx = xs.map(Math.log), ly = ys.map(Math.log);
  const mx = lx.reduce((a, b) => a + b, 0) / lx.length, my = ly.reduce((a, b) => a + b, 0) / ly.length;
  let num = 0, den = 0;
  for (let i = 0; i < lx.length; i++) { num += (lx[i] - mx) * (ly[i] - my); den += (lx[i] - mx) ** 2; }
  return num / den;
}

function main(): void {
const maxArg = process.argv.indexOf("--max");
const maxN = maxArg > 0 ? Number(process.argv[maxArg + 1]) : 64000;
const sizes = [1000, 2000, 4000, 8000, 16000, 32000, 64000].filter((s) => s <= maxN);
// Warm-up (JIT) on two mid-size instances, not timed.
if (sizes.length > 0) for (let i = 0; i < 2; i++) solveNlp(pendulumProblem(1000));

console.log("banded NLP: trapezoidal pendulum swing-down, exact Hessian");
console.log("      n       m  iter   status      f               solve s   ms/iter  factor%  solves% symbolic%  nnz(L)");
const ns: number[] = [], times: number[] = [], perIter: number[] = [], factor: number[] = [];
for (const size of sizes) {
  const N = Math.round(size / 3) - 1;
  const p = pendulumProblem(N);
  // Best of two solves (the machine is shared; the minimum is the least disturbed figure).
  const [a, b] = [timedSolve(p), timedSolve(p)];
  const { r, symbolic, solves } = b.r.seconds < a.r.seconds ? b : a;
  const st = r.stats!;
  ns.push(p.n); times.push(r.seconds); perIter.push(r.seconds / Math.max(1, r.iterations)); factor.push(st.factorSeconds);
  console.log(
    `${String(p.n).padStart(7)} ${String(p.m).padStart(7)} ${String(r.iterations).padStart(5)}   ${r.status.padEnd(10)}  ${r.f.toPrecision(10).padEnd(14)} ${r.seconds.toFixed(3).padStart(8)} ${(1000 * r.seconds / Math.max(1, r.iterations)).toFixed(2).padStart(9)} ${(100 * st.factorSeconds / r.seconds).toFixed(1).padStart(7)}% ${(100 * solves / r.seconds).toFixed(1).padStart(7)}% ${(100 * symbolic / r.seconds).toFixed(1).padStart(8)}%  ${st.nnzL}`,
  );
}
if (ns.length >= 2) {
  const sSolve = fitSlope(ns, times), sIter = fitSlope(ns, perIter), sFact = fitSlope(ns, factor);
  console.log(`fitted exponent (log time vs log n): whole solve ${sSolve.toFixed(3)}, per iteration ${sIter.toFixed(3)}, factorisation ${sFact.toFixed(3)}`);
  console.log(`time ratio largest/smallest: ${(times[times.length - 1] / times[0]).toFixed(1)} for a size ratio ${(ns[ns.length - 1] / ns[0]).toFixed(1)}`);
  console.log(sSolve < 1.2 && sIter < 1.2 ? "PASS: exponents below 1.2" : "FAIL: an exponent is 1.2 or more");
}
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? "").href) main();
