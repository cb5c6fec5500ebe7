/**
 * Limited-memory BFGS approximation of the Lagrangian Hessian on w[0..nX), in the compact
 * representation of Byrd, Nocedal and Schnabel, "Representations of quasi-Newton matrices and
 * their use in limited memory methods", Math. Programming 63, 1994, eq. (2.17):
 *
 *   B = σ I − U M⁻¹ Uᵀ,   U = [σ S  Y] (nX × 2k),   M = [ σ SᵀS  L ; Lᵀ  −D ]   (2k × 2k)
 *
 * with L_ij = s_iᵀ y_j (i > j), D = diag(s_iᵀ y_i), k ≤ memory pairs (oldest first).
 * Pairs are damped as in Powell's rule (Nocedal and Wright, Numerical Optimization, 2006,
 * Procedure 18.2): r = θ y + (1 − θ) B s with θ = 1 if sᵀy ≥ 0.2 sᵀBs, else
 * 0.8 sᵀBs / (sᵀBs − sᵀy), so B stays positive definite; σ = rᵀr / sᵀr (ibid. eq. (7.20)).
 *
 * The KKT matrix is K = K₀ − Ũ M⁻¹ Ũᵀ, with K₀ the sparse matrix holding σ I on the diagonal
 * and Ũ = U padded with zeros to N + m rows. Solves use Sherman–Morrison–Woodbury:
 *
 *   K⁻¹ b = x₀ − V G⁻¹ Ũᵀ x₀,   x₀ = K₀⁻¹ b,   V = K₀⁻¹ Ũ,   G = −M + Ũᵀ V   (2k × 2k)
 *
 * so only K₀ is factorised (sparse); G is dense by nature and small (ml-matrix LU). Since B is
 * positive definite, K and K₀ have the same inertia when J has full rank, so the inertia
 * correction is applied to K₀. Per iteration: 2k extra solves with K₀, O(k (N + m)) work.
 */
import { Matrix, LuDecomposition } from "ml-matrix";

export class LimitedMemoryHessian {
  sigma = 1;
  private readonly S: Float64Array[] = [];
  private readonly R: Float64Array[] = [];
  private readonly V: Float64Array[] = [];
  private lu: LuDecomposition | null = null;
  private readonly tmp: Float64Array;
  private readonly rTmp: Float64Array;

  constructor(readonly nX: number, readonly memory: number, readonly dim: number) {
    this.tmp = new Float64Array(nX);
    this.rTmp = new Float64Array(nX);
    for (let i = 0; i < 2 * memory; i++) this.V.push(new Float64Array(dim));
  }

  get pairs(): number {
    return this.S.length;
  }

  /** Add σ to the first nX diagonal entries. */
  addDiagonal(diag: Float64Array): void {
    for (let i = 0; i < this.nX; i++) diag[i] += this.sigma;
  }

  /** Column c of U (length nX): σ s_c for c < k, r_{c−k} otherwise. */
  private uCol(c: number): Float64Array | null {
    const k = this.S.length;
    return c < k ? this.S[c] : this.R[c - k];
  }
  private uScale(c: number): number {
    return c < this.S.length ? this.sigma : 1;
  }

  private middle(): Matrix {
    const k = this.S.length;
    const M = new Matrix(2 * k, 2 * k);
    for (let i = 0; i < k; i++) {
      for (let j = 0; j < k; j++) {
        M.set(i, j, this.sigma * dot(this.S[i], this.S[j]));
        if (i > j) { const v = dot(this.S[i], this.R[j]); M.set(i, k + j, v); M.set(k + j, i, v); }
      }
      M.set(k + i, k + i, -dot(this.S[i], this.R[i]));
    }
    return M;
  }

  /** out = B v (length nX). */
  times(v: Float64Array, out: Float64Array): void {
    const k = this.S.length;
    for (let i = 0; i < this.nX; i++) out[i] = this.sigma * v[i];
    if (k === 0) return;
    const t = new Matrix(2 * k, 1);
    for (let c = 0; c < 2 * k; c++) t.set(c, 0, this.uScale(c) * dot(this.uCol(c)!, v));
    const u = new LuDecomposition(this.middle()).solve(t);
    for (let c = 0; c < 2 * k; c++) {
      const col = this.uCol(c)!, a = this.uScale(c) * u.get(c, 0);
      for (let i = 0; i < this.nX; i++) out[i] -= a * col[i];
    }
  }

  /** Damped update with s = Δw, y = Δ∇L on w[0..nX). Returns false when skipped. */
  update(s: Float64Array, y: Float64Array): boolean {
    const ss = dot(s, s);
    if (!(ss > 1e-30)) return false;
    const Bs = this.tmp;
    this.times(s, Bs);
    const sBs = dot(s, Bs), sy = dot(s, y);
    const th = sy >= 0.2 * sBs ? 1 : (0.8 * sBs) / (sBs - sy);
    const r = this.rTmp;
    for (let i = 0; i < this.nX; i++) r[i] = th * y[i] + (1 - th) * Bs[i];
    const sr = dot(s, r), rr = dot(r, r);
    if (!(sr > 1e-14 * Math.sqrt(ss * rr))) return false;
    // Reuse the oldest pair's buffers once the memory is full (no allocation per iteration then).
    const full = this.S.length === this.memory;
    const sNew = full ? this.S.shift()! : new Float64Array(this.nX);
    const rNew = full ? this.R.shift()! : new Float64Array(this.nX);
    for (let i = 0; i < this.nX; i++) { sNew[i] = s[i]; rNew[i] = r[i]; }
    this.S.push(sNew);
    this.R.push(rNew);
    this.sigma = Math.min(1e8, Math.max(1e-8, rr / sr));
    return true;
  }

  /** After K₀ was factorised: V = K₀⁻¹ Ũ and the LU of G. solve0(b, x) solves with K₀. */
  prepare(solve0: (b: Float64Array, x: Float64Array) => void, rhs: Float64Array): void {
    const k2 = 2 * this.S.length;
    this.lu = null;
    if (k2 === 0) return;
    for (let c = 0; c < k2; c++) {
      rhs.fill(0);
      const col = this.uCol(c)!, a = this.uScale(c);
      for (let i = 0; i < this.nX; i++) rhs[i] = a * col[i];
      solve0(rhs, this.V[c]);
    }
    const G = this.middle().mul(-1);
    for (let a = 0; a < k2; a++) {
      const ca = this.uCol(a)!, sa = this.uScale(a);
      for (let b = 0; b < k2; b++) {
        const vb = this.V[b];
        let t = 0;
        for (let i = 0; i < this.nX; i++) t += ca[i] * vb[i];
        G.set(a, b, G.get(a, b) + sa * t);
      }
    }
    this.lu = new LuDecomposition(G);
  }

  /** x = K⁻¹ b by SMW (x must not alias b). */
  solve(solve0: (b: Float64Array, x: Float64Array) => void, b: Float64Array, x: Float64Array): void {
    solve0(b, x);
    if (!this.lu) return;
    const k2 = 2 * this.S.length;
    const t = new Matrix(k2, 1);
    for (let c = 0; c < k2; c++) {
      const col = this.uCol(c)!;
      let v = 0;
      for (let i = 0; i < this.nX; i++) v += col[i] * x[i];
      t.set(c, 0, this.uScale(c) * v);
    }
    const u = this.lu.solve(t);
    for (let c = 0; c < k2; c++) {
      const a = u.get(c, 0), vc = this.V[c];
      for (let i = 0; i < x.length; i++) x[i] -= a * vc[i];
    }
  }
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  const n = Math.min(a.length, b.length);
  for (let i = 0; i < n; i++) s += a[i] * b[i];
  return s;
}
