/**
 * Legendre–Gauss–Radau (LGR) points, quadrature weights and the differentiation matrix used by
 * the LGR pseudospectral transcription (lgr.ts).
 *
 * Points: the K roots σ_0 = −1 < σ_1 < … < σ_{K−1} < 1 of P_{K−1}(σ) + P_K(σ), P_n the Legendre
 * polynomial (Abramowitz and Stegun, Handbook of Mathematical Functions, 1964, 25.4.31), found by
 * Newton's method from the Chebyshev–Gauss–Radau points −cos(2πj/(2K−1)).
 * Weights: w_0 = 2/K², w_j = (1 − σ_j) / (K² P_{K−1}(σ_j)²) (same reference). The rule is exact
 * for polynomials of degree ≤ 2K − 2 and the weights sum to 2.
 * Differentiation matrix: D (K × (K+1)) with D_jl = ℓ_l'(σ_j) for the Lagrange basis ℓ_l on the
 * K + 1 support points σ_0..σ_{K−1}, σ_K = +1 (the non-collocated end point) — the LGR
 * differential form of Garg, Patterson, Hager, Rao, Benson and Huntington, Automatica 46(11), 2010.
 * Entries from barycentric weights b: D_jl = (b_l/b_j)/(σ_j − σ_l), D_jj = −Σ_{l≠j} D_jl
 * (Berrut and Trefethen, SIAM Review 46(3), 2004, eq. (9.4)).
 */
import { barycentricWeights } from "./interpolation";

/** P_n(x) and P_{n−1}(x) by the three-term recurrence (n+1)P_{n+1} = (2n+1) x P_n − n P_{n−1}. */
export function legendre(n: number, x: number): { p: number; pPrev: number } {
  if (n === 0) return { p: 1, pPrev: 0 };
  let pm = 1, p = x;
  for (let k = 1; k < n; k++) {
    const pn = ((2 * k + 1) * x * p - k * pm) / (k + 1);
    pm = p;
    p = pn;
  }
  return { p, pPrev: pm };
}

/** P_n'(x) = n (x P_n − P_{n−1}) / (x² − 1), |x| < 1. */
function legendreDeriv(n: number, x: number): number {
  if (n === 0) return 0;
  const { p, pPrev } = legendre(n, x);
  return (n * (x * p - pPrev)) / (x * x - 1);
}

export interface LgrRule {
  K: number;
  /** K LGR points on [−1, 1). */
  points: Float64Array;
  /** K weights. */
  weights: Float64Array;
  /** K + 1 support points (points and +1). */
  support: Float64Array;
  /** Differentiation matrix, row-major K × (K+1). */
  D: Float64Array;
}

const cache = new Map<number, LgrRule>();

export function lgrRule(K: number): LgrRule {
  if (!Number.isInteger(K) || K < 1 || K > 60) throw new Error(`LGR degree must be an integer in 1..60 (got ${K})`);
  const hit = cache.get(K);
  if (hit) return hit;
  const x = new Float64Array(K);
  x[0] = -1;
  const q = (s: number) => legendre(K - 1, s).p + legendre(K, s).p;
  const dq = (s: number) => legendreDeriv(K - 1, s) + legendreDeriv(K, s);
  for (let j = 1; j < K; j++) {
    let s = -Math.cos((2 * Math.PI * j) / (2 * K - 1));
    for (let it = 0; it < 100; it++) {
      const ds = q(s) / dq(s);
      s -= ds;
      if (Math.abs(ds) < 1e-16) break;
    }
    x[j] = s;
  }
  x.sort();
  const w = new Float64Array(K);
  for (let j = 0; j < K; j++) {
    if (j === 0) w[j] = 2 / (K * K);
    else {
      const p = legendre(K - 1, x[j]).p;
      w[j] = (1 - x[j]) / (K * K * p * p);
    }
  }
  const support = new Float64Array(K + 1);
  support.set(x);
  support[K] = 1;
  const b = barycentricWeights(support);
  const D = new Float64Array(K * (K + 1));
  for (let j = 0; j < K; j++) {
    let diag = 0;
    for (let l = 0; l <= K; l++) {
      if (l === j) continue;
      const v = b[l] / b[j] / (support[j] - support[l]);
      D[j * (K + 1) + l] = v;
      diag -= v;
    }
    D[j * (K + 1) + j] = diag;
  }
  const rule = { K, points: x, weights: w, support, D };
  cache.set(K, rule);
  return rule;
}
