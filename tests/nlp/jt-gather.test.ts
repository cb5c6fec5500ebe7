/**
 * Jᵀλ by columns (jacTransposeGather over columnOrder, app/engine/nlp/vectors.ts) against its
 * definition, (Jᵀλ)_j = Σ_i J_ij λ_i with duplicate triplets summed, written out here as the
 * triplet scatter in triplet order; the gather must give the same numbers to the bit (each
 * column's terms keep their triplet order), and the dense product to rounding.
 */
import { describe, expect, it } from "vitest";
import { columnOrder, jacTransposeGather, jacTransposeTimes } from "~/engine/nlp/vectors";

function rng(seed: number) {
  let s = seed >>> 0;
  return () => ((s = (1664525 * s + 1013904223) >>> 0) / 2 ** 32);
}

describe("Jᵀλ as a gather by columns", () => {
  it.each([1, 2, 3])("seed %i: unsorted triplets with duplicates, empty columns, signed zeros and a NaN", (seed) => {
    const r = rng(seed);
    const N = 300, m = 170, nnz = 1400;
    const jR = Int32Array.from({ length: nnz }, () => Math.floor(r() * m));
    const jC = Int32Array.from({ length: nnz }, () => Math.floor(r() * (N - 7))); // the last 7 columns empty
    const jv = Float64Array.from({ length: nnz }, (_, k) => (k % 97 === 5 ? -0 : (r() - 0.5) * 10 ** (6 * r() - 3)));
    const lam = Float64Array.from({ length: m }, (_, i) => (i % 31 === 2 ? 0 : (r() - 0.5) * 10 ** (4 * r() - 2)));
    const order = columnOrder(N, nnz, jR, jC);
    const ours = new Float64Array(N).fill(123); // overwritten everywhere, empty columns included
    jacTransposeGather(N, order, jv, lam, ours);
    const ref = new Float64Array(N);
    for (let k = 0; k < nnz; k++) ref[jC[k]] += jv[k] * lam[jR[k]];
    for (let j = 0; j < N; j++) if (!Object.is(ours[j], ref[j])) expect([j, ours[j]]).toEqual([j, ref[j]]);
    const viaScatter = new Float64Array(N);
    jacTransposeTimes(nnz, jR, jC, jv, lam, viaScatter);
    expect(Array.from(ours)).toEqual(Array.from(viaScatter));
    // the dense product (definition) to rounding
    for (let j = 0; j < N; j++) {
      let s = 0, scale = 0;
      for (let k = 0; k < nnz; k++) if (jC[k] === j) { s += jv[k] * lam[jR[k]]; scale += Math.abs(jv[k] * lam[jR[k]]); }
      expect(Math.abs(ours[j] - s)).toBeLessThanOrEqual(4 * Number.EPSILON * scale);
    }
    expect(ours[N - 1]).toBe(0);
    // a NaN in λ reaches exactly the columns with an entry in its row
    const lamNaN = Float64Array.from(lam);
    lamNaN[7] = NaN;
    jacTransposeGather(N, order, jv, lamNaN, ours);
    for (let j = 0; j < N; j++) {
      let hit = false;
      for (let k = 0; k < nnz; k++) if (jC[k] === j && jR[k] === 7) hit = true;
      expect(Number.isNaN(ours[j])).toBe(hit);
    }
  });
});
