/**
 * Results that depend only on what is stored, computed once per version of the database
 * instead of once per request (heavy pages under many readers).
 *
 * The version is SQLite's own, read at every lookup at the cost of two tiny statements:
 * - `PRAGMA data_version` changes when ANOTHER connection commits (the command line, the
 *   job worker's bench process, a second server on the same file);
 * - `total_changes()` counts the rows this connection has written (uploads, saved problems,
 *   triage, and also sign-ins: any write, so the cache can only be too fresh, never stale).
 * Entries whose computation also reads files (the problem library) carry a maximum age too,
 * so an edited problems/ folder is seen within PROBLEM_FILES_MAX_AGE_MS.
 *
 * Concurrent readers of a missing entry on this thread compute it once: the synchronous
 * computations (better-sqlite3) fill the entry before the next request runs; the ones that
 * await a solver thread (`cachedByDataAsync`) share one promise.
 * Cached values are shared between requests: callers must not mutate them.
 */
import type { Db } from "~/db/client.server";
import { compare, listComparableCommits, type CompareQuery } from "~/models/compare.server";
import { listProblemLibrary } from "~/models/problems.server";

/** Entries kept per cache (least recently used dropped first). */
const MAX_ENTRIES = 32;
/** How long a result that also read problem files is trusted (common practice, no source). */
export const PROBLEM_FILES_MAX_AGE_MS = 30_000;

interface Entry {
  version: string;
  at: number;
  value: unknown;
}
const caches = new Map<string, Map<string, Entry>>();
let hits = 0;
let misses = 0;

/** The database's data version as seen by this connection (see the module comment). */
export function dataVersion(db: Db): string {
  const dv = db.$client.pragma("data_version", { simple: true }) as number;
  const tc = (db.$client.prepare("select total_changes() as n").get() as { n: number }).n;
  return `${dv}:${tc}`;
}

/** The cache `name`, and its entry for `key` when fresh (then moved to most recently used, counted as a hit). */
function lookup(db: Db, name: string, key: string, maxAgeMs: number) {
  let cache = caches.get(name);
  if (!cache) caches.set(name, (cache = new Map()));
  const version = dataVersion(db);
  const now = Date.now();
  const entry = cache.get(key);
  const hit = entry && entry.version === version && now - entry.at <= maxAgeMs ? entry : null;
  if (hit) {
    cache.delete(key);
    cache.set(key, hit); // most recently used last
    hits++;
  }
  return { cache, hit, now, version };
}

/** `compute()` once per data version (and at most `maxAgeMs` old), by `name` and `key`. */
export function cachedByData<T>(db: Db, name: string, key: string, compute: () => T, maxAgeMs = Infinity): T {
  // ARCWATCH_PAGE_CACHE=0 turns the cache off (benchmarks compare both ways).
  if (process.env.ARCWATCH_PAGE_CACHE === "0") return compute();
  const { cache, hit, now } = lookup(db, name, key, maxAgeMs);
  if (hit) return hit.value as T;
  misses++;
  const value = compute();
  // The computation may itself have written (e.g. a lazily stored row): key by the version after it.
  cache.set(key, { version: dataVersion(db), at: now, value });
  while (cache.size > MAX_ENTRIES) cache.delete(cache.keys().next().value!);
  return value;
}

/**
 * `cachedByData` for a computation that awaits (work on a solver thread). The entry is keyed by
 * the version read BEFORE the computation: a write while it awaited makes the entry too old to
 * hit, never a stale hit. Concurrent readers of a missing entry share one computation. A value
 * for which `keep` says false is returned but not kept (e.g. a part left out while the solver
 * threads were busy).
 */
export async function cachedByDataAsync<T>(db: Db, name: string, key: string, compute: () => Promise<T>, maxAgeMs = Infinity, keep: (value: T) => boolean = () => true): Promise<T> {
  if (process.env.ARCWATCH_PAGE_CACHE === "0") return compute();
  const { cache, hit, now, version } = lookup(db, name, key, maxAgeMs);
  if (hit) return hit.value as T;
  const flightKey = `${name}\n${key}\n${version}`;
  const flying = inflight.get(flightKey);
  if (flying) return flying as Promise<T>;
  misses++;
  const p = compute().then((value) => {
    if (keep(value)) {
      cache.set(key, { version, at: now, value });
      while (cache.size > MAX_ENTRIES) cache.delete(cache.keys().next().value!);
    }
    return value;
  });
  inflight.set(flightKey, p);
  void p.then(
    () => inflight.delete(flightKey),
    () => inflight.delete(flightKey),
  );
  return p;
}
const inflight = new Map<string, Promise<unknown>>();

export function cacheStats() {
  return { hits, misses, entries: [...caches.values()].reduce((n, c) => n + c.size, 0) };
}

export function clearDataCache(): void {
  caches.clear();
}

// ---- the cached reads of the heavy pages ---------------------------------------------------

/** The problem list (problems compiled on a solver thread; throws SolverPoolBusy when its queue is full). */
export function cachedProblemLibrary(db: Db): ReturnType<typeof listProblemLibrary> {
  return cachedByDataAsync(db, "problem-library", "", () => listProblemLibrary(db), PROBLEM_FILES_MAX_AGE_MS);
}

export function cachedCompare(db: Db, q: CompareQuery): ReturnType<typeof compare> {
  return cachedByData(db, "compare", JSON.stringify(q), () => compare(db, q), PROBLEM_FILES_MAX_AGE_MS);
}

export function cachedComparableCommits(db: Db): ReturnType<typeof listComparableCommits> {
  return cachedByData(db, "comparable-commits", "", () => listComparableCommits(db));
}
