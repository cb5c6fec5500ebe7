/**
 * Test helper: an NlpProblem from small hand-written callbacks with dense patterns
 * (every Jacobian entry, every lower-triangle Hessian entry). Derivatives are given through
 * accumulators add(i, j, v), which makes them easy to check against finite differences.
 */
import type { NlpProblem } from "~/engine/nlp/types";

export interface DenseSpec {
  name: string;
  n: number;
  m: number;
  x0: number[];
  xL?: number[];
  xU?: number[];
  /** Rows: [lower, upper] (equal for an equality). */
  gL: number[];
  gU: number[];
  f(x: Float64Array): number;
  grad(x: Float64Array, out: Float64Array): void;
  g(x: Float64Array, out: Float64Array): void;
  /** add(row, col, ∂g_row/∂x_col) */
  jac(x: Float64Array, add: (r: number, c: number, v: number) => void): void;
  /** add(i, j, v) for i ≥ j of ∇²(σ f + Σ λ_j g_j). */
  hess(x: Float64Array, sigma: number, lambda: Float64Array, add: (i: number, j: number, v: number) => void): void;
  /** Published optimum and its source. */
  fStar: number;
  source: string;
}

export function makeProblem(s: DenseSpec): NlpProblem {
  const { n, m } = s;
  const jacRows = new Int32Array(n * m), jacCols = new Int32Array(n * m);
  for (let r = 0; r < m; r++) for (let c = 0; c < n; c++) { jacRows[r * n + c] = r; jacCols[r * n + c] = c; }
  const nh = (n * (n + 1)) / 2;
  const hessRows = new Int32Array(nh), hessCols = new Int32Array(nh);
  const hIndex = (i: number, j: number) => (i * (i + 1)) / 2 + j;
  for (let i = 0; i < n; i++) for (let j = 0; j <= i; j++) { hessRows[hIndex(i, j)] = i; hessCols[hIndex(i, j)] = j; }
  return {
    n, m,
    x0: Float64Array.from(s.x0),
    xL: Float64Array.from(s.xL ?? new Array(n).fill(-Infinity)),
    xU: Float64Array.from(s.xU ?? new Array(n).fill(Infinity)),
    gL: Float64Array.from(s.gL),
    gU: Float64Array.from(s.gU),
    jacRows, jacCols, hessRows, hessCols,
    f: (x) => s.f(x),
    gradF: (x, out) => s.grad(x, out),
    g: (x, out) => s.g(x, out),
    jacValues: (x, out) => { out.fill(0); s.jac(x, (r, c, v) => { out[r * n + c] += v; }); },
    hessValues: (x, sigma, lambda, out) => {
      out.fill(0);
      s.hess(x, sigma, lambda, (i, j, v) => { if (i < j) [i, j] = [j, i]; out[hIndex(i, j)] += v; });
    },
  };
}

/**
 * Largest relative mismatch of the hand-written derivatives against central differences
 * (step h = 1e-6 · max(1, |x_i|)): gradient of f, Jacobian of g, Hessian of σ f + λᵀg from
 * differences of the gradient of the Lagrangian.
 */
export function derivativeMismatch(s: DenseSpec, x: Float64Array, sigma: number, lambda: Float64Array): { grad: number; jac: number; hess: number } {
  const { n, m } = s;
  const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(1, Math.abs(b));
  const gr = new Float64Array(n);
  s.grad(x, gr);
  const J = Array.from({ length: m }, () => new Float64Array(n));
  s.jac(x, (r, c, v) => { J[r][c] += v; });
  const H = Array.from({ length: n }, () => new Float64Array(n));
  s.hess(x, sigma, lambda, (i, j, v) => { H[i][j] += v; if (i !== j) H[j][i] += v; });
  const gradL = (y: Float64Array) => {
    const out = new Float64Array(n);
    const g0 = new Float64Array(n);
    s.grad(y, g0);
    for (let i = 0; i < n; i++) out[i] = sigma * g0[i];
    s.jac(y, (r, c, v) => { out[c] += lambda[r] * v; });
    return out;
  };
  let eg = 0, ej = 0, eh = 0;
  const gp = new Float64Array(m), gm = new Float64Array(m);
  for (let i = 0; i < n; i++) {
    const h = 1e-6 * Math.max(1, Math.abs(x[i]));
    const xp = Float64Array.from(x), xm = Float64Array.from(x);
    xp[i] += h; xm[i] -= h;
    eg = Math.max(eg, rel(gr[i], (s.f(xp) - s.f(xm)) / (2 * h)));
    s.g(xp, gp); s.g(xm, gm);
    for (let r = 0; r < m; r++) ej = Math.max(ej, rel(J[r][i], (gp[r] - gm[r]) / (2 * h)));
    const lp = gradL(xp), lm = gradL(xm);
    for (let k = 0; k < n; k++) eh = Math.max(eh, rel(H[k][i], (lp[k] - lm[k]) / (2 * h)));
  }
  return { grad: eg, jac: ej, hess: eh };
}
