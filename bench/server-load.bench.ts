/**
 * The server under load, through HTTP against the built server (npx tsx bench/server-load.bench.ts):
 *
 * 1. Trial solves off the request thread: 4 heavy trial solves (POST /api/problems/trial, a
 *    40-state problem on 60 intervals, the largest a trial accepts) are posted at once; while
 *    they run, /api/health and the overview (/) are requested one after another. Prints their
 *    p50 / p95 / max latency, the same figures with the server idle, and p95 / 100 ms (the goal).
 *    A 150-state trial is posted too: it must be refused by the size check at once.
 * 3. First reads of big uploaded problems (`--only views`): 4 problems within the trial size limits
 *    that are slow to compile (40 states, nested intermediates, about 2 s of CPU each;
 *    tests/helpers/load-problem.ts) are written to the server's uploaded folder and their pages
 *    requested at once (each compiles on a solver thread); meanwhile /api/health and / are
 *    requested one after another. Prints p50 / p95 / max, the idle figures, p95 / 100 ms, and the
 *    solver-thread CPU the 4 compiles took (server process CPU during the reads, /proc).
 * 2. Many readers: 200 concurrent GETs of each heavy page (/compare, /problems, /), after one
 *    warm-up request. Prints p50 / p95 / max and p95 / 2 s (the goal).
 *
 * Data: the demo database (`npm run seed`); pass `--db <file>` to reuse an already seeded copy
 * (seeding runs the quick suite, minutes on a shared machine). Timings on a shared machine are
 * noisy: the idle and loaded figures are measured in the same run, one after the other, and
 * each row shows the machine's 1-minute load average when it was measured (2 cores: a load
 * above 2 means other processes were waiting for a core too).
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chainProblem, nestedProblem } from "../tests/helpers/load-problem";
import { startTestServer } from "../tests/helpers/server";

const args = process.argv.slice(2);
const dbTemplate = args.includes("--db") ? args[args.indexOf("--db") + 1] : undefined;
/** `--only trials`, `--only views` or `--only pages` runs one part. */
const only = args.includes("--only") ? args[args.indexOf("--only") + 1] : undefined;
const READERS = 200;
const HEALTH_GOAL_MS = 100;
const PAGE_GOAL_MS = 2000;

const server = await startTestServer({ dbTemplate, env: { ARCWATCH_JOB_WORKER: "0" } });
const base = server.url;

async function signInAt(at: string, email: string, password: string): Promise<string> {
  const r = await fetch(`${at}/signin`, {
    method: "POST",
    headers: { Origin: at, "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email, password }),
    redirect: "manual",
  });
  const c = r.headers.get("set-cookie");
  if (r.status !== 302 || !c) throw new Error(`sign-in failed: ${r.status}`);
  return c.split(";")[0]!;
}
const cookie = await signInAt(base, "engineer@arcwatch.test", "engineer-demo-pass");

function trial(problemJson: string, id: string) {
  const t0 = performance.now();
  return fetch(`${base}/api/problems/trial`, {
    method: "POST",
    headers: { Origin: base, Cookie: cookie },
    body: new URLSearchParams({ mode: "upload", id, problemJson, trialScheme: "hermite-simpson", trialIntervals: "60" }),
  }).then(async (r) => {
    const body = (await r.json()) as { trial?: { status: string; solveSeconds: number }; errors?: Record<string, string>; error?: string };
    return { status: r.status, ms: performance.now() - t0, outcome: body.trial?.status ?? body.error ?? Object.values(body.errors ?? {})[0]?.slice(0, 70) };
  });
}

const timed = (path: string) => timedAt(base, cookie, path);
async function timedAt(at: string, c: string, path: string): Promise<number> {
  const t0 = performance.now();
  const r = await fetch(`${at}${path}`, { headers: { Cookie: c } });
  await r.arrayBuffer();
  if (r.status !== 200) throw new Error(`${path}: ${r.status}`);
  return performance.now() - t0;
}

function pct(xs: number[], p: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)]!;
}
/** CPU time (user + system, ms) a process has used, from /proc (Linux; clock ticks of 10 ms). */
function cpuMsOf(pid: number): number {
  const stat = fs.readFileSync(`/proc/${pid}/stat`, "utf8");
  const f = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
  return (Number(f[11]) + Number(f[12])) * 10;
}
const load = () => os.loadavg()[0]!.toFixed(1).padStart(5);
const fmt = (xs: number[]) => `${pct(xs, 50).toFixed(0).padStart(7)} ${pct(xs, 95).toFixed(0).padStart(7)} ${Math.max(...xs).toFixed(0).padStart(7)}`;

try {
  // ---- 1. trial solves ------------------------------------------------------------------
  if (only === undefined || only === "trials") {
  const idle = { health: [] as number[], overview: [] as number[] };
  await timed("/api/health");
  await timed("/");
  for (let i = 0; i < 20; i++) {
    idle.health.push(await timed("/api/health"));
    idle.overview.push(await timed("/"));
  }
  const loadIdle = load();
  const oversize = await trial(chainProblem(150), "load-chain-150");
  const heavy = chainProblem(40);
  let running = true;
  const trials = Promise.all([1, 2, 3, 4].map((i) => trial(heavy, `load-chain-${i}`))).finally(() => (running = false));
  const loaded = { health: [] as number[], overview: [] as number[] };
  await new Promise((r) => setTimeout(r, 300));
  while (running) {
    loaded.health.push(await timed("/api/health"));
    loaded.overview.push(await timed("/"));
    await new Promise((r) => setTimeout(r, 50));
  }
  const loadTrials = load();
  const results = await trials;
  console.log(`\n1. Requests while 4 heavy trial solves run (40 states × 60 intervals, Hermite–Simpson); ${os.availableParallelism()} cores, machine shared`);
  console.log(`   trials: ${results.map((r) => `${r.status} ${r.outcome} in ${(r.ms / 1000).toFixed(1)} s`).join("; ")}`);
  console.log(`   150-state trial: ${oversize.status} in ${oversize.ms.toFixed(0)} ms (${oversize.outcome})`);
  console.log(`   ${"route".padEnd(28)} ${"n".padStart(4)} ${"p50 ms".padStart(7)} ${"p95 ms".padStart(7)} ${"max ms".padStart(7)} ${"p95/100ms".padStart(10)} ${"load".padStart(5)}`);
  for (const [label, xs] of [
    ["/api/health, idle", idle.health],
    ["/api/health, 4 trials", loaded.health],
    ["/ (overview), idle", idle.overview],
    ["/ (overview), 4 trials", loaded.overview],
  ] as const)
    console.log(`   ${label.padEnd(28)} ${String(xs.length).padStart(4)} ${fmt(xs)} ${(pct(xs, 95) / HEALTH_GOAL_MS).toFixed(2).padStart(10)} ${label.includes("idle") ? loadIdle : loadTrials}`);

  }
  // ---- 3. first reads of big uploaded problems -------------------------------------------
  if (only === undefined || only === "views") {
    const idle = { health: [] as number[], overview: [] as number[] };
    await timed("/api/health");
    await timed("/");
    for (let i = 0; i < 20; i++) {
      idle.health.push(await timed("/api/health"));
      idle.overview.push(await timed("/"));
    }
    const loadIdle = load();
    // the server's uploaded folder: problems/ beside its database (app/models/library.server.ts)
    const uploads = path.join(path.dirname(server.dbFile), "problems");
    const ids = [1, 2, 3, 4].map((i) => `load-nest-${i}`);
    for (const [i, id] of ids.entries()) {
      fs.mkdirSync(path.join(uploads, id), { recursive: true });
      fs.writeFileSync(path.join(uploads, id, "problem.json"), nestedProblem(8, `Load nest ${i + 1}`));
    }
    const cpu0 = cpuMsOf(server.child.pid!);
    let reading = true;
    const reads = Promise.all(
      ids.map(async (id) => {
        const t0 = performance.now();
        const r = await fetch(`${base}/problems/${id}`, { headers: { Cookie: cookie } });
        const text = await r.text();
        return { status: r.status, ms: performance.now() - t0, titled: text.includes("Load nest") };
      }),
    ).finally(() => (reading = false));
    const loaded = { health: [] as number[], overview: [] as number[] };
    await new Promise((r) => setTimeout(r, 100));
    while (reading) {
      loaded.health.push(await timed("/api/health"));
      loaded.overview.push(await timed("/"));
      await new Promise((r) => setTimeout(r, 50));
    }
    const loadReads = load();
    const results = await reads;
    const cpu = cpuMsOf(server.child.pid!) - cpu0;
    const second = await Promise.all(ids.map((id) => timed(`/problems/${id}`)));
    console.log(`\n3. Requests while 4 first reads of big uploaded problem pages compile (40 states, nested intermediates); ${os.availableParallelism()} cores, machine shared`);
    console.log(`   first reads: ${results.map((r) => `${r.status}${r.titled ? "" : " (no title!)"} in ${(r.ms / 1000).toFixed(1)} s`).join("; ")}; server CPU meanwhile ${(cpu / 1000).toFixed(1)} s`);
    console.log(`   second reads (from memory): ${second.map((ms) => `${ms.toFixed(0)} ms`).join(", ")}`);
    console.log(`   ${"route".padEnd(28)} ${"n".padStart(4)} ${"p50 ms".padStart(7)} ${"p95 ms".padStart(7)} ${"max ms".padStart(7)} ${"p95/100ms".padStart(10)} ${"load".padStart(5)}`);
    for (const [label, xs] of [
      ["/api/health, idle", idle.health],
      ["/api/health, 4 first reads", loaded.health],
      ["/ (overview), idle", idle.overview],
      ["/ (overview), 4 first reads", loaded.overview],
    ] as const)
      console.log(`   ${label.padEnd(28)} ${String(xs.length).padStart(4)} ${fmt(xs)} ${(pct(xs, 95) / HEALTH_GOAL_MS).toFixed(2).padStart(10)} ${label.includes("idle") ? loadIdle : loadReads}`);
  }
  // ---- 2. many readers ------------------------------------------------------------------
  if (only === undefined || only === "pages") {
    // The same pages from a second server on a copy of the same data with the cache turned off
    // (ARCWATCH_PAGE_CACHE=0), measured right after, for the ratio.
    const uncached = await startTestServer({ dbTemplate, env: { ARCWATCH_JOB_WORKER: "0", ARCWATCH_PAGE_CACHE: "0" } });
    try {
      const uncachedCookie = await signInAt(uncached.url, "engineer@arcwatch.test", "engineer-demo-pass");
      console.log(`\n2. ${READERS} concurrent GETs per page (after one warm-up request); cache on, then off (ARCWATCH_PAGE_CACHE=0)`);
      console.log(`   Server CPU per request (user + system of the server process, /proc) does not depend on what else the machine runs;`);
      console.log(`   ${READERS} × that is the time one core needs for the whole burst, i.e. about the p95 on an idle machine.`);
      console.log(`   ${"page".padEnd(24)} ${"first ms".padStart(8)} ${"p50 ms".padStart(7)} ${"p95 ms".padStart(7)} ${"max ms".padStart(7)} ${"p95/2s".padStart(7)} ${"CPU ms/req".padStart(10)} ${`CPU×${READERS} s`.padStart(10)} ${"load".padStart(5)}`);
      for (const page of ["/compare", "/problems", "/"]) {
        for (const [label, srv, c] of [["cache on", server, cookie], ["cache off", uncached, uncachedCookie]] as const) {
          const first = await timedAt(srv.url, c, page);
          const cpu0 = cpuMsOf(srv.child.pid!);
          const xs = await Promise.all(Array.from({ length: READERS }, () => timedAt(srv.url, c, page)));
          const perReq = (cpuMsOf(srv.child.pid!) - cpu0) / READERS;
          console.log(`   ${`${page}, ${label}`.padEnd(24)} ${first.toFixed(0).padStart(8)} ${fmt(xs)} ${(pct(xs, 95) / PAGE_GOAL_MS).toFixed(2).padStart(7)} ${perReq.toFixed(1).padStart(10)} ${((perReq * READERS) / 1000).toFixed(2).padStart(10)} ${load()}`);
        }
      }
    } finally {
      await uncached.stop();
    }
  }
} finally {
  await server.stop();
}
