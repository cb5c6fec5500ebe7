/**
 * A command-line run killed with SIGKILL is shown as interrupted (issue 12, item 8), end to end:
 * the real `arcwatch bench` command (scripts/arcwatch.mjs) records into the database of a built
 * server on loopback, is killed mid-run with `kill -9` (no handler can run), and then
 * - the server's periodic check marks it interrupted (its pid is gone on this host), the run
 *   page says so with the reason, and the overview stops listing it as in progress;
 * - with the server's check held off, the next command-line run on that database marks it.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-killed-"));
/** Long enough to be caught running: one problem, every scheme, several meshes, many repeats. */
const longSuite = path.join(dir, "long.json");
/** The next run: a handful of quick cases. */
const shortSuite = path.join(dir, "short.json");
fs.writeFileSync(
  longSuite,
  JSON.stringify({
    format: "arcwatch-suite/1",
    name: "killed-long",
    problems: ["pika-rover-dash"],
    schemes: ["trapezoidal", "euler", "hermite-simpson", "rk4-shooting"],
    meshes: [{ intervals: 10 }, { intervals: 20 }, { intervals: 40 }, { intervals: 60 }],
    repeats: 20,
    warmup: 1,
    timeBudgetSeconds: 120,
    jobs: 1,
  }),
);
fs.writeFileSync(
  shortSuite,
  JSON.stringify({ format: "arcwatch-suite/1", name: "killed-next", problems: ["pika-rover-dash"], schemes: ["trapezoidal"], meshes: [{ intervals: 10 }], repeats: 1, warmup: 0, timeBudgetSeconds: 60, jobs: 1 }),
);

const children: ChildProcess[] = [];
function startCli(suite: string, dbFile: string): ChildProcess {
  const child = spawn(process.execPath, [path.join(ROOT, "scripts/arcwatch.mjs"), "bench", "--suite", suite, "--db", dbFile, "--no-alerts"], { cwd: ROOT, stdio: ["ignore", "ignore", "pipe"] });
  children.push(child);
  let err = "";
  child.stderr!.on("data", (d) => (err = (err + d).slice(-4000)));
  (child as ChildProcess & { errText: () => string }).errText = () => err;
  return child;
}
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

interface RunRow {
  id: string;
  status: string;
  runner_pid: number | null;
  heartbeat_at: number | null;
  status_note: string | null;
}
function runOf(dbFile: string, pid: number): RunRow | undefined {
  const db = new Database(dbFile, { readonly: true, fileMustExist: true });
  try {
    db.pragma("busy_timeout = 2000");
    return db.prepare("select id, status, runner_pid, heartbeat_at, status_note from runs where runner_pid = ?").get(pid) as RunRow | undefined;
  } finally {
    db.close();
  }
}
function casesOf(dbFile: string, runId: string): number {
  const db = new Database(dbFile, { readonly: true, fileMustExist: true });
  try {
    return (db.prepare("select count(*) as n from case_results where run_id = ?").get(runId) as { n: number }).n;
  } finally {
    db.close();
  }
}

/** Starts the long run and waits until it is recorded as running, heartbeat on, a case or more stored. */
async function runningCli(dbFile: string): Promise<{ child: ChildProcess; run: RunRow }> {
  const child = startCli(longSuite, dbFile);
  const deadline = Date.now() + 180_000;
  for (;;) {
    expect(child.exitCode, (child as ChildProcess & { errText: () => string }).errText()).toBeNull();
    const run = runOf(dbFile, child.pid!);
    if (run && run.status === "running" && run.heartbeat_at && casesOf(dbFile, run.id) > 0) return { child, run };
    if (Date.now() > deadline) throw new Error(`the run was not seen running within 180 s:\n${(child as ChildProcess & { errText: () => string }).errText()}`);
    await sleep(250);
  }
}

async function killHard(child: ChildProcess): Promise<void> {
  const exited = new Promise((r) => child.once("exit", r));
  process.kill(child.pid!, "SIGKILL");
  await exited;
  expect(child.signalCode).toBe("SIGKILL");
}

async function signIn(server: RunningServer): Promise<string> {
  const r = await fetch(`${server.url}/signin`, {
    method: "POST",
    headers: { Origin: server.url, "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email: "viewer@arcwatch.test", password: "viewer-demo-pass" }),
    redirect: "manual",
  });
  expect(r.status).toBe(302);
  return r.headers.get("set-cookie")!.split(";")[0]!;
}
const page = async (server: RunningServer, cookie: string, p: string) => {
  const r = await fetch(`${server.url}${p}`, { headers: { Cookie: cookie } });
  expect(r.status, p).toBe(200);
  // React's markers between adjacent text nodes are not text
  return (await r.text()).replaceAll("<!-- -->", "");
};
const apiStatus = async (server: RunningServer, cookie: string, id: string) => ((await (await fetch(`${server.url}/api/runs/${id}`, { headers: { Cookie: cookie } })).json()) as { run: { status: string; statusNote: string | null } }).run;
/** The overview's "Runs in progress" card. */
const inProgressCard = (html: string) => {
  const at = html.indexOf('id="progress-title"');
  expect(at).toBeGreaterThan(0);
  return html.slice(at, html.indexOf("</section>", at));
};

let template = "";
afterAll(() => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("a command-line run killed with kill -9", () => {
  let server: RunningServer;
  beforeAll(async () => {
    server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "0", ARCWATCH_HOUSEKEEPING_MS: "500" } });
    // A copy of the freshly seeded database for the second server below (seeding takes a while).
    template = path.join(dir, "seeded.db");
    const src = new Database(server.dbFile, { readonly: true });
    await src.backup(template);
    src.close();
  }, 400_000);
  afterAll(async () => {
    await server?.stop();
  });

  it("is marked interrupted by the server, and the run page and the overview say so", async () => {
    const cookie = await signIn(server);
    const { child, run } = await runningCli(server.dbFile);
    expect((await apiStatus(server, cookie, run.id)).status).toBe("running");
    expect(inProgressCard(await page(server, cookie, "/"))).toContain(`/runs/${run.id}`);

    await killHard(child);
    let seen = await apiStatus(server, cookie, run.id);
    for (const deadline = Date.now() + 30_000; seen.status === "running" && Date.now() < deadline; ) {
      await sleep(250);
      seen = await apiStatus(server, cookie, run.id);
    }
    expect(seen.status).toBe("interrupted");
    expect(seen.statusNote).toMatch(new RegExp(`recording process \\(pid ${child.pid}\\) ended without finishing the run`));
    expect(server.log()).toContain(`run ${run.id} marked interrupted`);

    const html = await page(server, cookie, `/runs/${run.id}`);
    expect(html).toMatch(/data-testid="run-status-note"[^>]*>\s*<strong>Interrupted:<\/strong>/);
    expect(html).toContain(`pid ${child.pid}) ended without finishing the run`);
    expect(html).toMatch(/this run is not used as a baseline/);
    expect(inProgressCard(await page(server, cookie, "/"))).not.toContain(`/runs/${run.id}`);
    expect(await page(server, cookie, "/runs")).toMatch(/interrupted/);
  }, 400_000);
});

describe("a killed run found by the next run", () => {
  let server: RunningServer;
  beforeAll(async () => {
    // The server's own check runs once at start-up, then not for an hour.
    server = await startTestServer({ dbTemplate: template, env: { ARCWATCH_JOB_WORKER: "0", ARCWATCH_HOUSEKEEPING_MS: "3600000" } });
  }, 400_000);
  afterAll(async () => {
    await server?.stop();
  });

  it("is marked interrupted when the next command-line run starts", async () => {
    const cookie = await signIn(server);
    const { child, run } = await runningCli(server.dbFile);
    await killHard(child);
    await sleep(2000);
    // Nothing has looked yet: still shown running.
    expect((await apiStatus(server, cookie, run.id)).status).toBe("running");

    const next = startCli(shortSuite, server.dbFile);
    const code = await new Promise<number | null>((r) => next.once("exit", r));
    expect(code, (next as ChildProcess & { errText: () => string }).errText()).toBe(0);
    const seen = await apiStatus(server, cookie, run.id);
    expect(seen.status).toBe("interrupted");
    expect(seen.statusNote).toMatch(/ended without finishing the run/);
    expect(await page(server, cookie, `/runs/${run.id}`)).toContain("<strong>Interrupted:</strong>");
    // The killed run's cases are kept.
    expect(casesOf(server.dbFile, run.id)).toBeGreaterThan(0);
  }, 400_000);
});
