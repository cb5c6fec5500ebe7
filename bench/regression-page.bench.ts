/**
 * The regression page against the other pages, through HTTP against the built server
 * (npx tsx bench/regression-page.bench.ts [--db <seeded demo database>] [--rounds 30]):
 *
 * Every regression of the demo database (GET /regressions/:id, full document) and, for
 * comparison, the overview, the regression list, the run list, one run, one case, the problem
 * library, one problem page and the history page. Requests are interleaved round by round (one of
 * each page per round, in the same order), so that the load of a shared machine falls on all
 * pages alike; prints p50 / p95 per page, the regression page's p50 as a ratio to the other
 * pages' p50, and p95 / 400 ms (the issue's goal for the regression page).
 *
 * Data: the demo database (`npm run seed`; without `--db` a fresh one is seeded first, which runs
 * the quick suite: minutes on a shared machine). The page cache stays on, as in production;
 * `--no-cache` turns it off (ARCWATCH_PAGE_CACHE=0) to see the loaders' own cost.
 */
import { startTestServer } from "../tests/helpers/server";

const args = process.argv.slice(2);
const opt = (name: string) => (args.includes(name) ? args[args.indexOf(name) + 1] : undefined);
const dbTemplate = opt("--db");
const ROUNDS = Number(opt("--rounds") ?? 30);
const GOAL_MS = 400;

const server = await startTestServer({ dbTemplate, env: { ARCWATCH_JOB_WORKER: "0", ARCWATCH_DEMO_SEED: "0", ...(args.includes("--no-cache") ? { ARCWATCH_PAGE_CACHE: "0" } : {}) } });
const base = server.url;

async function signIn(): Promise<string> {
  const r = await fetch(`${base}/signin`, {
    method: "POST",
    headers: { Origin: base, "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email: "engineer@arcwatch.test", password: "engineer-demo-pass" }),
    redirect: "manual",
  });
  const c = r.headers.get("set-cookie");
  if (r.status !== 302 || !c) throw new Error(`sign-in failed: ${r.status}`);
  return c.split(";")[0]!;
}

function pct(xs: number[], p: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil((p / 100) * s.length) - 1))]!;
}

try {
  const cookie = await signIn();
  const json = async <T>(path: string): Promise<T> => {
    const r = await fetch(`${base}${path}`, { headers: { Cookie: cookie } });
    if (r.status !== 200) throw new Error(`${path}: ${r.status}`);
    return (await r.json()) as T;
  };
  const regs = (await json<{ regressions: { id: number; isDemo?: boolean; caseKey: string }[] }>("/api/regressions")).regressions;
  if (regs.length === 0) throw new Error("the database has no regressions: seed the demo data first (npm run seed)");
  const runList = (await json<{ runs: { id: string }[] }>("/api/runs")).runs;
  const run = await json<{ cases?: { id: number; problemId: string }[]; run?: unknown }>(`/api/runs/${runList[0]!.id}`);
  const firstCase = run.cases?.[0];
  const pages: string[] = [
    ...regs.map((r) => `/regressions/${r.id}`),
    "/",
    "/regressions",
    "/runs",
    `/runs/${runList[0]!.id}`,
    ...(firstCase ? [`/cases/${firstCase.id}`, `/problems/${firstCase.problemId}`] : []),
    "/problems",
    "/history",
  ];
  const times = new Map<string, number[]>(pages.map((p) => [p, []]));
  const get = async (path: string) => {
    const t0 = performance.now();
    const r = await fetch(`${base}${path}`, { headers: { Cookie: cookie } });
    await r.arrayBuffer();
    if (r.status !== 200) throw new Error(`${path}: ${r.status}`);
    return performance.now() - t0;
  };
  for (const p of pages) await get(p); // warm-up: module loading, statement preparation
  for (let round = 0; round < ROUNDS; round++) for (const p of pages) times.get(p)!.push(await get(p));

  const regPages = pages.filter((p) => p.startsWith("/regressions/"));
  const others = pages.filter((p) => !p.startsWith("/regressions/"));
  const otherP50 = pct(others.flatMap((p) => times.get(p)!), 50);
  console.log(`${regs.length} regressions in the database; ${ROUNDS} interleaved rounds over ${pages.length} pages; page cache ${args.includes("--no-cache") ? "off" : "on"}; machine shared (2 cores)`);
  console.log(`${"page".padEnd(44)} ${"p50 ms".padStart(8)} ${"p95 ms".padStart(8)} ${"p50/others".padStart(11)} ${"p95/400ms".padStart(10)}`);
  for (const p of pages) {
    const xs = times.get(p)!;
    const label = p.startsWith("/regressions/") ? `${p} (${regs.find((r) => `/regressions/${r.id}` === p)!.caseKey})` : p;
    console.log(`${label.slice(0, 44).padEnd(44)} ${pct(xs, 50).toFixed(1).padStart(8)} ${pct(xs, 95).toFixed(1).padStart(8)} ${(pct(xs, 50) / otherP50).toFixed(2).padStart(11)} ${p.startsWith("/regressions/") ? (pct(xs, 95) / GOAL_MS).toFixed(2).padStart(10) : ""}`);
  }
  const all = regPages.flatMap((p) => times.get(p)!);
  console.log(`\nregression pages together: p50 ${pct(all, 50).toFixed(1)} ms, p95 ${pct(all, 95).toFixed(1)} ms (p95/400 ms = ${(pct(all, 95) / GOAL_MS).toFixed(2)}); other pages p50 ${otherP50.toFixed(1)} ms`);
} finally {
  await server.stop();
}
