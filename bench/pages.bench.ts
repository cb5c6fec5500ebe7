/**
 * Page loaders and API routes against a large database (npx tsx bench/pages.bench.ts):
 * 1,000 runs × 200 cases = 200,000 case results (+ samples, regressions), written to a temporary
 * SQLite file, then every loader and API route of the runs/history/run-suite/settings pages is
 * called in process with a Request authenticated by an API token, as the server would call it.
 * Prints the median and the worst of REPEATS calls per route, and the ratio to the target.
 * Target: every answer under 150 ms on this machine (the figure; a page feels immediate
 * below ~100–200 ms, common practice, no source).
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-pages-bench-"));
process.env.ARCWATCH_DB = path.join(dir, "arcwatch.db");
process.env.SESSION_SECRET ??= "bench-only-session-secret-0123456789abcdef";
process.env.ARCWATCH_JOB_WORKER = "0";

const { getDb, closeDb } = await import("../app/db/client.server");
const { createUser } = await import("../app/models/users.server");
const { createApiToken } = await import("../app/services/tokens.server");
const { loadSuite, suitePath } = await import("../app/runs/suite");

const RUNS = 1000;
const PROBLEMS = 20;
const SCHEMES = ["euler", "trapezoidal", "hermite-simpson", "lgr", "rk4-shooting"];
const MESHES = [20, 40];
const CASES_PER_RUN = PROBLEMS * SCHEMES.length * MESHES.length; // 200
const TARGET_MS = 150;
const REPEATS = 15;

const db = getDb();
const sqlite = db.$client;
const admin = await createUser(db, { email: "bench-admin@arcwatch.test", name: "Bench Admin", role: "admin", password: "bench-admin-password" });
const { token } = createApiToken(db, { name: "bench", role: "admin", createdById: admin.id });

// ---- data ---------------------------------------------------------------------------------
const tFill = performance.now();
const suite = loadSuite(suitePath("quick"));
sqlite.prepare("insert into suites (name, content_hash, definition_json, thresholds_json) values (?, ?, ?, ?)").run("quick", suite.contentHash, JSON.stringify(suite.definition), JSON.stringify(suite.thresholds));
const suiteId = (sqlite.prepare("select id from suites").get() as { id: number }).id;
const insProblem = sqlite.prepare("insert into problems (id, title) values (?, ?)");
const insRun = sqlite.prepare("insert into runs (id, suite_id, commit_hash, branch, dirty, commit_subject, machine_json, machine_key, started_at, finished_at, status, is_demo) values (?, ?, ?, ?, 0, ?, ?, ?, ?, ?, 'complete', 0)");
const insCase = sqlite.prepare(
  "insert into case_results (run_id, problem_id, problem_version_hash, case_key, scheme, intervals, status, objective, objective_error_rel, state_error, control_error, resim_miss, iterations, median_seconds, sample_count, trajectory_json, iteration_log_json) values (?, ?, 'v1', ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 10, ?, ?)",
);
const insSamples = sqlite.prepare("insert into timing_samples (case_result_id, samples_json) values (?, ?)");
const insReg = sqlite.prepare("insert into regressions (run_id, case_key, kind, direction, metric, before, after, ratio, status) values (?, ?, ?, ?, 'median_seconds', 1, 1.3, 1.3, 'open')");
let seed = 12345;
const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
const n = 401;
const traj = JSON.stringify({
  t: Array.from({ length: n }, (_, i) => i / (n - 1)),
  states: { x: Array.from({ length: n }, (_, i) => Math.sin(i / 50)), v: Array.from({ length: n }, (_, i) => Math.cos(i / 50)) },
  tu: Array.from({ length: n }, (_, i) => i / (n - 1)),
  controls: { u: Array.from({ length: n }, (_, i) => (i < 200 ? 1 : -1)) },
  tLambda: null,
  costates: null,
});
const log = JSON.stringify({ log: Array.from({ length: 40 }, (_, i) => ({ iter: i, f: 1 / (i + 1), infPr: 10 ** -i / 4, infDu: 10 ** -i / 3, mu: 0.1 / (i + 1), normD: 1, deltaW: 0, alphaPr: 1, alphaDu: 1, lsTrials: 1, phase: "regular", events: [] })), extra: {} });
let firstCaseId = 0;
sqlite.transaction(() => {
  for (let p = 0; p < PROBLEMS; p++) insProblem.run(`bench-problem-${p}`, `Bench problem ${p}`);
  for (let r = 0; r < RUNS; r++) {
    const id = `00000000-0000-4000-8000-${String(r).padStart(12, "0")}`;
    const started = Date.UTC(2026, 0, 1) + r * 3_600_000;
    insRun.run(id, suiteId, (r * 2654435761 >>> 0).toString(16).padStart(8, "0").repeat(5), r % 5 === 0 ? `feature-${r % 7}` : "main", `Commit ${r}`, JSON.stringify({ cpuModel: "Bench CPU", cores: 2 }), "bench-machine", started, started + 90_000);
    for (let p = 0; p < PROBLEMS; p++)
      for (const s of SCHEMES)
        for (const m of MESHES) {
          const key = `bench-problem-${p}/${s}/${m}`;
          const res = insCase.run(id, `bench-problem-${p}`, key, s, m, rnd() < 0.03 ? "infeasible" : "optimal", 1 + rnd(), 10 ** (-3 - 5 * rnd()), 1e-4 * rnd(), 1e-3 * rnd(), 1e-6 * rnd(), 10 + Math.floor(30 * rnd()), 0.001 + 0.05 * rnd(), r === RUNS - 1 && p === 0 ? traj : null, r === RUNS - 1 && p === 0 ? log : null);
          if (!firstCaseId && r === RUNS - 1) firstCaseId = Number(res.lastInsertRowid);
          insSamples.run(res.lastInsertRowid, JSON.stringify(Array.from({ length: 10 }, () => 0.01 + 0.001 * rnd())));
          if (rnd() < 0.01) insReg.run(id, key, rnd() < 0.5 ? "speed" : "accuracy", rnd() < 0.8 ? "regression" : "improvement");
        }
  }
})();
sqlite.pragma("optimize");
const counts = sqlite.prepare("select (select count(*) from runs) runs, (select count(*) from case_results) cases, (select count(*) from regressions) regs").get() as { runs: number; cases: number; regs: number };
console.log(`database: ${counts.runs} runs, ${counts.cases} case results (${CASES_PER_RUN} per run), ${counts.regs} regressions; filled in ${((performance.now() - tFill) / 1000).toFixed(1)} s`);

// ---- routes -------------------------------------------------------------------------------
type Handler = (args: { request: Request; params: Record<string, string>; context: unknown }) => Promise<unknown> | unknown;
const routes = {
  runs: await import("../app/routes/runs"),
  run: await import("../app/routes/runs.$id"),
  case: await import("../app/routes/cases.$id"),
  history: await import("../app/routes/history"),
  runSuite: await import("../app/routes/run-suite"),
  settings: await import("../app/routes/settings"),
  outbox: await import("../app/routes/admin.outbox"),
  overview: await import("../app/routes/overview"),
  apiRuns: await import("../app/routes/api/runs"),
  apiRun: await import("../app/routes/api/runs.$id"),
  apiCase: await import("../app/routes/api/cases.$id"),
  apiHistory: await import("../app/routes/api/history"),
  apiJobs: await import("../app/routes/api/jobs"),
  apiBranches: await import("../app/routes/api/branches"),
};
const lastRun = `00000000-0000-4000-8000-${String(RUNS - 1).padStart(12, "0")}`;
const caseKey = "bench-problem-0/trapezoidal/20";
const cases: [string, Handler, string, Record<string, string>?][] = [
  ["/runs (page 1, newest first)", routes.runs.loader as Handler, "/runs"],
  ["/runs sorted by failed cases", routes.runs.loader as Handler, "/runs?sort=failed&dir=desc"],
  ["/runs sorted by regressions, page 20", routes.runs.loader as Handler, "/runs?sort=regressions&page=20"],
  ["/runs filtered: branch + commit text", routes.runs.loader as Handler, "/runs?branch=main&q=Commit%2099"],
  ["/runs/:id (200-case matrix)", routes.run.loader as Handler, `/runs/${lastRun}`, { id: lastRun }],
  ["/cases/:id", routes.case.loader as Handler, `/cases/${firstCaseId}`, { id: String(firstCaseId) }],
  ["/history (pickers)", routes.history.loader as Handler, `/history?caseKey=${encodeURIComponent(caseKey)}`],
  ["/run-suite (git branches, commits, suites)", routes.runSuite.loader as Handler, "/run-suite"],
  ["/settings", routes.settings.loader as Handler, "/settings"],
  ["/admin/outbox", routes.outbox.loader as Handler, "/admin/outbox"],
  ["/ (overview)", routes.overview.loader as Handler, "/"],
  ["GET /api/runs", routes.apiRuns.loader as Handler, "/api/runs"],
  ["GET /api/runs?pageSize=500&format=csv", routes.apiRuns.loader as Handler, "/api/runs?pageSize=500&format=csv"],
  ["GET /api/runs/:id", routes.apiRun.loader as Handler, `/api/runs/${lastRun}`, { id: lastRun }],
  ["GET /api/runs/:id?format=csv", routes.apiRun.loader as Handler, `/api/runs/${lastRun}?format=csv`, { id: lastRun }],
  ["GET /api/cases/:id", routes.apiCase.loader as Handler, `/api/cases/${firstCaseId}`, { id: String(firstCaseId) }],
  ["GET /api/cases/:id?part=trajectory", routes.apiCase.loader as Handler, `/api/cases/${firstCaseId}?part=trajectory`, { id: String(firstCaseId) }],
  ["GET /api/history (800 runs on main)", routes.apiHistory.loader as Handler, `/api/history?caseKey=${encodeURIComponent(caseKey)}&branch=main&limit=2000`],
  ["GET /api/history?format=csv", routes.apiHistory.loader as Handler, `/api/history?caseKey=${encodeURIComponent(caseKey)}&branch=main&limit=2000&format=csv`],
  ["GET /api/jobs", routes.apiJobs.loader as Handler, "/api/jobs"],
  ["GET /api/branches", routes.apiBranches.loader as Handler, "/api/branches?ref=main"],
];

async function consume(out: unknown): Promise<void> {
  if (out instanceof Response) await out.text();
  else JSON.stringify(out);
}

const rows: { label: string; median: number; worst: number }[] = [];
for (const [label, fn, url, params] of cases) {
  const call = async () => {
    const request = new Request(`http://127.0.0.1:3000${url}`, { headers: { authorization: `Bearer ${token}` } });
    await consume(await fn({ request, params: params ?? {}, context: {} }));
  };
  await call(); // warm-up (statement preparation, caches)
  const times: number[] = [];
  for (let i = 0; i < REPEATS; i++) {
    const t0 = performance.now();
    await call();
    times.push(performance.now() - t0);
  }
  times.sort((a, b) => a - b);
  rows.push({ label, median: times[REPEATS >> 1]!, worst: times[REPEATS - 1]! });
}

console.log(`\n${"route".padEnd(46)} ${"median ms".padStart(10)} ${"worst ms".padStart(10)} ${"worst / 150 ms".padStart(15)}`);
for (const r of rows) console.log(`${r.label.padEnd(46)} ${r.median.toFixed(2).padStart(10)} ${r.worst.toFixed(2).padStart(10)} ${(r.worst / TARGET_MS).toFixed(3).padStart(15)}`);
const over = rows.filter((r) => r.median > TARGET_MS);
console.log(over.length ? `\n${over.length} route(s) over ${TARGET_MS} ms (median): ${over.map((r) => r.label).join("; ")}` : `\nall ${rows.length} routes under ${TARGET_MS} ms (median of ${REPEATS}; the worst call is shown too)`);
closeDb();
fs.rmSync(dir, { recursive: true, force: true });
