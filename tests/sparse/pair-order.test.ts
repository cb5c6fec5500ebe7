/**
 * The orderings of the paired KKT graph (sparse/pairs.ts): the natural (index) order beside AMD's,
 * the elimination tree of a permuted matrix computed without forming it (sparse/etree.ts), and the
 * choice of the ordering with the cheaper factor.
 *
 * References from outside the code under test:
 *  - column counts and the elimination tree by dense symbolic elimination of P A Pᵀ (eliminating k
 *    joins its later neighbours: Parter's rule; Rose 1972; Liu, "The role of elimination trees in
 *    sparse factorization", SIAM J. Matrix Anal. Appl. 11(1), 1990: parent(j) = min{i > j : l_ij ≠ 0});
 *  - the factor's work Σ_j |L_j|² from those dense counts, with a 2×2 pair's first column holding
 *    its second column's rows plus the second column itself (the pattern ldl.ts gives a pair);
 *  - solves against ml-matrix's dense LU.
 */
import fc from "fast-check";
import { Matrix, solve as denseSolve } from "ml-matrix";
import { describe, expect, it } from "vitest";
import {
  cheapestPairedOrder,
  eliminationTree,
  kktSigns,
  matchConstrained,
  pairedAmdOrder,
  symmetricAdjacency,
  symmetricPermute,
  SymmetricSolver,
  tripletsToUpperCsc,
} from "~/engine/sparse";
import { permutedEliminationTree } from "~/engine/sparse/etree";
import { preferPartners } from "~/engine/sparse/matching";
import { solveNlp } from "~/engine/nlp";
import { getScheme } from "~/engine/schemes";
import { copsGoddardFromCopsStart } from "../../bench/side-by-side-problem";
import { pairedNaturalOrder } from "~/engine/sparse/pairs";
import { denseEliminationTree, fromEntries, randomLowerPattern, maxAbs, randomPermutation, rng, trolleyKkt, type SymTriplets } from "./helpers";

/** Σ_j |L_j|² of the paired factor in the order perm, from the dense counts. */
function denseWork(M: SymTriplets, perm: Int32Array, kind: Uint8Array): number {
  const { Lnz } = denseEliminationTree(M.n, M.rows, M.cols, perm);
  let work = 0;
  for (let j = 0; j < M.n; j++) {
    const c = kind[j] === 1 ? Lnz[j + 1] + 1 : Lnz[j];
    work += c * c;
  }
  return work;
}

/**
 * The KKT matrix of the COPS Goddard rocket, trapezoidal, N intervals, at the first factorisation
 * of a solve from the COPS start (values of that factorisation), as the interior-point solver hands
 * it to the sparse solver: free final time, the initial states fixed and left out.
 */
function goddardKkt(N: number): SymTriplets & { nVar: number; nCon: number } {
  let captured: { A: { n: number; colPtr: Int32Array; rowIdx: Int32Array }; slotA: Int32Array; values: Float64Array; signs: Int8Array } | null = null;
  const proto = SymmetricSolver.prototype as unknown as { analyse: (this: Record<string, unknown>, values: Float64Array | null) => void };
  const original = proto.analyse;
  proto.analyse = function (values) {
    if (captured === null && values !== null) captured = { A: this.A, slotA: this.slotA, values: values.slice(), signs: this.signs } as NonNullable<typeof captured>;
    original.call(this, values);
  };
  try {
    const tr = getScheme("trapezoidal").transcribe(copsGoddardFromCopsStart(), { intervals: N });
    solveNlp(tr.nlp, { tol: 1e-8, maxIter: 1 });
  } finally {
    proto.analyse = original;
  }
  const { A, slotA, values, signs } = captured!;
  const Ax = new Float64Array(A.colPtr[A.n]);
  for (let t = 0; t < values.length; t++) Ax[slotA[t]] += values[t];
  const e: Array<[number, number, number]> = [];
  for (let j = 0; j < A.n; j++) for (let p = A.colPtr[j]; p < A.colPtr[j + 1]; p++) e.push([j, A.rowIdx[p], Ax[p]]);
  let nVar = 0;
  while (nVar < A.n && signs[nVar] > 0) nVar++;
  return { ...fromEntries(A.n, e), nVar, nCon: A.n - nVar };
}

/** The same matrix with its variables and rows renumbered at random (the time order lost). */
function scrambled(M: SymTriplets & { nVar: number; nCon: number }, seed: number): SymTriplets & { nVar: number; nCon: number } {
  const r = rng(seed);
  const pv = randomPermutation(M.nVar, r);
  const pc = randomPermutation(M.nCon, r);
  const map = (i: number) => (i < M.nVar ? pv[i] : M.nVar + pc[i - M.nVar]);
  const e: Array<[number, number, number]> = [];
  for (let t = 0; t < M.rows.length; t++) {
    const a = map(M.rows[t]);
    const b = map(M.cols[t]);
    e.push([Math.max(a, b), Math.min(a, b), M.values[t]]);
  }
  return { ...fromEntries(M.n, e), nVar: M.nVar, nCon: M.nCon };
}

/** The pairs the solver makes (preferPartners on the values, then the matching). */
function pairing(M: SymTriplets & { nVar: number; nCon: number }) {
  const { A, slot } = tripletsToUpperCsc(M.n, M.rows, M.cols);
  const Ax = new Float64Array(A.colPtr[M.n]);
  for (let t = 0; t < M.rows.length; t++) Ax[slot[t]] += M.values[t];
  const G = symmetricAdjacency(A);
  const constrained = new Uint8Array(M.n);
  for (let i = M.nVar; i < M.n; i++) constrained[i] = 1;
  return { A, G, partner: matchConstrained(preferPartners(A, Ax, G, constrained), constrained) };
}

describe("permutedEliminationTree", () => {
  it("equals eliminationTree of the formed P A Pᵀ and the dense symbolic elimination", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 40 }), fc.integer({ min: 0, max: 120 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), (n, m, seed) => {
        const r = rng(seed);
        const { rows, cols } = randomLowerPattern(n, m, r);
        const { A } = tripletsToUpperCsc(n, rows, cols);
        const perm = randomPermutation(n, r);
        const pinv = new Int32Array(n);
        for (let k = 0; k < n; k++) pinv[perm[k]] = k;
        const parent = new Int32Array(n);
        const Lnz = new Int32Array(n);
        const nnzL = permutedEliminationTree(symmetricAdjacency(A), perm, pinv, parent, Lnz, new Int32Array(n));
        const ref = denseEliminationTree(n, rows, cols, perm);
        expect(parent).toEqual(ref.parent);
        expect(Lnz).toEqual(ref.Lnz);
        expect(nnzL).toBe(ref.Lnz.reduce((a, b) => a + b, 0));
        // a limit below nnz(L) stops the walk; one at nnz(L) does not
        const ws = [new Int32Array(n), new Int32Array(n), new Int32Array(n)] as const;
        expect(permutedEliminationTree(symmetricAdjacency(A), perm, pinv, ...ws, nnzL)).toBe(nnzL);
        if (nnzL > 0) expect(permutedEliminationTree(symmetricAdjacency(A), perm, pinv, ...ws, nnzL - 1)).toBe(-1);
        const formed = { parent: new Int32Array(n), Lnz: new Int32Array(n) };
        eliminationTree(symmetricPermute(A, pinv).C, formed.parent, formed.Lnz, new Int32Array(n));
        expect(parent).toEqual(formed.parent);
        expect(Lnz).toEqual(formed.Lnz);
      }),
      { numRuns: 150, seed: 23 },
    );
  });
});

describe("pairedNaturalOrder", () => {
  it("keeps the index order with each pair's row right after its variable, the dense final-time column last", () => {
    const M = goddardKkt(40);
    const { G, partner } = pairing(M);
    const { perm, kind } = pairedNaturalOrder(G, partner);
    expect(Array.from(perm).sort((a, b) => a - b)).toEqual(Array.from({ length: M.n }, (_, i) => i));
    const tf = 0; // COPS Goddard's first variable: the final time, coupled to every defect row
    expect(perm[M.n - 1 - (partner.includes(tf) ? 1 : 0)]).toBe(tf);
    let last = -1;
    for (let k = 0; k < M.n; k++) {
      if (kind[k] === 2) {
        expect(kind[k - 1]).toBe(1);
        expect(partner[perm[k]]).toBe(perm[k - 1]);
        continue;
      }
      if (kind[k] === 1) expect(kind[k + 1]).toBe(2);
      if (perm[k] === tf) continue;
      expect(perm[k]).toBeGreaterThan(last); // variables, then unpaired rows, by increasing index
      last = perm[k];
    }
    let pairs = 0;
    for (let c = 0; c < M.n; c++) if (partner[c] >= 0) pairs++;
    expect(kind.filter((v) => v === 1).length).toBe(pairs);
  });
});

describe("cheapestPairedOrder", () => {
  const goddard = goddardKkt(20);
  const cases: Array<[string, SymTriplets & { nVar: number; nCon: number }, "amd" | "natural"]> = [
    // numbered along the time grid: AMD's greedy order costs more than the time order
    ["COPS Goddard, trapezoidal, N = 20", goddard, "natural"],
    // the same matrix renumbered at random: the index order means nothing and AMD wins
    ["the same, renumbered at random", scrambled(goddard, 5), "amd"],
    // the swing trolley, whose initial states are rows of their own: AMD's order is the cheaper
    ["swing trolley, trapezoidal, N = 30", trolleyKkt(30), "amd"],
  ];
  it.each(cases)("%s: keeps the cheaper of the two orders, whose work is Σ|L_j|² of the dense symbolic factor", (_, M, expected) => {
    const { G, partner } = pairing(M);
    const amd = pairedAmdOrder(G, partner);
    const natural = pairedNaturalOrder(G, partner);
    const workAmd = denseWork(M, amd.perm, amd.kind);
    const workNatural = denseWork(M, natural.perm, natural.kind);
    const best = cheapestPairedOrder(G, partner);
    expect(best.chosen).toBe(expected);
    expect(best.work).toBe(Math.min(workAmd, workNatural));
    expect(best.work).toBe(expected === "amd" ? workAmd : workNatural);
    expect(Array.from(best.perm)).toEqual(Array.from(expected === "amd" ? amd.perm : natural.perm));
    const ref = denseEliminationTree(M.n, M.rows, M.cols, best.perm);
    expect(best.parent).toEqual(ref.parent);
    expect(best.Lnz).toEqual(ref.Lnz);
  });

  it("the KKT solver reports the ordering it kept, and either order solves as the dense LU does", () => {
    for (const [, M, expected] of cases) {
      const s = new SymmetricSolver(M.n, M.rows, M.cols, { signs: kktSigns(M.nVar, M.nCon), pairs: true, pivotTolerance: 1e-20 });
      const inertia = s.factor(M.values);
      expect(s.symbolicStats.pairedOrdering).toBe(expected);
      expect(inertia.ok).toBe(true);
      const r = rng(99);
      const b = Float64Array.from({ length: M.n }, () => 2 * r() - 1);
      const x = new Float64Array(M.n);
      s.solve(b, x, 3);
      const xRef = denseSolve(M.dense, Matrix.columnVector(Array.from(b))).to1DArray();
      let err = 0;
      for (let i = 0; i < M.n; i++) err = Math.max(err, Math.abs(x[i] - xRef[i]));
      // a backward-stable solve of a well-scaled KKT matrix: 1e-8 relative (common practice, no source)
      expect(err / Math.max(1, maxAbs(xRef))).toBeLessThan(1e-8);
    }
  });
});
