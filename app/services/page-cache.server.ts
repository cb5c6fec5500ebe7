/**
 * Rendered pages kept per (page URL, user, role, data version): many readers of a heavy page
 * (/compare under 200 concurrent GETs) cost one render, not one each. The data they show is
 * already cached (app/services/data-cache.server.ts); what remained per request was React's
 * server render and the serialisation of the loader data into the page (a profile of /compare:
 * see DEVELOPERS.md, Web).
 *
 * Security properties kept:
 * - Authentication runs on every request, hit or miss (the session or token is checked as the
 *   loaders would; a signed-out, expired or disabled session gets no cached page, and a miss
 *   runs the loaders, which check again).
 * - One user's page never reaches another: the key holds the user id and role, and followers
 *   waiting on a render in progress share it only under the same key.
 * - The content-security-policy nonce stays fresh and unpredictable per response: the stored
 *   page is split at the nonce it was rendered with, and every answer is joined with the nonce
 *   scripts/serve.mjs made for that response (16 random bytes). A page whose render did not
 *   carry a nonce (the dev server) is not kept.
 * - Only GET documents of the read-only pages below, answered 200 without a Set-Cookie.
 *
 * Freshness: the data version is SQLite's (any write anywhere changes it), and an entry is
 * trusted for PAGE_MAX_AGE_MS at most (pages also read problem files and print times).
 * ARCWATCH_PAGE_CACHE=0 turns it off, as it does the data cache.
 */
import { getDb } from "~/db/client.server";
import { readDemoProgress } from "~/models/demo-progress.server";
import { CSP_NONCE_HEADER } from "~/nonce";
import { getOptionalUser } from "./auth.server";
import { dataVersion, PROBLEM_FILES_MAX_AGE_MS } from "./data-cache.server";

/**
 * Pages whose document depends only on the stored data, the URL and who reads it, each with
 * what else it shows (the overview: the first start's seeding progress, kept in a file).
 */
const CACHED_PATHS = new Map<string, () => string>([
  ["/", () => JSON.stringify(readDemoProgress())],
  ["/compare", () => ""],
  ["/problems", () => ""],
  ["/history", () => ""],
  ["/regressions", () => ""],
  ["/runs", () => ""],
]);
export const PAGE_MAX_AGE_MS = PROBLEM_FILES_MAX_AGE_MS;
const MAX_ENTRIES = 64;
const MAX_ENTRY_BYTES = 4 * 1024 * 1024;
const MAX_TOTAL_BYTES = 64 * 1024 * 1024;

interface Page {
  status: number;
  headers: [string, string][];
  /** The body split at its render's nonce. */
  parts: string[];
  bytes: number;
  at: number;
}

const pages = new Map<string, Page>();
const inFlight = new Map<string, Promise<Page | null>>();
let totalBytes = 0;
const stats = { hits: 0, misses: 0, shared: 0 };

export function pageCacheStats() {
  return { ...stats, entries: pages.size, bytes: totalBytes };
}

export function clearPageCache(): void {
  pages.clear();
  inFlight.clear();
  totalBytes = 0;
}

function store(key: string, page: Page) {
  const old = pages.get(key);
  if (old) totalBytes -= old.bytes;
  pages.delete(key);
  pages.set(key, page);
  totalBytes += page.bytes;
  while (pages.size > MAX_ENTRIES || totalBytes > MAX_TOTAL_BYTES) {
    const [k, p] = pages.entries().next().value as [string, Page];
    pages.delete(k);
    totalBytes -= p.bytes;
  }
}

/** Says how a cacheable page was answered: hit (kept copy), shared (a render in progress), miss (rendered). */
export const PAGE_CACHE_HEADER = "X-Arcwatch-Page-Cache";

function answer(page: Page, nonce: string, how: "hit" | "shared"): Response {
  const headers = new Headers(page.headers);
  headers.set(PAGE_CACHE_HEADER, how);
  return new Response(page.parts.join(nonce), { status: page.status, headers });
}

/** Reads a rendered response into a page to keep, or null when it must not be kept. */
async function keepable(res: Response, nonce: string): Promise<{ page: Page | null; res: Response }> {
  if (res.status !== 200 || res.headers.has("set-cookie") || !(res.headers.get("content-type") ?? "").startsWith("text/html") || !res.body) return { page: null, res };
  const text = await res.text();
  const again = new Response(text, { status: res.status, statusText: res.statusText, headers: res.headers });
  const parts = text.split(nonce);
  if (parts.length < 2 || text.length > MAX_ENTRY_BYTES) return { page: null, res: again };
  return { page: { status: res.status, headers: [...res.headers.entries()].filter(([k]) => k.toLowerCase() !== PAGE_CACHE_HEADER.toLowerCase()), parts, bytes: text.length * 2, at: Date.now() }, res: again };
}

/** Root middleware: serves a kept page or renders, keeps and serves it. */
export async function pageCacheMiddleware(request: Request, next: () => Promise<Response>): Promise<Response> {
  if (process.env.ARCWATCH_PAGE_CACHE === "0" || request.method !== "GET") return next();
  const url = new URL(request.url);
  const extra = CACHED_PATHS.get(url.pathname);
  if (!extra) return next();
  // Only Arcwatch's server sets the nonce header (overwriting any client value), as in entry.server.tsx.
  const nonce = process.env.ARCWATCH_SERVER_SETS_ADDRESS === "1" ? request.headers.get(CSP_NONCE_HEADER) : null;
  if (!nonce || nonce.length < 16) return next();
  const user = await getOptionalUser(request);
  if (!user) return next();
  const db = getDb();
  const key = `${user.id}\n${user.role}\n${url.href}\n${dataVersion(db)}\n${extra()}`;
  const hit = pages.get(key);
  if (hit && Date.now() - hit.at <= PAGE_MAX_AGE_MS) {
    stats.hits++;
    pages.delete(key);
    pages.set(key, hit); // most recently used last
    return answer(hit, nonce, "hit");
  }
  const pending = inFlight.get(key);
  if (pending) {
    const page = await pending;
    if (page) {
      stats.shared++;
      return answer(page, nonce, "shared");
    }
    return next();
  }
  stats.misses++;
  let settle: (p: Page | null) => void = () => {};
  inFlight.set(key, new Promise<Page | null>((r) => (settle = r)));
  try {
    const { page, res } = await keepable(await next(), nonce);
    // Kept under the version read before the render: a write during it makes the next lookup miss.
    if (page) {
      store(key, page);
      res.headers.set(PAGE_CACHE_HEADER, "miss"); // `res` is the copy made in keepable()
    }
    settle(page);
    return res;
  } catch (err) {
    settle(null);
    throw err;
  } finally {
    inFlight.delete(key);
  }
}
