/**
 * kktError, solverGap and barrierValue run their long loops in blocks of LOOP_BLOCK entries, the
 * running values passed from block to block (app/engine/nlp/vectors.ts), so that they give exactly
 * what one loop over all entries gives. Checked here on sizes that cut several blocks, the last one
 * partial, against the definitions written out as single loops in this file:
 *   E_μ and its scalings s_d, s_c: Wächter and Biegler, "On the implementation of an interior-point
 *   filter line-search algorithm for large-scale nonlinear programming", Math. Program. 106, 2006,
 *   eq. (5), s_max = 100;
 *   the duality gap Σ s_L z_L + Σ s_U z_U − λᵀc (Nocedal and Wright, Numerical Optimization, 2nd ed.,
 *   2006, §14.1, (14.7)) and the relaxation term Σ z δ (gap.ts);
 *   φ_μ of W&B 2006 eq. (3) with the damping term of §3.7 (κ_d = 1e-5).
 *   ‖x‖₁ and xᵀy (norm1, dot).
 * E₀ and E_μ of one pass (kktError with muAlso) against two calls.
 * The sums are compared with toBe: the same additions in the same order give the same bits.
 */
import { describe, expect, it } from "vitest";
import { kktError } from "~/engine/nlp/convergence";
import { solverGap } from "~/engine/nlp/gap";
import { barrierValue } from "~/engine/nlp/barrier-function";
import { LOOP_BLOCK, dot, norm1 } from "~/engine/nlp/vectors";

function rng(seed: number) {
  let s = seed >>> 0;
  return () => ((s = (1664525 * s + 1013904223) >>> 0) / 2 ** 32);
}

const N = 2 * LOOP_BLOCK + 517; // three blocks, the last one partial
const m = LOOP_BLOCK + 3; // two blocks
const r = rng(7);
const hasL = Uint8Array.from({ length: N }, (_, i) => (i % 4 === 3 ? 0 : 1));
const hasU = Uint8Array.from({ length: N }, (_, i) => (i % 3 === 0 ? 1 : 0));
const sL = Float64Array.from({ length: N }, () => 10 ** (-8 + 9 * r()));
const sU = Float64Array.from({ length: N }, () => 10 ** (-8 + 9 * r()));
const zL = Float64Array.from({ length: N }, () => 10 ** (-1 + 5 * r()));
const zU = Float64Array.from({ length: N }, () => 10 ** (-1 + 5 * r()));
const gradL = Float64Array.from({ length: N }, () => (r() - 0.5) * 10 ** (4 * r()));
const c = Float64Array.from({ length: m }, () => (r() - 0.5) * 1e-3);
const lambda = Float64Array.from({ length: m }, () => (r() - 0.5) * 10 ** (3 * r()));

describe("block kernels give what one loop gives", () => {
  it("E_μ of W&B eq. (5), with s_d and s_c, on 2,565 variables and 1,027 rows", () => {
    const mu = 3.7e-4;
    let dual = 0, compl = 0, zSum = 0, nz = 0, primal = 0, lamSum = 0;
    for (let i = 0; i < N; i++) {
      dual = Math.max(dual, Math.abs(gradL[i]!));
      if (hasL[i]) { nz++; zSum += Math.abs(zL[i]!); compl = Math.max(compl, Math.abs(sL[i]! * zL[i]! - mu)); }
      if (hasU[i]) { nz++; zSum += Math.abs(zU[i]!); compl = Math.max(compl, Math.abs(sU[i]! * zU[i]! - mu)); }
    }
    for (let j = 0; j < m; j++) { primal = Math.max(primal, Math.abs(c[j]!)); lamSum += Math.abs(lambda[j]!); }
    const sd = Math.max(100, (lamSum + zSum) / (m + nz)) / 100;
    const sc = Math.max(100, zSum / nz) / 100;
    const e = kktError(gradL, c, sL, sU, hasL, hasU, lambda, zL, zU, mu);
    expect(e.dual).toBe(dual);
    expect(e.compl).toBe(compl);
    expect(e.primal).toBe(primal);
    expect(e.sd).toBe(sd);
    expect(e.sc).toBe(sc);
    expect(e.E).toBe(Math.max(dual / sd, primal, compl / sc));
    expect(sd).toBeGreaterThan(1); // the sums matter here: s_d and s_c are not clipped at s_max
    expect(sc).toBeGreaterThan(1);
  });

  it("E₀ with E_μ from the same pass (muAlso) gives what two separate calls give", () => {
    const mu = 3.7e-4;
    const both = kktError(gradL, c, sL, sU, hasL, hasU, lambda, zL, zU, 0, mu);
    const e0 = kktError(gradL, c, sL, sU, hasL, hasU, lambda, zL, zU, 0);
    const emu = kktError(gradL, c, sL, sU, hasL, hasU, lambda, zL, zU, mu);
    expect({ ...both, EAlso: 0 }).toEqual({ ...e0, EAlso: 0 });
    expect(both.EAlso).toBe(emu.E);
    expect(both.EAlso).not.toBe(both.E); // the two μ give different errors here
    expect(e0.EAlso).toBeNaN();
  });

  it("the duality gap and the relaxation term of gap.ts", () => {
    const relaxL = Float64Array.from({ length: N }, () => 1e-8 * r());
    const relaxU = Float64Array.from({ length: N }, () => 1e-8 * r());
    let comp = 0, rel = 0, lc = 0, nz = 0;
    for (let i = 0; i < N; i++) {
      if (hasL[i]) { comp += sL[i]! * zL[i]!; nz++; rel += zL[i]! * relaxL[i]!; }
      if (hasU[i]) { comp += sU[i]! * zU[i]!; nz++; rel += zU[i]! * relaxU[i]!; }
    }
    for (let j = 0; j < m; j++) lc += lambda[j]! * c[j]!;
    const g = solverGap(N, sL, sU, hasL, hasU, zL, zU, m, lambda, c, relaxL, relaxU);
    expect(g.complementarity).toBe(comp);
    expect(g.relaxation).toBe(rel);
    expect(g.constraintTerm).toBe(lc);
    expect(g.nz).toBe(nz);
    expect(g.total).toBe(Math.abs(comp) + Math.abs(lc) + Math.abs(rel));
  });

  it("φ_μ of W&B eq. (3) and §3.7 over blocks, and +∞ when a slack in the last block is not positive", () => {
    const w = Float64Array.from({ length: N }, () => 2 * r() - 1);
    const wL = Float64Array.from(w, (x, i) => x - sL[i]!);
    const wU = Float64Array.from(w, (x, i) => x + sU[i]!);
    const mu = 1e-2, f = 0.25;
    let logs = 0, lin = 0;
    for (let i = 0; i < N; i++) {
      if (hasL[i]) { logs += Math.log(w[i]! - wL[i]!); if (!hasU[i]) lin += w[i]! - wL[i]!; }
      if (hasU[i]) { logs += Math.log(wU[i]! - w[i]!); if (!hasL[i]) lin += wU[i]! - w[i]!; }
    }
    const phi = barrierValue(f, w, wL, wU, hasL, hasU, mu);
    // one logarithm per slack against products folded across blocks: equal to rounding
    expect(Math.abs(phi - (f - mu * logs + 1e-5 * mu * lin))).toBeLessThan(1e-13 * mu * N * 20);
    const k = N - 3; // in the last, partial block
    const wBad = Float64Array.from(w);
    wBad[k] = wL[k]! - 1e-9;
    expect(hasL[k]).toBe(1);
    expect(barrierValue(f, wBad, wL, wU, hasL, hasU, mu)).toBe(Infinity);
  });

  it("‖x‖₁ and xᵀy over blocks, and over the first n entries only", () => {
    let n1 = 0, xy = 0;
    for (let i = 0; i < N; i++) { n1 += Math.abs(gradL[i]!); xy += gradL[i]! * sL[i]!; }
    expect(norm1(N, gradL)).toBe(n1);
    expect(dot(N, gradL, sL)).toBe(xy);
    let part = 0;
    for (let i = 0; i < LOOP_BLOCK + 1; i++) part += Math.abs(gradL[i]!);
    expect(norm1(LOOP_BLOCK + 1, gradL)).toBe(part);
    expect(dot(0, gradL, sL)).toBe(0);
  });
});
