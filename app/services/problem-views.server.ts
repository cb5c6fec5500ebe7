/**
 * Problem views for the pages (app/models/problem-view.ts), compiled on a solver thread and kept
 * in memory by the content of the problem's files, so no request compiles a problem on the
 * server's request thread (issue 12).
 *
 * - Key: the library root, the id and a SHA-256 of the files as read now (node:crypto on the
 *   request thread: a few milliseconds for the largest accepted files). An edited file is a new
 *   key; the old entry ages out.
 * - Cache: least recently used first out, ARCWATCH_PROBLEM_VIEWS entries (default 200). Views
 *   and compile errors are kept (they follow from the files alone); a compile stopped by the
 *   wall limit or a failed thread is kept FAILURE_TTL_MS only, then tried again.
 * - One compile per key at a time: concurrent first reads of one problem wait for the same one.
 * - Several missing problems (the library list) go to one thread as one task of several items;
 *   the wall limit holds per problem (each answer restarts it), and after a problem that ran
 *   out of time the rest are sent again as a new task.
 * - A full queue throws SolverPoolBusy (the routes answer 503 with Retry-After); nothing is kept.
 * - The reference trajectory (thinned) is asked for only by the case and regression charts and
 *   kept in a smaller cache of its own (it can be large).
 */
import { createHash } from "node:crypto";
import { formatProblemError, type ProblemError } from "~/engine/problem/errors";
import { label, readProblemFiles } from "~/engine/problem/load";
import type { ProblemSourceFiles } from "~/engine/problem/compile";
import type { ProblemLibrary } from "~/engine/problem/library";
import { webProblemLibrary } from "~/models/library.server";
import type { ProblemView, ProblemViewAnswer, ProblemViewRequest, Series } from "~/models/problem-view";
import { solverPool, SolverPoolBusy } from "./solver-pool.server";

export type ProblemOrigin = "library" | "uploaded";

/** What compiling a problem's files gave: its view, its errors, or why there is no answer. */
export type ViewOutcome =
  | { ok: true; view: ProblemView }
  | { ok: false; reason: "errors"; errors: ProblemError[] }
  | { ok: false; reason: "timeout" | "crashed"; message: string };

export interface ProblemViewLookup {
  id: string;
  origin: ProblemOrigin;
  outcome: ViewOutcome;
  /** The reference trajectory thinned for a chart (null: none), when it was asked for. */
  series?: Series | null;
}

interface Answer {
  outcome: ViewOutcome;
  series?: Series | null;
}

/** Wall-clock limit of one problem's compile for a page (ms); ARCWATCH_VIEW_WALL_SECONDS overrides it. */
export function viewWallMs(): number {
  const v = Number(process.env.ARCWATCH_VIEW_WALL_SECONDS);
  return (Number.isInteger(v) && v >= 1 && v <= 3600 ? v : 20) * 1000;
}
/** How long an answer that is not about the files (wall limit, thread failure) is kept (common practice, no source). */
export const FAILURE_TTL_MS = 120_000;

function cacheLimit(): number {
  const v = Number(process.env.ARCWATCH_PROBLEM_VIEWS);
  return Number.isInteger(v) && v >= 1 && v <= 100_000 ? v : 200;
}

/** A small least-recently-used map (insertion order of a Map; a read moves the entry last). */
class Lru<V> {
  private map = new Map<string, V>();
  constructor(private readonly limit: () => number) {}
  get(k: string): V | undefined {
    const v = this.map.get(k);
    if (v === undefined) return undefined;
    this.map.delete(k);
    this.map.set(k, v);
    return v;
  }
  set(k: string, v: V): void {
    this.map.delete(k);
    this.map.set(k, v);
    while (this.map.size > this.limit()) this.map.delete(this.map.keys().next().value!);
  }
  delete(k: string): void {
    this.map.delete(k);
  }
  clear(): void {
    this.map.clear();
  }
  get size(): number {
    return this.map.size;
  }
}

interface Kept {
  outcome: ViewOutcome;
  at: number;
}

interface State {
  views: Lru<Kept>;
  series: Lru<Series | null>;
  inflight: Map<string, Promise<Answer>>;
  stats: { hits: number; misses: number; tasks: number; compiled: number };
}

const globalKey = Symbol.for("arcwatch.problemViews");
type G = typeof globalThis & { [globalKey]?: State };
function state(): State {
  const g = globalThis as G;
  g[globalKey] ??= { views: new Lru(cacheLimit), series: new Lru(() => 32), inflight: new Map(), stats: { hits: 0, misses: 0, tasks: 0, compiled: 0 } };
  return g[globalKey];
}

/** Counts since start: cache hits and misses, tasks sent to solver threads, problems compiled there. */
export function problemViewStats() {
  const s = state();
  return { ...s.stats, entries: s.views.size };
}

/** Empties the caches (tests). */
export function clearProblemViews(): void {
  const s = state();
  s.views.clear();
  s.series.clear();
}

interface Source {
  id: string;
  origin: ProblemOrigin;
  key: string;
  files: ProblemSourceFiles;
  label: string;
}

function contentKey(root: string, id: string, files: ProblemSourceFiles): string {
  const h = createHash("sha256");
  for (const [name, text] of [["problem.json", files.problemJson], ["reference.csv", files.referenceCsv], ["guess.csv", files.guessCsv]] as const) {
    if (text === undefined) continue;
    const bytes = Buffer.from(text, "utf8");
    h.update(`${name}\n${bytes.length}\n`);
    h.update(bytes);
  }
  return `${root}\n${id}\n${h.digest("hex")}`;
}

function sourceOf(lib: ProblemLibrary, id: string): Source | null {
  const i = lib.rootIndexOf(id);
  if (i < 0) return null;
  const dir = `${lib.roots[i]!}/${id}`;
  const files = readProblemFiles(dir);
  if (!files) return null;
  return { id, origin: i === 0 ? "library" : "uploaded", key: contentKey(lib.roots[i]!, id, files), files, label: label(`${dir}/problem.json`) };
}

function kept(key: string): ViewOutcome | undefined {
  const s = state();
  const k = s.views.get(key);
  if (!k) return undefined;
  if (!k.outcome.ok && k.outcome.reason !== "errors" && Date.now() - k.at > FAILURE_TTL_MS) {
    s.views.delete(key);
    return undefined;
  }
  return k.outcome;
}

function outcomeOf(a: ProblemViewAnswer): ViewOutcome {
  return a.ok ? { ok: true, view: a.view } : { ok: false, reason: "errors", errors: a.errors };
}

/**
 * Compiles `sources` on a solver thread (one task; after a problem that ran out of time or
 * crashed the thread, the rest as a new task). Registers one promise per key first, so readers
 * arriving meanwhile wait for these compiles instead of starting their own.
 */
function compileOffThread(sources: Source[], withSeries: boolean): Map<string, Promise<Answer>> {
  const s = state();
  const flightKey = (key: string) => (withSeries ? `${key}\nseries` : key);
  const settle = new Map<string, { resolve: (a: Answer) => void; reject: (e: unknown) => void }>();
  const promises = new Map<string, Promise<Answer>>();
  for (const src of sources) {
    const p = new Promise<Answer>((resolve, reject) => settle.set(src.key, { resolve, reject }));
    p.catch(() => {}); // rejections reach every reader that awaits; none is left unhandled
    promises.set(src.key, p);
    s.inflight.set(flightKey(src.key), p);
  }
  const finish = (key: string, outcome: ViewOutcome, series?: Series | null) => {
    const d = settle.get(key);
    if (!d) return;
    settle.delete(key);
    s.inflight.delete(flightKey(key));
    s.views.set(key, { outcome, at: Date.now() });
    if (withSeries) s.series.set(key, series ?? null);
    d.resolve(withSeries ? { outcome, series: series ?? null } : { outcome });
  };
  const run = async () => {
    let rest = sources;
    while (rest.length > 0) {
      const items: ProblemViewRequest[] = rest.map((src) => ({ key: src.key, id: src.id, files: src.files, label: src.label, series: withSeries }));
      s.stats.tasks++;
      const answer = (a: ProblemViewAnswer) => {
        s.stats.compiled++;
        finish(a.key, outcomeOf(a), withSeries ? (a.ok ? a.series : null) : undefined);
      };
      // each problem's answer but the last comes as a partial one; the last is the task's result
      const out = await solverPool().run<{ last: ProblemViewAnswer | null }>({ kind: "problem-views", items }, viewWallMs(), (value) => answer(value as ProblemViewAnswer));
      if (out.ok && out.value.last) answer(out.value.last);
      const left = rest.filter((src) => settle.has(src.key));
      if (out.ok || left.length === 0) {
        for (const src of left) finish(src.key, { ok: false, reason: "crashed", message: "The solver thread gave no answer for this problem." });
        return;
      }
      // The first problem without an answer is the one that was compiling when the task stopped.
      const [stopped, ...after] = left;
      const message =
        out.reason === "timeout"
          ? `Compiling the problem took longer than ${Math.round(viewWallMs() / 1000)} s, the limit for work done for a web request; it was stopped. Its files can still be run by the bench command.`
          : `Compiling the problem stopped its solver thread: ${out.message}`;
      finish(stopped!.key, { ok: false, reason: out.reason, message });
      rest = after;
    }
  };
  run().catch((err: unknown) => {
    for (const [key, d] of settle) {
      s.inflight.delete(flightKey(key));
      d.reject(err);
    }
    settle.clear();
  });
  return promises;
}

/**
 * The views of problems `ids` of the web library (null for an id not in it), compiling the
 * missing ones on a solver thread. Throws SolverPoolBusy when the solver queue is full.
 */
export async function problemViews(ids: readonly string[], opts: { series?: boolean; library?: ProblemLibrary } = {}): Promise<Map<string, ProblemViewLookup | null>> {
  const s = state();
  const lib = opts.library ?? webProblemLibrary();
  const out = new Map<string, ProblemViewLookup | null>();
  const waits: [Source, Promise<Answer>][] = [];
  const missing: Source[] = [];
  for (const id of ids) {
    const src = sourceOf(lib, id);
    if (!src) {
      out.set(id, null);
      continue;
    }
    const hit = kept(src.key);
    if (hit) {
      // a failed problem has no series; a viewed one may still lack it (asked for without it)
      const series = !opts.series ? undefined : hit.ok ? s.series.get(src.key) : null;
      if (!opts.series || series !== undefined) {
        s.stats.hits++;
        out.set(id, { id, origin: src.origin, outcome: hit, ...(opts.series ? { series } : {}) });
        continue;
      }
    }
    s.stats.misses++;
    const flying = s.inflight.get(opts.series ? `${src.key}\nseries` : src.key);
    if (flying) waits.push([src, flying]);
    else missing.push(src);
  }
  if (missing.length > 0) {
    const started = compileOffThread(missing, opts.series === true);
    for (const src of missing) waits.push([src, started.get(src.key)!]);
  }
  for (const [src, p] of waits) out.set(src.id, { id: src.id, origin: src.origin, ...(await p) });
  return out;
}

/** One problem's view (null: not in the library). Throws SolverPoolBusy when the solver queue is full. */
export async function problemView(id: string): Promise<ProblemViewLookup | null> {
  return (await problemViews([id])).get(id) ?? null;
}

/**
 * The reference trajectory of problem `id` thinned for a chart, with the problem's view; null
 * when the problem is not in the library. Throws SolverPoolBusy when the solver queue is full.
 */
export async function problemReferenceSeries(id: string): Promise<ProblemViewLookup | null> {
  return (await problemViews([id], { series: true })).get(id) ?? null;
}

/** One line for a page: the first errors (at most three; file, field and column each) or why there is no answer. */
export function outcomeMessage(o: Exclude<ViewOutcome, { ok: true }>): string {
  if (o.reason !== "errors") return o.message;
  const more = o.errors.length > 3 ? ` (and ${o.errors.length - 3} more)` : "";
  return o.errors.slice(0, 3).map(formatProblemError).join("; ") + more;
}

export { SolverPoolBusy };
