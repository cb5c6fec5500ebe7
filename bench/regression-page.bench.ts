/**
 * The regression page against the other pages, through HTTP against the built server
 * (npx tsx bench/regression-page.bench.ts [--db <seeded demo database>] [--rounds 30]):
 *
 * Every regression of the demo database (GET /regressions/:id, full document) and, for
 * comparison, the overview, the regression list, the run list, one run, one case, the problem
 * library, one problem page and the history page. Requests are interleaved round by round (one of
 * each page per round, in the same order), so that the load of a shared machine falls on all
 * pages alike; prints p50 / p95 per page, the regression page's p50 as a ratio to the other
 * pages' p50, and p95 / 400 ms (the goal for the regression page).
 *
 * Data: the demo database (`npm run seed`; without `--db` a fresh one is seeded first, which runs
 * the quick suite: minutes on a shared machine). The demo regressions sit on invented commits, so
 * the page never asks git about them; to measure the page of a real regression too, a copy of the
 * database gets one more: the real run's slowest case flagged against a copy of that run placed at
 * the commit eight before it (this repository's history), so its page lists eight real commits. The page cache stays on, as in production;
 * `--no-cache` turns it off (ARCWATCH_PAGE_CACHE=0) to see the loaders' own cost.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import Database from "better-sqlite3";
import { ROOT, startTestServer } from "../tests/helpers/server";

const args = process.argv.slice(2);
const opt = (name: string) => (args.includes(name) ? args[args.indexOf(name) + 1] : undefined);
const dbTemplate = opt("--db");
const ROUNDS = Number(opt("--rounds") ?? 30);
const GOAL_MS = 400;

/** A copy of the database with one non-demo regression spanning eight commits of this repository. */
function withRealRegression(file: string): string {
  const copy = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-regbench-")), "arcwatch.db");
  fs.copyFileSync(file, copy);
  const sq = new Database(copy);
  const real = sq.prepare("select * from runs where is_demo = 0 and status = 'complete' order by started_at desc limit 1").get() as Record<string, unknown> | undefined;
  if (!real) throw new Error(`${file}: no complete real run to build a real regression on`);
  const base = execFileSync("git", ["rev-parse", `${real.commit_hash as string}~8`], { cwd: ROOT, encoding: "utf8" }).trim();
  const baselineId = crypto.randomUUID();
  const runCols = (sq.prepare("pragma table_info(runs)").all() as { name: string }[]).map((c) => c.name).filter((c) => c !== "id" && c !== "commit_hash" && c !== "started_at");
  sq.prepare(`insert into runs (id, commit_hash, started_at, ${runCols.join(", ")}) select ?, ?, started_at - 86400000, ${runCols.join(", ")} from runs where id = ?`).run(baselineId, base, real.id);
  const caseCols = (sq.prepare("pragma table_info(case_results)").all() as { name: string }[]).map((c) => c.name).filter((c) => c !== "id" && c !== "run_id");
  sq.prepare(`insert into case_results (run_id, ${caseCols.join(", ")}) select ?, ${caseCols.join(", ")} from case_results where run_id = ?`).run(baselineId, real.id);
  sq.prepare("insert into timing_samples (case_result_id, samples_json) select b.id, t.samples_json from case_results b join case_results a on a.case_key = b.case_key and a.run_id = ? join timing_samples t on t.case_result_id = a.id where b.run_id = ?").run(real.id, baselineId);
  const slow = sq.prepare("select case_key, median_seconds from case_results where run_id = ? and median_seconds is not null order by median_seconds desc limit 1").get(real.id) as { case_key: string; median_seconds: number };
  sq.prepare("insert into regressions (run_id, baseline_run_id, case_key, kind, direction, metric, before, after, ratio, p_value, status) values (?, ?, ?, 'speed', 'regression', 'median_seconds', ?, ?, 1.25, 0.0002, 'open')").run(real.id, baselineId, slow.case_key, slow.median_seconds / 1.25, slow.median_seconds);
  sq.close();
  return copy;
}

const template = dbTemplate ? withRealRegression(dbTemplate) : undefined;
const server = await startTestServer({ dbTemplate: template, env: { ARCWATCH_JOB_WORKER: "0", ARCWATCH_DEMO_SEED: "0", ...(args.includes("--no-cache") ? { ARCWATCH_PAGE_CACHE: "0" } : {}) } });
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
  const regs = (await json<{ regressions: { id: number; isDemo?: boolean; caseKey: string }[] }>("/api/regressions?demo=all")).regressions;
  if (regs.length === 0) throw new Error("the database has no regressions: seed the demo data first (npm run seed)");
  const runList = (await json<{ rows: { id: string }[] }>("/api/runs")).rows;
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
    const reg = regs.find((r) => `/regressions/${r.id}` === p);
    const label = reg ? `${p} ${reg.isDemo ? "demo" : "real"} ${reg.caseKey}` : p;
    console.log(`${label.slice(0, 44).padEnd(44)} ${pct(xs, 50).toFixed(1).padStart(8)} ${pct(xs, 95).toFixed(1).padStart(8)} ${(pct(xs, 50) / otherP50).toFixed(2).padStart(11)} ${p.startsWith("/regressions/") ? (pct(xs, 95) / GOAL_MS).toFixed(2).padStart(10) : ""}`);
  }
  const all = regPages.flatMap((p) => times.get(p)!);
  console.log(`\nregression pages together: p50 ${pct(all, 50).toFixed(1)} ms, p95 ${pct(all, 95).toFixed(1)} ms (p95/400 ms = ${(pct(all, 95) / GOAL_MS).toFixed(2)}); other pages p50 ${otherP50.toFixed(1)} ms`);
} finally {
  await server.stop();
  if (template) fs.rmSync(path.dirname(template), { recursive: true, force: true });
}
