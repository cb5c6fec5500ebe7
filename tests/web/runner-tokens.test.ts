/**
 * Upload-only ("runner") tokens over loopback against the built server: an admin creates one on
 * the tokens page; it uploads runs (of its suite only, when limited), reads back what it
 * uploaded, and every other page and API refuses it: it cannot read pages or other runs, queue
 * jobs, triage regressions or add problems.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, ROOT, type RunningServer } from "../helpers/server";
import { pikaCase } from "../helpers/run-payload";
import { openDatabase, type Db } from "~/db/client.server";
import { apiTokens, runs, users } from "~/db/schema";
import { createApiToken } from "~/services/tokens.server";
import { canonicalJson, loadSuite, sha256, suitePath } from "~/runs/suite";
import { PAYLOAD_FORMAT, type RunPayload } from "~/runs/payload";

let server: RunningServer;
let db: Db;
let adminCookie = "";
let runnerToken = "";
let fullToken = "";

const quick = loadSuite(suitePath("quick", ROOT));

function payload(suiteName = "quick"): RunPayload {
  const definition = { ...quick.definition, name: suiteName };
  return {
    format: PAYLOAD_FORMAT,
    run: {
      id: crypto.randomUUID(),
      commitHash: "b".repeat(40),
      branch: "ci-runner",
      dirty: false,
      commitSubject: "Runner token test",
      commitAuthor: "CI <ci@arcwatch.test>",
      commitDate: new Date(Date.now() - 3_600_000).toISOString(),
      machine: { cpuModel: "Test CPU", cores: 2 },
      machineKey: "test-machine",
      calibrationSeconds: 0.01,
      startedAt: new Date(Date.now() - 120_000).toISOString(),
      finishedAt: new Date(Date.now() - 60_000).toISOString(),
      status: "complete",
      solverLabel: null,
      externalRepo: null,
    },
    suite: { name: suiteName, contentHash: sha256(canonicalJson(definition)), definition, thresholds: null },
    problems: [],
    cases: [pikaCase(10)],
  };
}

const auth = (token: string) => ({ authorization: `Bearer ${token}` });
const postRun = (body: unknown, token: string) =>
  fetch(`${server.url}/api/runs`, { method: "POST", headers: { "content-type": "application/json", ...auth(token) }, body: JSON.stringify(body) });

beforeAll(async () => {
  server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "0" } });
  db = openDatabase(server.dbFile);
  const signin = await fetch(`${server.url}/signin`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", origin: server.url },
    body: new URLSearchParams({ email: "admin@arcwatch.test", password: "admin-demo-pass" }),
  });
  adminCookie = signin.headers.get("set-cookie")!.split(";")[0]!;
  const engineer = db.select().from(users).where(eq(users.email, "engineer@arcwatch.test")).get()!;
  fullToken = createApiToken(db, { name: "engineer full", role: "engineer", createdById: engineer.id }).token;
});

afterAll(async () => {
  db?.$client.close();
  await server?.stop();
});

describe("creating a runner token", () => {
  it("an admin creates an upload-only token limited to one suite on the tokens page; the plain token is shown once", async () => {
    const r = await fetch(`${server.url}/admin/tokens`, {
      method: "POST",
      redirect: "manual",
      headers: { "content-type": "application/x-www-form-urlencoded", origin: server.url, cookie: adminCookie },
      body: new URLSearchParams({ intent: "create", name: "nightly runners", role: "engineer", scope: "upload", suite: "quick" }),
    });
    expect(r.status).toBe(200);
    const html = await r.text();
    const m = /data-token="?[^>]*>(aw_[A-Za-z0-9_-]{43})</.exec(html);
    expect(m, "the new token is on the page").not.toBeNull();
    runnerToken = m![1]!;
    const row = db.select().from(apiTokens).where(eq(apiTokens.name, "nightly runners")).get()!;
    expect(row.scope).toBe("upload");
    expect(row.suiteName).toBe("quick");
  });

  it("refuses a suite limit on a full token, at the field", async () => {
    const r = await fetch(`${server.url}/admin/tokens`, {
      method: "POST",
      headers: { "content-type": "application/x-www-form-urlencoded", origin: server.url, cookie: adminCookie },
      body: new URLSearchParams({ intent: "create", name: "odd", role: "engineer", scope: "full", suite: "quick" }),
    });
    expect(r.status).toBe(400);
    expect(await r.text()).toContain("Only an upload token can be limited to one suite.");
  });
});

describe("what a runner token may do", () => {
  let uploadedId = "";

  it("uploads a run of its suite and reads it back", async () => {
    const p = payload();
    const r = await postRun(p, runnerToken);
    expect(r.status).toBe(201);
    uploadedId = ((await r.json()) as { runId: string }).runId;
    const row = db.select().from(runs).where(eq(runs.id, uploadedId)).get()!;
    expect(row.uploadedByTokenId).toBe(db.select().from(apiTokens).where(eq(apiTokens.name, "nightly runners")).get()!.id);
    const back = await fetch(`${server.url}/api/runs/${uploadedId}`, { headers: auth(runnerToken) });
    expect(back.status).toBe(200);
    expect(((await back.json()) as { run: { id: string } }).run.id).toBe(uploadedId);
  });

  it("refuses a run of another suite with a message naming both", async () => {
    const r = await postRun(payload("other-suite"), runnerToken);
    expect(r.status).toBe(403);
    expect(((await r.json()) as { error: string }).error).toBe('This token may only upload runs of the suite "quick", not "other-suite".');
  });

  it("cannot read another run (404, as if absent), while a full token can", async () => {
    const other = await postRun(payload(), fullToken);
    expect(other.status).toBe(201);
    const otherId = ((await other.json()) as { runId: string }).runId;
    expect((await fetch(`${server.url}/api/runs/${otherId}`, { headers: auth(runnerToken) })).status).toBe(404);
    expect((await fetch(`${server.url}/api/runs/${otherId}`, { headers: auth(fullToken) })).status).toBe(200);
  });

  it("cannot read pages or the API's lists", async () => {
    for (const path of ["/", "/runs", `/runs/${uploadedId}`, "/problems", "/regressions", "/api/runs", "/api/problems", "/api/regressions", "/api/me", "/api/jobs"]) {
      const r = await fetch(`${server.url}${path}`, { headers: auth(runnerToken), redirect: "manual" });
      expect(r.status, path).toBe(403);
    }
    // The same paths answer a full token (the refusal is the scope, not the paths).
    expect((await fetch(`${server.url}/api/runs`, { headers: auth(fullToken) })).status).toBe(200);
  });

  it("cannot queue jobs, triage regressions or add problems", async () => {
    const job = await fetch(`${server.url}/api/jobs`, { method: "POST", headers: { "content-type": "application/json", ...auth(runnerToken) }, body: JSON.stringify({ suite: "quick", ref: "HEAD" }) });
    expect(job.status).toBe(403);
    expect(((await job.json()) as { error: string }).error).toMatch(/may only upload runs/);
    const triage = await fetch(`${server.url}/api/regressions/1`, { method: "POST", headers: { "content-type": "application/json", ...auth(runnerToken) }, body: JSON.stringify({ intent: "acknowledge" }) });
    expect(triage.status).toBe(403);
    const form = new FormData();
    form.set("id", "runner-made");
    form.set("problem", new Blob(["{}"], { type: "application/json" }), "problem.json");
    const problem = await fetch(`${server.url}/api/problems`, { method: "POST", headers: auth(runnerToken), body: form });
    expect(problem.status).toBe(403);
    const comment = await fetch(`${server.url}/api/regressions/1`, { method: "POST", headers: { "content-type": "application/json", ...auth(runnerToken) }, body: JSON.stringify({ intent: "comment", body: "from a runner" }) });
    expect(comment.status).toBe(403);
  });

  it("stops uploading once revoked", async () => {
    db.update(apiTokens).set({ revokedAt: new Date() }).where(eq(apiTokens.name, "nightly runners")).run();
    expect((await postRun(payload(), runnerToken)).status).toBe(401);
  });
});
