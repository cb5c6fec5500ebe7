/**
 * Every shell example of README.md's "API" section, run as written: the fenced `sh` blocks are
 * read from README.md, each `curl` line is run by bash and curl against the built server
 * (tests/helpers/server.ts) with an engineer's API token, so the documentation and the code
 * cannot drift apart. Only what a reader must fill in is replaced: the address, the token, and
 * the `<run-id>`, `<case-id>`, `<commit>`, `<sha>` placeholders (by a stored run, its first case,
 * its commit and a commit of the repository); problem.json, reference.csv and run.json are a
 * library problem, its reference and an upload payload in the examples' working folder. A line
 * with a trailing `# NNN` comment must answer NNN, every other line 2xx.
 *
 * Also: POST /api/jobs answers 400 with the field for an unknown suite, commit or ref.
 */
import { execFileSync, spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, ROOT, type RunningServer } from "../helpers/server";
import { pikaCase, runHeader } from "../helpers/run-payload";
import { openDatabase, type Db } from "~/db/client.server";
import { caseResults, regressions, runs, users } from "~/db/schema";
import { createApiToken } from "~/services/tokens.server";
import { loadSuite, suitePath } from "~/runs/suite";
import { PAYLOAD_FORMAT, type RunPayload } from "~/runs/payload";

const README = fs.readFileSync(path.join(ROOT, "README.md"), "utf8");
const DOC_URL = "http://127.0.0.1:3000";

/** The fenced ```sh blocks between `## API` and the next `## ` heading, in order. */
export function apiShellBlocks(markdown: string): string[] {
  const start = markdown.indexOf("\n## API");
  const end = markdown.indexOf("\n## ", start + 1);
  const section = markdown.slice(start, end === -1 ? undefined : end);
  return [...section.matchAll(/```sh\n([\s\S]*?)```/g)].map((m) => m[1]!);
}

/** Logical lines of a shell block: continuation lines joined, blank lines dropped. */
function logicalLines(block: string): string[] {
  return block
    .replace(/\\\n\s*/g, " ")
    .split("\n")
    .filter((l) => l.trim() !== "");
}

function missingTool(): string | null {
  for (const t of ["bash", "curl", "jq"]) if (spawnSync("sh", ["-c", `command -v ${t}`]).status !== 0) return t;
  return null;
}

/** fetch, retried once when a kept-alive connection was closed by the server meanwhile. */
async function fetch(url: string, init?: RequestInit): Promise<Response> {
  try {
    return await globalThis.fetch(url, init);
  } catch (err) {
    if ((err as { cause?: { code?: string } }).cause?.code !== "UND_ERR_SOCKET") throw err;
    return globalThis.fetch(url, init);
  }
}

let server: RunningServer;
let db: Db;
let token = "";
let work = "";
let repo = "";
let repoCommit = "";
const RUN_ID = crypto.randomUUID();
const COMMIT = "c0ffee".padEnd(40, "1");

function git(cwd: string, ...args: string[]): string {
  return execFileSync("git", args, { cwd, encoding: "utf8", env: { ...process.env, GIT_AUTHOR_NAME: "Arcwatch Test", GIT_AUTHOR_EMAIL: "test@example.com", GIT_COMMITTER_NAME: "Arcwatch Test", GIT_COMMITTER_EMAIL: "test@example.com" } }).trim();
}

function payload(id: string, commitHash: string, seconds: number): RunPayload {
  const suite = loadSuite(suitePath("quick", ROOT));
  return {
    format: PAYLOAD_FORMAT,
    run: runHeader(id, commitHash, "main", "README example run"),
    suite: { name: suite.definition.name, contentHash: suite.contentHash, definition: suite.definition, thresholds: null },
    problems: [],
    cases: [20, 40].map((intervals) =>
      pikaCase(intervals, {
        objective: 17.9, objectiveErrorAbs: 1e-3, objectiveErrorRel: 1e-4, finalTime: 17.9, finalTimeError: 1e-3, stateError: 1e-3, controlError: 1e-1, resimMiss: 1e-6,
        medianSeconds: seconds, meanSeconds: seconds, stddevSeconds: seconds / 100, minSeconds: seconds, samples: [seconds, seconds, seconds],
      }),
    ),
  };
}

beforeAll(async () => {
  const missing = missingTool();
  if (missing) throw new Error(`the README examples need ${missing} (install it: apt-get install -y ${missing})`);
  // the repository the server reads (branches, suites, commits): a small one of our own with a main branch
  repo = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-readme-repo-"));
  fs.cpSync(path.join(ROOT, "bench", "suites"), path.join(repo, "bench", "suites"), { recursive: true });
  git(repo, "init", "-q", "-b", "main");
  git(repo, "add", "-A");
  git(repo, "commit", "-q", "-m", "Suites");
  repoCommit = git(repo, "rev-parse", "HEAD");
  server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "0", ARCWATCH_REPO: repo } });
  db = openDatabase(server.dbFile);
  const engineer = db.select().from(users).where(eq(users.email, "engineer@arcwatch.test")).get()!;
  token = createApiToken(db, { name: "readme examples", role: "engineer", createdById: engineer.id }).token;
  // a stored run (and a regression against an earlier one) for the examples that read them
  const base = crypto.randomUUID();
  for (const [id, commit, s] of [[base, "b".repeat(40), 0.01], [RUN_ID, COMMIT, 0.02]] as const) {
    const r = await fetch(`${server.url}/api/runs`, { method: "POST", headers: { "content-type": "application/json", authorization: `Bearer ${token}` }, body: JSON.stringify(payload(id, commit, s)) });
    expect(r.status, await r.clone().text()).toBe(201);
  }
  if (!db.select().from(regressions).get()) {
    db.insert(regressions).values({ runId: RUN_ID, baselineRunId: base, caseKey: "pika-rover-dash/trapezoidal/20", kind: "speed", direction: "regression", metric: "median_seconds", before: 0.01, after: 0.02, ratio: 2, pValue: 0.001 }).run();
  }
  work = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-readme-"));
  fs.copyFileSync(path.join(ROOT, "problems/pika-rover-dash/problem.json"), path.join(work, "problem.json"));
  fs.copyFileSync(path.join(ROOT, "problems/pika-rover-dash/reference.csv"), path.join(work, "reference.csv"));
  fs.writeFileSync(path.join(work, ".curlrc"), 'write-out = "\\n@@%{http_code}"\n');
  fs.writeFileSync(path.join(work, "run.json"), JSON.stringify(payload(crypto.randomUUID(), "d".repeat(40), 0.01)));
});

afterAll(async () => {
  db?.$client.close();
  await server?.stop();
  for (const d of [work, repo]) if (d) fs.rmSync(d, { recursive: true, force: true });
});

describe("README.md API examples", () => {
  it("finds the examples", () => {
    const blocks = apiShellBlocks(README);
    expect(blocks.length).toBeGreaterThanOrEqual(4);
    expect(blocks.flatMap(logicalLines).filter((l) => l.startsWith("curl ")).length).toBeGreaterThanOrEqual(25);
  });

  it("every curl example answers as documented", { timeout: 180_000 }, () => {
    const caseId = db.select({ id: caseResults.id }).from(caseResults).where(eq(caseResults.runId, RUN_ID)).get()!.id;
    const fill = (line: string) =>
      line
        .replaceAll(DOC_URL, server.url)
        .replaceAll("<run-id>", RUN_ID)
        .replaceAll("<case-id>", String(caseId))
        .replaceAll("<commit>", COMMIT.slice(0, 10))
        .replaceAll("<sha>", repoCommit.slice(0, 12));
    const results: { line: string; status: number; expected: string; body: string }[] = [];
    for (const block of apiShellBlocks(README)) {
      // the block's own variable lines (B=..., H=...) run before each of its curl lines
      const setup: string[] = [];
      for (const raw of logicalLines(block)) {
        const line = fill(raw);
        if (/^TOKEN=/.test(line)) continue; // "paste the token here": the test's token is in the environment
        if (!line.startsWith("curl ")) {
          if (!line.trimStart().startsWith("#")) setup.push(line);
          continue;
        }
        const expected = /#\s*(\d{3})\s*$/.exec(line)?.[1] ?? "2xx";
        const script = `set -eu\n${setup.join("\n")}\n${line}\n`;
        const r = spawnSync("bash", ["-c", script], {
          cwd: work,
          encoding: "utf8",
          timeout: 60_000,
          // ~/.curlrc appends the status to lines that print none of their own
          env: { ...process.env, TOKEN: token, HOME: work, CURL_HOME: work },
        });
        const out = `${r.stdout}`;
        const m = /@@(\d{3})\s*$/.exec(out) ?? /(?:^|\n)(\d{3})\s*$/.exec(out);
        results.push({ line: raw, status: m ? Number(m[1]) : -1, expected, body: `${out.slice(0, 300)} ${r.stderr.slice(0, 300)}` });
      }
    }
    const wrong = results.filter((x) => (x.expected === "2xx" ? !(x.status >= 200 && x.status < 300) : String(x.status) !== x.expected));
    expect(wrong.map((w) => `${w.status} (expected ${w.expected}): ${w.line}\n   ${w.body}`)).toEqual([]);
    expect(results.length).toBeGreaterThanOrEqual(25);
    // the examples' side effects: files written, a problem added, jobs queued at the resolved commit
    for (const f of ["runs.csv", "cases.csv"]) expect(fs.readFileSync(path.join(work, f), "utf8").split("\n")[0]).toMatch(/,/);
    expect(fs.existsSync(path.join(work, "log.csv"))).toBe(true); // the uploaded case has no iteration log
    const jobs = (execFileSync("curl", ["-s", "-H", `Authorization: Bearer ${token}`, `${server.url}/api/jobs`], { encoding: "utf8" }));
    expect(JSON.parse(jobs).jobs.map((j: { payloadJson: { commit: string } }) => j.payloadJson.commit)).toContain(repoCommit);
  });
});

describe("POST /api/jobs refuses at once what cannot run", () => {
  const post = (body: unknown) => fetch(`${server.url}/api/jobs`, { method: "POST", headers: { "content-type": "application/json", authorization: `Bearer ${token}` }, body: JSON.stringify(body) });

  it("an unknown suite, commit or ref is a 400 naming the field; nothing is queued", async () => {
    const before = (await (await fetch(`${server.url}/api/jobs`, { headers: { authorization: `Bearer ${token}` } })).json()).jobs.length;
    const suite = await post({ kind: "bench", payload: { suite: "no-such-suite" } });
    expect(suite.status).toBe(400);
    const sb = await suite.json();
    expect(sb.fields["payload.suite"][0]).toMatch(/has no suite "no-such-suite" \(it has: full, quick\)/);
    const commit = await post({ kind: "bench", payload: { suite: "quick", commit: "deadbeef1234" } });
    expect(commit.status).toBe(400);
    expect((await commit.json()).fields["payload.commit"][0]).toMatch(/deadbeef1234 is not a commit/);
    const ref = await post({ kind: "bench", payload: { suite: "quick", ref: "no-such-branch" } });
    expect(ref.status).toBe(400);
    expect((await ref.json()).fields["payload.ref"][0]).toMatch(/no-such-branch/);
    const malformed = await post({ kind: "bench", payload: { suite: "Not A Suite!" } });
    expect(malformed.status).toBe(400);
    expect((await malformed.json()).fields["payload.suite"][0]).toMatch(/Suite names use/);
    const after = (await (await fetch(`${server.url}/api/jobs`, { headers: { authorization: `Bearer ${token}` } })).json()).jobs.length;
    expect(after).toBe(before);
    const ok = await post({ kind: "bench", payload: { suite: "full", ref: "main" } });
    expect(ok.status).toBe(201);
    expect((await ok.json()).job.payloadJson).toEqual({ suite: "full", ref: "main", commit: repoCommit });
  });

  it("a fix linked to a commit that is not in the repository is refused", async () => {
    const id = db.select({ id: regressions.id }).from(regressions).get()!.id;
    const triage = (fixingCommit: string) => fetch(`${server.url}/api/regressions/${id}`, { method: "POST", headers: { authorization: `Bearer ${token}` }, body: new URLSearchParams({ intent: "fixed", fixingCommit }) });
    const bad = await triage("deadbeef1234");
    expect(bad.status).toBe(400);
    expect((await bad.json()).errors.fixingCommit).toMatch(/No commit deadbeef1234 in the repository/);
    const good = await triage(repoCommit.slice(0, 9));
    expect(good.status).toBe(200);
    expect(db.select({ c: regressions.fixingCommit }).from(regressions).where(eq(regressions.id, id)).get()!.c).toBe(repoCommit);
  });
});
