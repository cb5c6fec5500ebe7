/**
 * Mann–Whitney U test (Wilcoxon rank-sum test) of two independent samples.
 *
 * H. B. Mann, D. R. Whitney, "On a test of whether one of two random variables is
 * stochastically larger than the other", Ann. Math. Statist. 18(1), 50–60, 1947.
 *
 * Statistic. With x of size n₁, y of size n₂, n = n₁ + n₂ and R₁ the sum of the mid-ranks of x
 * in the pooled sample,
 *     U₁ = R₁ − n₁(n₁ + 1)/2 = #{(i, j): x_i > y_j} + ½·#{(i, j): x_i = y_j},   U₂ = n₁n₂ − U₁.
 * A large U₁ means x tends to be larger than y.
 *
 * Null distribution.
 *  - exact (no ties): P(U = u; m, n) from the recursion of Mann & Whitney (1947),
 *        P(u; m, n) = m/(m+n) · P(u − n; m − 1, n) + n/(m+n) · P(u; m, n − 1),
 *    with P(u; m, 0) = P(u; 0, n) = [u = 0]. The largest pooled value belongs to x with
 *    probability m/(m+n) and then beats all n values of y. Cost O(m·n·(m·n)), so it is used by
 *    default for n₁, n₂ ≤ EXACT_MAX_SIZE.
 *  - normal (ties or larger samples): mean μ = n₁n₂/2 and the tie-corrected variance
 *        σ² = (n₁n₂/12) · [ (n + 1) − Σ_k (t_k³ − t_k) / (n(n − 1)) ],
 *    t_k the size of the k-th group of tied values (E. L. Lehmann, "Nonparametrics:
 *    Statistical Methods Based on Ranks", 1975, ch. 1 — the formula for the variance under ties);
 *    continuity correction ½ towards μ.
 *
 * p-values: "greater" = P(U ≥ U₁) (x larger), "less" = P(U ≤ U₁), "two-sided" = min(1, 2·min(both)).
 */
import { normalCdf, normalSf } from "./normal";
import type { Sample } from "./summary";

export type Alternative = "two-sided" | "greater" | "less";

export interface MannWhitneyOptions {
  alternative?: Alternative;
  /** "auto": exact without ties when both sizes ≤ EXACT_MAX_SIZE, normal otherwise. */
  method?: "auto" | "exact" | "normal";
  /** Continuity correction of ½ in the normal approximation (default true). */
  continuity?: boolean;
}

export interface MannWhitneyResult {
  /** U₁ for x (pairs where x beats y, ties counting ½). */
  u1: number;
  /** U₂ = n₁n₂ − U₁. */
  u2: number;
  n1: number;
  n2: number;
  method: "exact" | "normal";
  alternative: Alternative;
  pValue: number;
  /** Standardised statistic of the normal approximation (null for the exact method). */
  z: number | null;
  /** Whether the pooled sample had tied values. */
  ties: boolean;
}

/** Largest sample size for which "auto" uses the exact distribution (cost ≈ n⁴ = 6·10⁶ steps). */
export const EXACT_MAX_SIZE = 50;

/**
 * Mid-ranks (1-based; tied values share the mean of their ranks) of `values`, and the tie
 * term Σ (t³ − t) over groups of tied values.
 */
export function midRanks(values: ArrayLike<number>): { ranks: Float64Array; tieTerm: number } {
  const n = values.length;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => values[a] - values[b]);
  const ranks = new Float64Array(n);
  let tieTerm = 0;
  let i = 0;
  while (i < n) {
    let j = i;
    while (j + 1 < n && values[order[j + 1]] === values[order[i]]) j++;
    const t = j - i + 1;
    const r = (i + j) / 2 + 1; // mean of ranks i+1 … j+1
    for (let k = i; k <= j; k++) ranks[order[k]] = r;
    if (t > 1) tieTerm += t * t * t - t;
    i = j + 1;
  }
  return { ranks, tieTerm };
}

const exactCache = new Map<string, Float64Array>();

/**
 * Exact null probabilities P(U = u), u = 0 … m·n, for sample sizes (m, n) without ties,
 * by the recursion above. Cached per (m, n).
 */
export function exactUDistribution(m: number, n: number): Float64Array {
  if (!Number.isInteger(m) || !Number.isInteger(n) || m < 0 || n < 0) {
    throw new Error(`exactUDistribution: sizes must be non-negative integers, got (${m}, ${n})`);
  }
  const key = `${m},${n}`;
  const hit = exactCache.get(key);
  if (hit) return hit;
  // prev[j] = P(·; i − 1, j), cur[j] = P(·; i, j), each of length (i·j + 1).
  let prev: Float64Array[] = [];
  for (let j = 0; j <= n; j++) prev.push(Float64Array.of(1)); // i = 0: U ≡ 0
  for (let i = 1; i <= m; i++) {
    const cur: Float64Array[] = [Float64Array.of(1)]; // j = 0: U ≡ 0
    for (let j = 1; j <= n; j++) {
      const p = new Float64Array(i * j + 1);
      const a = i / (i + j);
      const b = j / (i + j);
      const pm = prev[j]; // (i − 1, j): support 0 … (i−1)·j
      const pn = cur[j - 1]; // (i, j − 1): support 0 … i·(j−1)
      for (let u = 0; u < pm.length; u++) p[u + j] += a * pm[u];
      for (let u = 0; u < pn.length; u++) p[u] += b * pn[u];
      cur.push(p);
    }
    prev = cur;
  }
  const dist = prev[n];
  if (exactCache.size > 64) exactCache.clear();
  exactCache.set(key, dist);
  return dist;
}

/** P(U ≤ u) under H₀ for sizes (m, n), exact (no ties). */
export function exactUCdf(u: number, m: number, n: number): number {
  const d = exactUDistribution(m, n);
  let s = 0;
  const top = Math.min(Math.floor(u + 1e-9), d.length - 1);
  for (let k = 0; k <= top; k++) s += d[k];
  return Math.min(1, s);
}

function checkSample(s: Sample, name: string): void {
  if (s.length === 0) throw new Error(`mannWhitneyU: sample ${name} is empty`);
  for (let i = 0; i < s.length; i++) {
    if (!Number.isFinite(s[i])) throw new Error(`mannWhitneyU: sample ${name} has a non-finite value at position ${i} (${s[i]})`);
  }
}

/** The Mann–Whitney U test of x against y. */
export function mannWhitneyU(x: Sample, y: Sample, options: MannWhitneyOptions = {}): MannWhitneyResult {
  const alternative = options.alternative ?? "two-sided";
  const continuity = options.continuity ?? true;
  checkSample(x, "x");
  checkSample(y, "y");
  const n1 = x.length;
  const n2 = y.length;
  const n = n1 + n2;
  const pooled = new Float64Array(n);
  for (let i = 0; i < n1; i++) pooled[i] = x[i];
  for (let j = 0; j < n2; j++) pooled[n1 + j] = y[j];
  const { ranks, tieTerm } = midRanks(pooled);
  let r1 = 0;
  for (let i = 0; i < n1; i++) r1 += ranks[i];
  const u1 = r1 - (n1 * (n1 + 1)) / 2;
  const u2 = n1 * n2 - u1;
  const ties = tieTerm > 0;

  let method: "exact" | "normal";
  if (options.method === "exact") {
    if (ties) throw new Error("mannWhitneyU: the exact method needs samples without ties; use the normal approximation");
    method = "exact";
  } else if (options.method === "normal") method = "normal";
  else method = !ties && n1 <= EXACT_MAX_SIZE && n2 <= EXACT_MAX_SIZE ? "exact" : "normal";

  let pValue: number;
  let z: number | null = null;
  if (method === "exact") {
    // P(U ≥ u1) = P(U ≤ n1 n2 − u1) by the symmetry of the null distribution.
    const pLess = exactUCdf(u1, n1, n2);
    const pGreater = exactUCdf(u2, n1, n2);
    pValue = alternative === "greater" ? pGreater : alternative === "less" ? pLess : Math.min(1, 2 * Math.min(pLess, pGreater));
  } else {
    const mu = (n1 * n2) / 2;
    const sigma2 = ((n1 * n2) / 12) * (n + 1 - tieTerm / (n * (n - 1)));
    if (!(sigma2 > 0)) {
      // Every pooled value equal: no evidence either way.
      pValue = 1;
      z = 0;
    } else {
      const sigma = Math.sqrt(sigma2);
      const cc = continuity ? 0.5 : 0;
      if (alternative === "greater") {
        z = (u1 - mu - cc) / sigma;
        pValue = normalSf(z);
      } else if (alternative === "less") {
        z = (u1 - mu + cc) / sigma;
        pValue = normalCdf(z);
      } else {
        z = (Math.abs(u1 - mu) - cc) / sigma;
        pValue = Math.min(1, 2 * normalSf(z));
      }
    }
  }
  return { u1, u2, n1, n2, method, alternative, pValue, z, ties };
}
