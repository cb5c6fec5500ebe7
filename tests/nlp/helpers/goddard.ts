/**
 * Goddard rocket in the form of the COPS collection (E. D. Dolan, J. J. Moré and T. S. Munson,
 * "Benchmarking optimization software with COPS 3.0", Argonne ANL/MCS-TM-273, 2004, problem
 * "goddard"; parameters recalled from memory), trapezoidal transcription written by hand:
 *
 *   maximise h(t_f)   over thrust 0 ≤ T ≤ T_max and free final time t_f ≥ 0
 *   h' = v,  v' = (T − D(h, v))/m − g(h),  m' = −T/c
 *   D = D_c v² exp(−h_c (h − h₀)/h₀),  g = g₀ (h₀/h)²
 *   h ≥ h₀, v ≥ 0, m_f ≤ m ≤ m₀;  h(0) = h₀, v(0) = v₀, m(0) = m₀, m(t_f) = m_f
 *
 * with h₀ = v₀... = (1, 0, 1), g₀ = 1, T_c = 3.5, h_c = 500, v_c = 620, m_c = 0.6,
 * c = ½√(g₀h₀), m_f = m_c m₀, D_c = ½ v_c m₀/g₀, T_max = T_c g₀ m₀.
 * Variables (h_k, v_k, m_k, T_k), k = 0..N, then t_f: n = 4(N + 1) + 1; rows 3N.
 * COPS starting point: h = 1, v = (k/N)(1 − k/N), m = m₀ + (m_f − m₀) k/N, T = T_max/2, t_f = 1.
 */
import type { NlpProblem } from "~/engine/nlp/types";

const h0 = 1, v0 = 0, m0 = 1, g0 = 1, Tc = 3.5, hc = 500, vc = 620, mc = 0.6;
const c = 0.5 * Math.sqrt(g0 * h0), mf = mc * m0, Dc = (0.5 * vc * m0) / g0, Tmax = Tc * g0 * m0;
const beta = hc / h0;

/** a = v' and its first and second derivatives in (h, v, m, T). */
function accel(h: number, v: number, m: number, T: number, d1: Float64Array | null, d2: Float64Array | null): number {
  const E = Math.exp(-beta * (h - h0));
  const D = Dc * v * v * E;
  const g = (g0 * h0 * h0) / (h * h);
  const a = (T - D) / m - g;
  if (d1) {
    const Dv = 2 * Dc * v * E;
    d1[0] = (beta * D) / m + (2 * g0 * h0 * h0) / (h * h * h);
    d1[1] = -Dv / m;
    d1[2] = -(T - D) / (m * m);
    d1[3] = 1 / m;
    if (d2) {
      // lower triangle of ∇²a in the order (hh, vh, vv, mh, mv, mm, Th, Tv, Tm, TT)
      d2[0] = (-beta * beta * D) / m - (6 * g0 * h0 * h0) / (h * h * h * h);
      d2[1] = (beta * Dv) / m;
      d2[2] = (-2 * Dc * E) / m;
      d2[3] = (-beta * D) / (m * m);
      d2[4] = Dv / (m * m);
      d2[5] = (2 * (T - D)) / (m * m * m);
      d2[6] = 0;
      d2[7] = 0;
      d2[8] = -1 / (m * m);
      d2[9] = 0;
    }
  }
  return a;
}

export const GODDARD_HEIGHT = 1.01283; // COPS 3.0 report, goddard, optimal h(t_f) (recalled from memory)

export function goddardProblem(N: number): NlpProblem {
  const n = 4 * (N + 1) + 1, m = 3 * N, tf = n - 1;
  const H = (k: number) => 4 * k, V = (k: number) => 4 * k + 1, M = (k: number) => 4 * k + 2, U = (k: number) => 4 * k + 3;
  const xL = new Float64Array(n), xU = new Float64Array(n).fill(Infinity);
  for (let k = 0; k <= N; k++) {
    xL[H(k)] = h0; xL[V(k)] = 0; xL[M(k)] = mf; xU[M(k)] = m0; xL[U(k)] = 0; xU[U(k)] = Tmax;
  }
  xL[H(0)] = xU[H(0)] = h0; xL[V(0)] = xU[V(0)] = v0; xL[M(0)] = xU[M(0)] = m0; xL[M(N)] = xU[M(N)] = mf;
  xL[tf] = 0;
  const x0 = new Float64Array(n);
  for (let k = 0; k <= N; k++) {
    const s = k / N;
    x0[H(k)] = 1; x0[V(k)] = s * (1 - s); x0[M(k)] = m0 + (mf - m0) * s; x0[U(k)] = Tmax / 2;
  }
  x0[tf] = 1;
  // Jacobian pattern per interval k: row 3k (h): h_k, v_k, h_{k+1}, v_{k+1}, t_f;
  // row 3k+1 (v): h,v,m,T at k and k+1, t_f; row 3k+2 (m): m_k, T_k, m_{k+1}, T_{k+1}, t_f.
  const jr: number[] = [], jc: number[] = [];
  for (let k = 0; k < N; k++) {
    for (const col of [H(k), V(k), H(k + 1), V(k + 1), tf]) { jr.push(3 * k); jc.push(col); }
    for (const col of [H(k), V(k), M(k), U(k), H(k + 1), V(k + 1), M(k + 1), U(k + 1), tf]) { jr.push(3 * k + 1); jc.push(col); }
    for (const col of [M(k), U(k), M(k + 1), U(k + 1), tf]) { jr.push(3 * k + 2); jc.push(col); }
  }
  // Hessian pattern per node: lower triangle of (h, v, m, T) (10), then (t_f, h/v/m/T) (4).
  const hr: number[] = [], hcl: number[] = [];
  const local = [[0, 0], [1, 0], [1, 1], [2, 0], [2, 1], [2, 2], [3, 0], [3, 1], [3, 2], [3, 3]];
  for (let k = 0; k <= N; k++) {
    for (const [a, b] of local) { hr.push(4 * k + a); hcl.push(4 * k + b); }
    for (let a = 0; a < 4; a++) { hr.push(tf); hcl.push(4 * k + a); }
  }
  const d1 = new Float64Array(4), d2 = new Float64Array(10), e1 = new Float64Array(4);
  return {
    n, m, xL, xU, gL: new Float64Array(m), gU: new Float64Array(m), x0,
    jacRows: Int32Array.from(jr), jacCols: Int32Array.from(jc), hessRows: Int32Array.from(hr), hessCols: Int32Array.from(hcl),
    f: (x) => -x[H(N)],
    gradF: (x, o) => { o.fill(0); o[H(N)] = -1; },
    g(x, o) {
      const tau = x[tf] / (2 * N);
      let aPrev = accel(x[H(0)], x[V(0)], x[M(0)], x[U(0)], null, null);
      for (let k = 0; k < N; k++) {
        const aNext = accel(x[H(k + 1)], x[V(k + 1)], x[M(k + 1)], x[U(k + 1)], null, null);
        o[3 * k] = x[H(k + 1)] - x[H(k)] - tau * (x[V(k)] + x[V(k + 1)]);
        o[3 * k + 1] = x[V(k + 1)] - x[V(k)] - tau * (aPrev + aNext);
        o[3 * k + 2] = x[M(k + 1)] - x[M(k)] + (tau * (x[U(k)] + x[U(k + 1)])) / c;
        aPrev = aNext;
      }
    },
    jacValues(x, o) {
      const tau = x[tf] / (2 * N), dt = 1 / (2 * N);
      let t = 0;
      for (let k = 0; k < N; k++) {
        o[t++] = -1; o[t++] = -tau; o[t++] = 1; o[t++] = -tau; o[t++] = -dt * (x[V(k)] + x[V(k + 1)]);
        const a0 = accel(x[H(k)], x[V(k)], x[M(k)], x[U(k)], d1, null);
        const a1 = accel(x[H(k + 1)], x[V(k + 1)], x[M(k + 1)], x[U(k + 1)], e1, null);
        o[t++] = -tau * d1[0]; o[t++] = -1 - tau * d1[1]; o[t++] = -tau * d1[2]; o[t++] = -tau * d1[3];
        o[t++] = -tau * e1[0]; o[t++] = 1 - tau * e1[1]; o[t++] = -tau * e1[2]; o[t++] = -tau * e1[3];
        o[t++] = -dt * (a0 + a1);
        o[t++] = -1; o[t++] = tau / c; o[t++] = 1; o[t++] = tau / c; o[t++] = (dt * (x[U(k)] + x[U(k + 1)])) / c;
      }
    },
    hessValues(x, _sigma, lambda, o) {
      // The objective −h_N is linear: only the constraints contribute.
      const tau = x[tf] / (2 * N), dt = 1 / (2 * N);
      o.fill(0);
      for (let k = 0; k <= N; k++) {
        // node k appears in interval k − 1 (as k+1) and in interval k (as k)
        let lh = 0, lv = 0, lm = 0;
        if (k > 0) { lh += lambda[3 * (k - 1)]; lv += lambda[3 * (k - 1) + 1]; lm += lambda[3 * (k - 1) + 2]; }
        if (k < N) { lh += lambda[3 * k]; lv += lambda[3 * k + 1]; lm += lambda[3 * k + 2]; }
        accel(x[H(k)], x[V(k)], x[M(k)], x[U(k)], d1, d2);
        const base = 14 * k;
        for (let q = 0; q < 10; q++) o[base + q] = -tau * lv * d2[q];
        // (t_f, h), (t_f, v), (t_f, m), (t_f, T)
        o[base + 10] = -dt * lv * d1[0];
        o[base + 11] = -dt * lh - dt * lv * d1[1];
        o[base + 12] = -dt * lv * d1[2];
        o[base + 13] = -dt * lv * d1[3] + (dt * lm) / c;
      }
    },
  };
}
