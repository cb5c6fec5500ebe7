/**
 * SymmetricSolver: the sparse symmetric indefinite solver of the interior-point method
 * (contract in ./types.ts).
 *
 * Construction (symbolic, once per pattern):
 *   triplets → upper CSC A with triplet→slot map                  (triplet.ts)
 *   G = A + Aᵀ without diagonal                                   (csc.ts)
 *   [signs given: match each −1 node to a distinct +1 neighbour]   (matching.ts)
 *   AMD permutation P (constrained by the matching if any)        (amd.ts)
 *   C = P A Pᵀ upper-stored, slot map composed                    (csc.ts)
 *   elimination tree and column counts of L; L allocated           (etree.ts, ldl.ts)
 *   (all of it reused when an earlier solver had the same inputs)    (analysis-cache.ts)
 * factor(values): scatter the triplet values into C (O(nnz)), numeric LDLᵀ, inertia (ldl.ts).
 * solve(b, x): x = Pᵀ (L D Lᵀ)⁻¹ P b, then iterative refinement against C (the matrix given,
 *   without any dynamic regularisation)
 *     r = b − A x,  x ← x + (L D Lᵀ)⁻¹ r,  a step kept only if ‖r‖∞ decreases,
 *   stopping once ‖r‖∞ ≤ 4ε (‖A‖∞‖x‖∞ + ‖b‖∞) (Wilkinson, "Rounding Errors in Algebraic
 *   Processes", 1963; Skeel, "Iterative refinement implies numerical stability for Gaussian
 *   elimination", Math. Comp. 35, 1980; Arioli, Demmel and Duff, "Solving sparse linear systems
 *   with sparse backward error", SIAM J. Matrix Anal. Appl. 10(2), 1989).
 * factor and solve allocate nothing except the small Inertia object returned by factor.
 */
import { amdOrder, type AmdInfo } from "./amd";
import { symmetricAdjacency, symmetricInfNorm, symmetricPermute, symmetricResidual, symmetricResidualBounds, type CscPattern } from "./csc";
import { eliminationTree } from "./etree";
import { matchConstrained, preferPartners } from "./matching";
import { cheapestPairedOrder } from "./pairs";
import {
  allocateLdlFactor,
  allocateLdlWorkspace,
  ldlNumeric,
  ldlSolveInPlace,
  ldlSymbolic,
  type LdlFactor,
  type LdlSymbolic,
  type LdlWorkspace,
} from "./ldl";
import { tripletsToUpperCsc } from "./triplet";
import { analysisHash, findAnalysis, storeAnalysis, type AnalysisKey } from "./analysis-cache";
import type { Inertia, SymmetricSolverLike } from "./types";

export type { Inertia, SymmetricSolverLike } from "./types";
export { amdOrder } from "./amd";
export { tripletsToUpperCsc, validateTriplets } from "./triplet";
export { symmetricAdjacency, symmetricInfNorm, symmetricMatVec, symmetricPermute, symmetricResidual, symmetricResidualBounds, type CscPattern } from "./csc";
export { eliminationTree } from "./etree";
export { matchConstrained } from "./matching";
export { cheapestPairedOrder, pairedAmdOrder } from "./pairs";
export { analysisCacheStats, clearAnalysisCache } from "./analysis-cache";

export interface SymmetricSolverOptions {
  /** A pivot with |d_k| ≤ pivotTolerance counts as zero (ok = false). Default 1e-13 (absolute). */
  pivotTolerance?: number;
  /** Fill-reducing ordering. Default "amd". */
  ordering?: "amd" | "natural";
  /**
   * Expected pivot signs (Int8Array(n) of +1/−1), e.g. kktSigns(N, m) for [[W, Jᵀ], [J, −δc I]].
   * When given: (1) the AMD ordering is constrained so that each −1 node is eliminated after a
   * distinct +1 neighbour of its own (matching.ts, amd.ts `partner`); (2) a pivot with
   * |d| ≤ pivotTolerance is replaced by sign·regularization instead of being a zero pivot
   * (ldl.ts); refinement in solve() is done
   * against the unregularised matrix. Then `zero` counts only NaN pivots, and `regularized` the
   * replaced ones.
   */
  signs?: Int8Array;
  /** δ of the signed dynamic regularisation. Default 1e-8 (common practice, no source). */
  regularization?: number;
  /**
   * With `signs`: factor each matched (variable, constraint row) pair as one 2×2 pivot block
   * (pairs.ts, ldl.ts), so that a zero row of W with δw = δc = 0 needs no regularisation. The
   * pairing prefers variables with a small diagonal against the coupling, judged on the values of
   * the FIRST factor() call, where the ordering and symbolic analysis then run (matching.ts
   * preferPartners). The paired graph is ordered by AMD and by index, and the order with the
   * cheaper factor is kept (pairs.ts cheapestPairedOrder; symbolicStats.pairedOrdering says which).
   * Default false (1×1 pivots with the matched precedence ordering). Needs ordering "amd".
   */
  pairs?: boolean;
  /**
   * The caller never changes rows and cols after construction (the interior-point KKT system makes
   * them for the solver and lets go): the analysis cache may then keep them as its key instead of a
   * private copy (two nT-integer arrays fewer at the moment of the analysis, 0.9 MB at trapezoidal
   * N = 3,200). Default false.
   */
  patternUnchanging?: boolean;
}

/** Expected signs of the pivots of a KKT matrix with N primal rows first and m constraint rows after. */
export function kktSigns(N: number, m: number): Int8Array {
  const s = new Int8Array(N + m);
  s.fill(1, 0, N);
  s.fill(-1, N, N + m);
  return s;
}

/** Timings (milliseconds) and sizes of the symbolic analysis, for statistics and benchmarks. */
export interface SymbolicStats {
  orderingMs: number;
  totalMs: number;
  nnzA: number;
  denseRows: number;
  /** The analysis was that of an earlier solver of the same inputs (analysis-cache.ts). */
  reused?: boolean;
  /** With pairs: the ordering kept, AMD's or the natural one, whichever factor is cheaper (pairs.ts). */
  pairedOrdering?: "amd" | "natural";
}

/** Default pivot tolerance: common practice, no source (about 1e3·ε for a matrix scaled to O(1) entries). */
const DEFAULT_PIVOT_TOLERANCE = 1e-13;
/** Default δ of the signed dynamic regularisation (common practice, no source). */
const DEFAULT_REGULARIZATION = 1e-8;
/** Refinement stops once the backward error is below this multiple of ε = 2⁻⁵² (common practice, no source). */
const REFINEMENT_STOP = 4 * Number.EPSILON;

export class SymmetricSolver implements SymmetricSolverLike {
  readonly n: number;
  /** ‖b − A x‖∞ after the last solve (NaN before any solve). */
  lastResidual = NaN;
  /**
   * ‖b − A x‖∞ / (‖A‖∞ ‖x‖∞ + ‖b‖∞) after the last solve: the normwise backward error. NaN before
   * any solve. A solve that needed no refinement leaves ‖A‖∞ to be computed here, from the matrix
   * it solved with: read after the matrix has been factored again, such a value is NaN.
   */
  get lastRelativeResidual(): number {
    const p = this.pendingScale;
    if (p.epoch >= 0) {
      if (p.epoch !== this.epoch) return NaN;
      if (this.normA < 0) this.normA = symmetricInfNorm(this.C, this.Cx, this.r);
      const scale = this.normA * p.normX + p.normB;
      this.relativeResidual = scale > 0 ? this.lastResidual / scale : this.lastResidual;
      p.epoch = -1;
    }
    return this.relativeResidual;
  }
  /** Refinement steps accepted in the last solve. */
  lastRefinementSteps = 0;

  private readonly nT: number;
  private readonly pivotTolerance: number;
  private readonly regularization: number;
  private readonly signs: Int8Array | null;
  private readonly options: SymmetricSolverOptions;
  /** The folded pattern and triplet → slot map; needed only by the analysis, let go of after it. */
  private A: CscPattern | null;
  private slotA: Int32Array | null;
  private readonly rows: Int32Array;
  private readonly cols: Int32Array;
  private readonly t0: number;
  private analysed = false;
  // set by analyse()
  private permutation: Int32Array = new Int32Array(0);
  private inverse: Int32Array = new Int32Array(0);
  private stats: SymbolicStats = { orderingMs: 0, totalMs: 0, nnzA: 0, denseRows: 0 };
  private C!: CscPattern;
  private Cx!: Float64Array;
  private slot!: Int32Array;
  private sym!: LdlSymbolic;
  private fac!: LdlFactor;
  private ws!: LdlWorkspace;
  private signsPermuted: Int8Array | null = null;
  /** ‖A‖∞ of the last factored matrix (−1 until a solve needs it). */
  private normA = -1;
  /** Factorisations so far: tells lastRelativeResidual whether its matrix is still the factored one. */
  private epoch = 0;
  private relativeResidual = NaN;
  /** The last solve's ‖x‖∞ and ‖b‖∞ while its relative residual waits for ‖A‖∞ (epoch −1: none waits). */
  private readonly pendingScale = { epoch: -1, normX: 0, normB: 0 };
  private readonly normOut = new Float64Array(2);
  private readonly inertiaWork: Inertia = { ok: false, positive: 0, negative: 0, zero: 0 };
  private factored = false;
  private assembled: { slots: Int32Array; values: Float64Array } | null = null;
  // solve() workspaces, length n
  private readonly bp: Float64Array;
  private readonly xp: Float64Array;
  private readonly xt: Float64Array;
  private readonly r: Float64Array;

  /**
   * Symbolic analysis of the pattern (rows[t], cols[t]). With `pairs` the ordering also uses the
   * values (the pairing prefers zero diagonals and large couplings), so it runs in the first
   * factor() call instead.
   */
  constructor(n: number, rows: Int32Array, cols: Int32Array, options: SymmetricSolverOptions = {}) {
    this.t0 = performance.now();
    const where = "sparse/SymmetricSolver";
    const { A, slot: slotA } = tripletsToUpperCsc(n, rows, cols, where);
    this.A = A;
    this.slotA = slotA;
    this.rows = rows;
    this.cols = cols;
    this.n = n;
    this.nT = rows.length;
    this.options = options;
    this.pivotTolerance = options.pivotTolerance ?? DEFAULT_PIVOT_TOLERANCE;
    if (!(this.pivotTolerance >= 0)) throw new Error(`${where}: options.pivotTolerance must be ≥ 0, got ${options.pivotTolerance}`);

    const signs = options.signs ?? null;
    if (signs !== null) {
      if (signs.length !== n) throw new Error(`${where}: options.signs has length ${signs.length}, expected ${n}`);
      for (let i = 0; i < n; i++) {
        if (signs[i] !== 1 && signs[i] !== -1) throw new Error(`${where}: options.signs[${i}] = ${signs[i]}, expected +1 or −1`);
      }
    }
    this.signs = signs;
    this.regularization = options.regularization ?? DEFAULT_REGULARIZATION;
    if (signs !== null && !(this.regularization > this.pivotTolerance)) {
      throw new Error(`${where}: options.regularization (${this.regularization}) must exceed the pivot tolerance (${this.pivotTolerance})`);
    }
    const ordering = options.ordering ?? "amd";
    if (ordering !== "amd" && ordering !== "natural") throw new Error(`${where}: options.ordering must be "amd" or "natural", got ${String(ordering)}`);
    if (options.pairs && (signs === null || ordering !== "amd")) {
      throw new Error(`${where}: options.pairs needs options.signs and the "amd" ordering`);
    }
    this.bp = new Float64Array(n);
    this.xp = new Float64Array(n);
    this.xt = new Float64Array(n);
    this.r = new Float64Array(n);
    if (!options.pairs) this.analyse(null);
  }

  /** Nonzeros of the strictly lower factor L (0 until the analysis has run). */
  get nnzL(): number {
    return this.analysed ? this.sym.Lp[this.n] : 0;
  }
  /** Permutation: perm[k] = original index of pivot k (empty until the analysis has run). */
  get perm(): Int32Array {
    return this.permutation;
  }
  /** Inverse permutation: pinv[original] = pivot position. */
  get pinv(): Int32Array {
    return this.inverse;
  }
  get symbolicStats(): SymbolicStats {
    return this.stats;
  }

  /**
   * Ordering, permuted pattern, elimination tree and pattern of L; `values` only for pairs.
   * An analysis of exactly the same inputs (pattern, signs, options, matching) made by an earlier
   * solver is reused (analysis-cache.ts).
   */
  private analyse(values: Float64Array | null): void {
    const { n, signs, options } = this;
    const A = this.A!, slotA = this.slotA!;
    const tOrder = performance.now();
    const amd = (options.ordering ?? "amd") === "amd";
    const mode = !amd ? "natural" : signs === null ? "amd" : options.pairs && values !== null ? "amd-pairs" : "amd-signed";
    let G: CscPattern | null = null;
    let constrained: Uint8Array | null = null;
    let partner: Int32Array | null = null;
    if (amd) G = symmetricAdjacency(A);
    if (amd && signs !== null) {
      constrained = new Uint8Array(n);
      for (let i = 0; i < n; i++) constrained[i] = signs[i] < 0 ? 1 : 0;
    }
    if (mode === "amd-pairs") {
      // The pairing depends on the values (partner preference), so it is part of the key.
      const Ax = new Float64Array(A.colPtr[n]);
      for (let t = 0; t < this.nT; t++) Ax[slotA[t]] += values![t];
      partner = matchConstrained(preferPartners(A, Ax, G!, constrained!), constrained!);
    }
    const key: AnalysisKey = { n, mode, rows: this.rows, cols: this.cols, signs, partner, owned: options.patternUnchanging === true };
    const hash = analysisHash(key);
    let stored = findAnalysis(key, hash);
    const reused = stored !== null;
    if (stored === null) {
      const info: AmdInfo = { denseRows: 0, compressions: 0, releases: 0 };
      let perm: Int32Array;
      let kind: Uint8Array | null = null;
      let tree: { parent: Int32Array; Lnz: Int32Array } | null = null;
      let pairedOrdering: "amd" | "natural" | undefined;
      if (mode === "natural") {
        perm = new Int32Array(n);
        for (let k = 0; k < n; k++) perm[k] = k;
      } else if (mode === "amd") {
        perm = amdOrder(G!, {}, info);
      } else if (mode === "amd-pairs") {
        const paired = cheapestPairedOrder(G!, partner!);
        perm = paired.perm;
        kind = paired.kind;
        tree = paired;
        info.denseRows = paired.denseRows;
        pairedOrdering = paired.chosen;
      } else {
        perm = amdOrder(G!, { constrained: constrained!, partner: matchConstrained(G!, constrained!) }, info);
      }
      const orderingMs = performance.now() - tOrder;
      const pinv = new Int32Array(n);
      for (let k = 0; k < n; k++) pinv[perm[k]] = k;
      let signsPermuted: Int8Array | null = null;
      if (signs !== null) {
        signsPermuted = new Int8Array(n);
        for (let k = 0; k < n; k++) signsPermuted[k] = signs[perm[k]];
      }
      const { C, slotMap } = symmetricPermute(A, pinv);
      const slot = new Int32Array(this.nT);
      for (let t = 0; t < this.nT; t++) slot[t] = slotMap[slotA[t]];
      if (tree === null) {
        tree = { parent: new Int32Array(n), Lnz: new Int32Array(n) };
        eliminationTree(C, tree.parent, tree.Lnz, new Int32Array(n));
      }
      const sym = ldlSymbolic(C, tree.parent, tree.Lnz, kind);
      stored = { perm, pinv, kind, signsPermuted, C, slot, sym, orderingMs, denseRows: info.denseRows, pairedOrdering };
      storeAnalysis(key, stored, hash);
    }
    this.permutation = stored.perm;
    this.inverse = stored.pinv;
    this.signsPermuted = stored.signsPermuted;
    this.C = stored.C;
    this.slot = stored.slot;
    this.sym = stored.sym;
    this.Cx = new Float64Array(stored.C.colPtr[n]);
    this.fac = allocateLdlFactor(this.sym);
    this.ws = allocateLdlWorkspace(n);
    this.A = null;
    this.slotA = null;
    this.stats = { orderingMs: reused ? 0 : stored.orderingMs, totalMs: performance.now() - this.t0, nnzA: stored.C.colPtr[n], denseRows: stored.denseRows, reused };
    if (stored.pairedOrdering !== undefined) this.stats.pairedOrdering = stored.pairedOrdering;
    this.analysed = true;
  }

  /**
   * Numeric LDLᵀ of the matrix whose triplet values (in the constructor's triplet order) are
   * `values` (Float64Array(nT); duplicates summed). Returns the inertia; ok = false when a pivot
   * was zero (|d| ≤ pivotTolerance) or not a number — the factor is then not a solve of A.
   */
  factor(values: Float64Array): Inertia {
    if (values.length !== this.nT) {
      throw new Error(`sparse/SymmetricSolver.factor: values has ${values.length} entries, the pattern has ${this.nT} triplets`);
    }
    if (!this.analysed) this.analyse(values);
    const Cx = this.Cx;
    const slot = this.slot;
    Cx.fill(0);
    for (let t = 0; t < this.nT; t++) Cx[slot[t]] += values[t];
    return this.factorAssembled();
  }

  /**
   * The triplet → storage slot map and the value storage of the factor's permuted matrix, for a
   * caller that sums its values there itself (no triplet array, no copy); null until the analysis
   * has run (with `pairs`: until the first factor()). The arrays are this solver's own: write only
   * `values`, then call factorAssembled().
   */
  assembly(): { slots: Int32Array; values: Float64Array } | null {
    if (!this.analysed) return null;
    if (this.assembled === null) this.assembled = { slots: this.slot, values: this.Cx };
    return this.assembled;
  }

  /** Numeric LDLᵀ of the values summed into assembly().values; as factor(). */
  factorAssembled(): Inertia {
    if (!this.analysed) throw new Error("sparse/SymmetricSolver.factorAssembled: no analysis yet; call factor(values) first");
    ldlNumeric(this.C, this.Cx, this.sym, this.fac, this.ws, this.pivotTolerance, this.inertiaWork, this.signsPermuted, this.regularization);
    this.normA = -1; // computed by the first solve that needs it
    this.epoch++;
    this.factored = true;
    const { ok, positive, negative, zero, regularized, regularizedNegative } = this.inertiaWork;
    return this.signsPermuted === null ? { ok, positive, negative, zero } : { ok, positive, negative, zero, regularized, regularizedNegative };
  }

  /**
   * x = A⁻¹ b with up to `refinementSteps` (default 1) steps of iterative refinement against the
   * factored A; a step is kept only if it lowers ‖b − A x‖∞. b and x: Float64Array(n); they may
   * be the same array.
   */
  solve(b: Float64Array, x: Float64Array, refinementSteps = 1): void {
    const n = this.n;
    if (!this.factored) throw new Error("sparse/SymmetricSolver.solve: call factor(values) before solve");
    if (b.length < n || x.length < n) throw new Error(`sparse/SymmetricSolver.solve: b and x need length ${n}, got ${b.length} and ${x.length}`);
    const { perm, bp, r, C, Cx, sym, fac } = this;
    let xp = this.xp;
    let xt = this.xt;
    let normB = 0;
    for (let k = 0; k < n; k++) {
      const v = b[perm[k]];
      bp[k] = v;
      xp[k] = v;
      const a = Math.abs(v);
      if (a > normB) normB = a;
      else if (a !== a) normB = NaN; // a NaN right-hand side: no refinement, NaN residuals (as Math.max)
    }
    ldlSolveInPlace(sym, fac, xp);
    let res: number;
    let scale = NaN;
    /** The stopping test held with ‖A‖∞'s lower bound: no refinement, ‖A‖∞ left to lastRelativeResidual. */
    let pending = false;
    if (this.normA < 0) {
      // ‖A‖∞ not yet known for this factor: the residual's pass gives a lower bound (the largest
      // |a_ii|) and ‖x‖∞; where the stopping test already holds with the bound it holds with ‖A‖∞.
      res = symmetricResidualBounds(C, Cx, xp, bp, r, this.normOut);
      const normX = this.normOut[1];
      pending = res <= REFINEMENT_STOP * (this.normOut[0] * normX + normB);
      if (pending) {
        const p = this.pendingScale;
        p.normX = normX;
        p.normB = normB;
      } else {
        this.normA = symmetricInfNorm(C, Cx, xt);
        scale = this.normA * normX + normB;
      }
    } else {
      res = symmetricResidual(C, Cx, xp, bp, r);
      scale = this.backwardScale(xp, normB);
    }
    let accepted = 0;
    for (let step = 0; !pending && step < refinementSteps && res > REFINEMENT_STOP * scale; step++) {
      ldlSolveInPlace(sym, fac, r); // r ← correction
      for (let k = 0; k < n; k++) xt[k] = xp[k] + r[k];
      const resTrial = symmetricResidual(C, Cx, xt, bp, r);
      if (!(resTrial < res)) break;
      res = resTrial;
      const swap = xp;
      xp = xt;
      xt = swap;
      accepted++;
      scale = this.backwardScale(xp, normB);
    }
    for (let k = 0; k < n; k++) x[perm[k]] = xp[k];
    this.lastResidual = res;
    this.pendingScale.epoch = pending ? this.epoch : -1;
    if (!pending) this.relativeResidual = scale > 0 ? res / scale : res;
    this.lastRefinementSteps = accepted;
  }

  /** ‖A‖∞‖x‖∞ + ‖b‖∞, the scale of the normwise backward error. */
  private backwardScale(x: Float64Array, normB: number): number {
    let m = 0;
    for (let k = 0; k < this.n; k++) {
      const a = Math.abs(x[k]);
      if (a > m) m = a;
    }
    return this.normA * m + normB;
  }
}
