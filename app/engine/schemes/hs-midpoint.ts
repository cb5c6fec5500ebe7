/**
 * The compressed Hermite–Simpson midpoint as a composite point function (used by
 * hermite-simpson.ts, variant "compressed").
 *
 * In the compressed form the midpoint state is not a variable but the Hermite interpolant's value
 * (Hargraves and Paris, J. Guidance 10(4), 1987; Betts, Practical Methods for Optimal Control...,
 * SIAM 2010, §4.6.8):
 *   x_m = (x_k + x_{k+1})/2 + (h T/8) (f(z_k) − f(z_{k+1})),   z_m = [t_m, x_m, u_m],
 * and any point function H (dynamics, running cost, path) is evaluated at z_m. This module gives
 * Hm(v) = H(z_m(v)) with exact dense first and second derivatives by the chain rule, on the input
 *   v = [h, T, t_m, z_k (1+nx+nu), z_{k+1} (1+nx+nu), u_m (nu)],  nv = 3 + 2(1+nx+nu) + nu.
 * With P = ∂z_m/∂v and g = J_Hᵀ w restricted to the x_m rows:
 *   ∂Hm/∂v = J_H P
 *   ∇²(wᵀHm) = Pᵀ (Σ w_i ∇²H_i) P + Σ_l g_l ∇²x_{m,l},
 *   ∇²x_{m,l} = (hT/8)(∇²f_l(z_k) ⊕ −∇²f_l(z_{k+1})) + cross terms of h and T with ∇f_l and
 *               ∂²/∂h∂T = (f_l(z_k) − f_l(z_{k+1}))/8.
 * The pattern is dense (all nOut × nv Jacobian entries, the full lower triangle of the Hessian).
 */
import type { PointFunction } from "../problem/types";

export function hsMidpointFunction(f: PointFunction, H: PointFunction, nx: number, nu: number): PointFunction {
  const nIn = 1 + nx + nu;
  const nv = 3 + 2 * nIn + nu;
  const nOut = H.nOut;
  const oK = 3, o1 = 3 + nIn, oU = 3 + 2 * nIn;
  const jacRows = new Int32Array(nOut * nv), jacCols = new Int32Array(nOut * nv);
  for (let i = 0; i < nOut; i++)
    for (let j = 0; j < nv; j++) {
      jacRows[i * nv + j] = i;
      jacCols[i * nv + j] = j;
    }
  const nH = (nv * (nv + 1)) / 2;
  const hessRows = new Int32Array(nH), hessCols = new Int32Array(nH);
  {
    let k = 0;
    for (let r = 0; r < nv; r++)
      for (let c = 0; c <= r; c++) {
        hessRows[k] = r;
        hessCols[k] = c;
        k++;
      }
  }
  // workspaces
  const zk = new Float64Array(nIn), z1 = new Float64Array(nIn), zm = new Float64Array(nIn);
  const fk = new Float64Array(nx), f1 = new Float64Array(nx);
  const jfkS = new Float64Array(f.jacRows.length), jf1S = new Float64Array(f.jacRows.length);
  const Jfk = new Float64Array(nx * nIn), Jf1 = new Float64Array(nx * nIn);
  const jhS = new Float64Array(H.jacRows.length);
  const JH = new Float64Array(nOut * nIn);
  const P = new Float64Array(nIn * nv);
  const hhS = new Float64Array(H.hessRows.length);
  const W = new Float64Array(nIn * nIn);
  const hfS = new Float64Array(f.hessRows.length);
  const G = new Float64Array(nv * nv);
  const gw = new Float64Array(nx);
  const PW = new Float64Array(nIn * nv);
  const ws = new Float64Array(nx);

  const prepare = (v: Float64Array) => {
    const h = v[0], T = v[1];
    for (let c = 0; c < nIn; c++) {
      zk[c] = v[oK + c];
      z1[c] = v[o1 + c];
    }
    f.eval(zk, fk);
    f.eval(z1, f1);
    zm[0] = v[2];
    for (let l = 0; l < nx; l++) zm[1 + l] = 0.5 * (zk[1 + l] + z1[1 + l]) + ((h * T) / 8) * (fk[l] - f1[l]);
    for (let j = 0; j < nu; j++) zm[1 + nx + j] = v[oU + j];
  };
  const densify = (rows: Int32Array, cols: Int32Array, vals: Float64Array, ncol: number, out: Float64Array) => {
    out.fill(0);
    for (let e = 0; e < rows.length; e++) out[rows[e] * ncol + cols[e]] += vals[e];
  };
  /** P = ∂z_m/∂v (nIn × nv), needs prepare() and the dense Jf at both nodes. */
  const buildP = (v: Float64Array) => {
    const h = v[0], T = v[1];
    f.jac(zk, jfkS);
    f.jac(z1, jf1S);
    densify(f.jacRows, f.jacCols, jfkS, nIn, Jfk);
    densify(f.jacRows, f.jacCols, jf1S, nIn, Jf1);
    P.fill(0);
    P[0 * nv + 2] = 1;
    const a = (h * T) / 8;
    for (let l = 0; l < nx; l++) {
      const row = (1 + l) * nv;
      for (let c = 0; c < nIn; c++) {
        P[row + oK + c] = a * Jfk[l * nIn + c];
        P[row + o1 + c] = -a * Jf1[l * nIn + c];
      }
      P[row + oK + 1 + l] += 0.5;
      P[row + o1 + 1 + l] += 0.5;
      P[row + 0] = (T / 8) * (fk[l] - f1[l]);
      P[row + 1] = (h / 8) * (fk[l] - f1[l]);
    }
    for (let j = 0; j < nu; j++) P[(1 + nx + j) * nv + oU + j] = 1;
  };

  return {
    nIn: nv,
    nOut,
    jacRows,
    jacCols,
    hessRows,
    hessCols,
    eval(v, out) {
      prepare(v);
      H.eval(zm, out);
    },
    jac(v, out) {
      prepare(v);
      buildP(v);
      H.jac(zm, jhS);
      densify(H.jacRows, H.jacCols, jhS, nIn, JH);
      for (let i = 0; i < nOut; i++)
        for (let j = 0; j < nv; j++) {
          let s = 0;
          for (let c = 0; c < nIn; c++) s += JH[i * nIn + c] * P[c * nv + j];
          out[i * nv + j] = s;
        }
    },
    hess(v, w, out) {
      const h = v[0], T = v[1];
      prepare(v);
      buildP(v);
      // W = Σ w_i ∇²H_i (dense symmetric)
      H.hess(zm, w, hhS);
      W.fill(0);
      for (let e = 0; e < H.hessRows.length; e++) {
        const r = H.hessRows[e], c = H.hessCols[e];
        W[r * nIn + c] += hhS[e];
        if (r !== c) W[c * nIn + r] += hhS[e];
      }
      // G = Pᵀ W P
      for (let a = 0; a < nIn; a++)
        for (let j = 0; j < nv; j++) {
          let s = 0;
          for (let b = 0; b < nIn; b++) s += W[a * nIn + b] * P[b * nv + j];
          PW[a * nv + j] = s;
        }
      for (let i = 0; i < nv; i++)
        for (let j = 0; j <= i; j++) {
          let s = 0;
          for (let a = 0; a < nIn; a++) s += P[a * nv + i] * PW[a * nv + j];
          G[i * nv + j] = s;
        }
      // g_l = Σ_i w_i ∂H_i/∂x_{m,l}
      H.jac(zm, jhS);
      densify(H.jacRows, H.jacCols, jhS, nIn, JH);
      for (let l = 0; l < nx; l++) {
        let s = 0;
        for (let i = 0; i < nOut; i++) s += w[i] * JH[i * nIn + 1 + l];
        gw[l] = s;
      }
      const a = (h * T) / 8;
      // (hT/8) Σ g_l ∇²f_l at z_k, −(hT/8) Σ g_l ∇²f_l at z_{k+1}
      const addBlock = (z: Float64Array, scale: number, off: number) => {
        for (let l = 0; l < nx; l++) ws[l] = scale * gw[l];
        f.hess(z, ws, hfS);
        for (let e = 0; e < f.hessRows.length; e++) G[(off + f.hessRows[e]) * nv + off + f.hessCols[e]] += hfS[e];
      };
      addBlock(zk, a, oK);
      addBlock(z1, -a, o1);
      // cross terms with h (index 0) and T (index 1): rows oK.. and o1.. are larger, so (row, col) = (node, 0|1)
      for (let c = 0; c < nIn; c++) {
        let sk = 0, s1 = 0;
        for (let l = 0; l < nx; l++) {
          sk += gw[l] * Jfk[l * nIn + c];
          s1 += gw[l] * Jf1[l * nIn + c];
        }
        G[(oK + c) * nv + 0] += (T / 8) * sk;
        G[(oK + c) * nv + 1] += (h / 8) * sk;
        G[(o1 + c) * nv + 0] -= (T / 8) * s1;
        G[(o1 + c) * nv + 1] -= (h / 8) * s1;
      }
      let sHT = 0;
      for (let l = 0; l < nx; l++) sHT += gw[l] * (fk[l] - f1[l]);
      G[1 * nv + 0] += sHT / 8;
      let k = 0;
      for (let r = 0; r < nv; r++) for (let c = 0; c <= r; c++) out[k++] = G[r * nv + c];
    },
  };
}
