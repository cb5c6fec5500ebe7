/**
 * Reuse of the symbolic analysis between solvers of the same pattern.
 *
 * The ordering, the permuted pattern, the triplet → factor slot map, the elimination tree and the
 * pattern of L depend only on the triplet pattern, the pivot signs, the ordering options and (with
 * 2×2 pairs) the matching of constraint rows to variables. An interior-point solve builds a new
 * SymmetricSolver for every restoration phase, and a benchmark repeats the same solve many times,
 * each with the same pattern; this module keeps the last few analyses and hands back the stored
 * one when every input is EQUAL (compared element by element after a hash match, so a hash
 * collision cannot return another pattern's analysis). The stored arrays are read-only to their
 * users (the numeric factor keeps its values in arrays of its own).
 *
 * Bounded: at most CAPACITY analyses (least recently used dropped first), and none larger than
 * MAX_ENTRIES triplets; memory per entry is O(nnz(A) + nnz(L)) integers.
 */
import type { CscPattern } from "./csc";
import type { LdlSymbolic } from "./ldl";

export interface StoredAnalysis {
  perm: Int32Array;
  pinv: Int32Array;
  kind: Uint8Array | null;
  signsPermuted: Int8Array | null;
  C: CscPattern;
  /** triplet t → position in C's values. */
  slot: Int32Array;
  sym: LdlSymbolic;
  orderingMs: number;
  denseRows: number;
  /** With pairs: the ordering kept (pairs.ts cheapestPairedOrder). */
  pairedOrdering?: "amd" | "natural";
}

interface Entry {
  key: AnalysisKey;
  hash: number;
  value: StoredAnalysis;
}

/** Everything the analysis depends on. */
export interface AnalysisKey {
  n: number;
  /** "amd", "natural", "amd-signed" or "amd-pairs": the ordering and how the signs enter it. */
  mode: string;
  rows: Int32Array;
  cols: Int32Array;
  signs: Int8Array | null;
  /** With pairs: partner[c] = matched variable of constraint row c, −1 otherwise. */
  partner: Int32Array | null;
  /** rows and cols never change after this call (the caller says so): stored without a copy. */
  owned?: boolean;
}

/** Common practice, no source: a handful covers the regular and restoration systems of a few problems. */
const CAPACITY = 6;
/** Larger patterns are not kept (memory). */
const MAX_ENTRIES = 4_000_000;

const entries: Entry[] = [];
let hits = 0;
let misses = 0;

function mix(h: number, a: ArrayLike<number> | null): number {
  if (a === null) return Math.imul(h ^ 0x5bd1e995, 16777619) >>> 0;
  h = Math.imul(h ^ a.length, 16777619) >>> 0;
  for (let i = 0; i < a.length; i++) h = Math.imul(h ^ (a[i] & 0xffffffff), 16777619) >>> 0;
  return h;
}

function hashKey(k: AnalysisKey): number {
  let h = 2166136261;
  h = Math.imul(h ^ k.n, 16777619) >>> 0;
  for (let i = 0; i < k.mode.length; i++) h = Math.imul(h ^ k.mode.charCodeAt(i), 16777619) >>> 0;
  h = mix(h, k.rows);
  h = mix(h, k.cols);
  h = mix(h, k.signs);
  return mix(h, k.partner);
}

function same(a: ArrayLike<number> | null, b: ArrayLike<number> | null): boolean {
  if (a === null || b === null) return a === b;
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

function equalKeys(a: AnalysisKey, b: AnalysisKey): boolean {
  return a.n === b.n && a.mode === b.mode && same(a.rows, b.rows) && same(a.cols, b.cols) && same(a.signs, b.signs) && same(a.partner, b.partner);
}

/** The key's hash, to hand to findAnalysis and storeAnalysis (one pass over the pattern for both). */
export function analysisHash(key: AnalysisKey): number {
  return hashKey(key);
}

/** The stored analysis for exactly this key (h: its analysisHash), or null. */
export function findAnalysis(key: AnalysisKey, h = hashKey(key)): StoredAnalysis | null {
  if (key.rows.length > MAX_ENTRIES) return null;
  for (let i = 0; i < entries.length; i++) {
    const e = entries[i];
    if (e.hash === h && equalKeys(e.key, key)) {
      entries.splice(i, 1);
      entries.unshift(e);
      hits++;
      return e.value;
    }
  }
  misses++;
  return null;
}

/**
 * Stores an analysis under a private copy of its key (rows and cols as given when the key says they
 * never change); h: the key's analysisHash, which is the copy's too.
 */
export function storeAnalysis(key: AnalysisKey, value: StoredAnalysis, h = hashKey(key)): void {
  if (key.rows.length > MAX_ENTRIES) return;
  const copy: AnalysisKey = {
    n: key.n, mode: key.mode, rows: key.owned ? key.rows : key.rows.slice(), cols: key.owned ? key.cols : key.cols.slice(),
    signs: key.signs ? key.signs.slice() : null, partner: key.partner ? key.partner.slice() : null,
  };
  entries.unshift({ key: copy, hash: h, value });
  if (entries.length > CAPACITY) entries.length = CAPACITY;
}

/** Hits and misses since the last clear (tests, benchmarks). */
export function analysisCacheStats(): { hits: number; misses: number; size: number } {
  return { hits, misses, size: entries.length };
}

/** Empties the cache and its counters (tests, and benchmarks that time a cold analysis). */
export function clearAnalysisCache(): void {
  entries.length = 0;
  hits = 0;
  misses = 0;
}
