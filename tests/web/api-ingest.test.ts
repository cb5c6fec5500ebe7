/**
 * The JSON API over loopback against the built server: tokens and roles are checked, an
 * uploaded run is validated, stored once however often it is posted, 50 concurrent uploads all
 * land, and tables export as CSV.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startTestServer, ROOT, type RunningServer } from "../helpers/server";
import { pikaCase, runHeader } from "../helpers/run-payload";
import { openDatabase, type Db } from "~/db/client.server";
import { caseResults, runs, users } from "~/db/schema";
import { createApiToken } from "~/services/tokens.server";
import { loadSuite, suitePath } from "~/runs/suite";
import { PAYLOAD_FORMAT, type RunPayload } from "~/runs/payload";
import { eq, sql } from "drizzle-orm";

let server: RunningServer;
let db: Db;
const tokens: Record<string, string> = {};

const suite = loadSuite(suitePath("quick", ROOT));

/** A valid arcwatch-run/1 payload with `n` cases of the quick suite's first problem. */
function payload(n = 3, id: string = crypto.randomUUID()): RunPayload {
  return {
    format: PAYLOAD_FORMAT,
    run: runHeader(id, "a".repeat(40), "ci-upload", "Upload test"),
    suite: { name: suite.definition.name, contentHash: suite.contentHash, definition: suite.definition, thresholds: null },
    problems: [],
    cases: Array.from({ length: n }, (_, i) => pikaCase(10 + i)),
  };
}

const post = (body: unknown, token?: string, extra: Record<string, string> = {}) =>
  fetch(`${server.url}/api/runs`, { method: "POST", headers: { "content-type": "application/json", ...(token ? { authorization: `Bearer ${token}` } : {}), ...extra }, body: typeof body === "string" ? body : JSON.stringify(body) });

const runCount = () => db.select({ n: sql<number>`count(*)` }).from(runs).get()!.n;

beforeAll(async () => {
  server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "0" } });
  db = openDatabase(server.dbFile);
  for (const role of ["viewer", "engineer"] as const) {
    const u = db.select().from(users).where(eq(users.email, `${role}@arcwatch.test`)).get()!;
    tokens[role] = createApiToken(db, { name: `${role} test token`, role, createdById: u.id }).token;
  }
});

afterAll(async () => {
  db?.$client.close();
  await server?.stop();
});

describe("ingestion: tokens and roles", () => {
  it("refuses a post without a token (401 before the body is read, with or without a same-origin header), with an unknown token (401) and with a viewer token (403)", async () => {
    // No token: the server's header check (scripts/body-limits.mjs) refuses an upload without
    // Authorization before reading its body, ahead of the same-origin guard.
    expect((await post(payload())).status).toBe(401);
    expect((await post(payload(), undefined, { origin: server.url })).status).toBe(401);
    expect((await post(payload(), "aw_not-a-real-token-000000000000000000000")).status).toBe(401);
    const viewer = await post(payload(), tokens.viewer);
    expect(viewer.status).toBe(403);
    expect(((await viewer.json()) as { error: string }).error).toMatch(/engineer/);
    expect(runCount()).toBe(0);
  });

  it("refuses a browser session (cookie) even for an engineer: ingestion takes a token", async () => {
    const signin = await fetch(`${server.url}/signin`, { method: "POST", redirect: "manual", headers: { "content-type": "application/x-www-form-urlencoded", origin: server.url }, body: new URLSearchParams({ email: "engineer@arcwatch.test", password: "engineer-demo-pass" }) });
    const cookie = signin.headers.get("set-cookie")!.split(";")[0]!;
    const r = await fetch(`${server.url}/api/ingest`, { method: "POST", headers: { "content-type": "application/json", cookie, origin: server.url }, body: JSON.stringify(payload()) });
    expect(r.status).toBe(401);
  });

  it("reads need a user or a token", async () => {
    expect((await fetch(`${server.url}/api/runs`)).status).toBe(401);
    expect((await fetch(`${server.url}/api/history?caseKey=x`)).status).toBe(401);
    expect((await fetch(`${server.url}/api/runs`, { headers: { authorization: "Bearer aw_wrong" } })).status).toBe(401);
    expect((await fetch(`${server.url}/api/runs`, { headers: { authorization: `Bearer ${tokens.viewer}` } })).status).toBe(200);
  });
});

describe("ingestion: validation and idempotence", () => {
  it("answers 400 with the failing paths for an invalid payload, and 413 above the size limit", async () => {
    const bad = payload();
    (bad.cases[0] as { intervals: unknown }).intervals = -3;
    const r = await post(bad, tokens.engineer);
    expect(r.status).toBe(400);
    const body = (await r.json()) as { issues: { path: string }[] };
    expect(body.issues.map((i) => i.path)).toContain("cases.0.intervals");
    expect((await post("{not json", tokens.engineer)).status).toBe(400);
    const huge = JSON.stringify({ format: PAYLOAD_FORMAT, pad: "x".repeat(33 * 1024 * 1024) });
    expect((await post(huge, tokens.engineer)).status).toBe(413);
    expect(runCount()).toBe(0);
  });

  it("refuses uploads that would poison history: future or inverted dates, negative times, duplicate case keys, foreign problem ids, deep nesting, a non-JSON body (4xx with a message, nothing stored)", async () => {
    const before = runCount();
    const paths = async (p: RunPayload) => {
      const r = await post(p, tokens.engineer);
      expect(r.status).toBe(400);
      return ((await r.json()) as { issues: { path: string; message: string }[] }).issues;
    };
    const future = payload();
    future.run.startedAt = new Date("2030-01-01T00:00:00Z").toISOString();
    future.run.finishedAt = new Date("2030-01-01T00:01:00Z").toISOString();
    expect((await paths(future)).map((i) => i.path)).toContain("run.startedAt");
    const inverted = payload();
    inverted.run.finishedAt = new Date("2026-11-01T10:00:30Z").toISOString(); // before startedAt (10:01)
    expect((await paths(inverted)).find((i) => i.path === "run.finishedAt")?.message).toMatch(/before startedAt/);
    const negative = payload();
    negative.cases[0]!.medianSeconds = -0.5;
    expect((await paths(negative)).map((i) => i.path)).toContain("cases.0.medianSeconds");
    const dup = payload(2);
    dup.cases[1]!.caseKey = dup.cases[0]!.caseKey;
    expect((await paths(dup)).length).toBeGreaterThan(0);
    // the problem-id rule of the library applies to uploaded rows too (issue: ids with markup)
    const foreign = payload(1);
    foreign.cases[0]!.problemId = "<b>pika";
    expect((await paths(foreign)).map((i) => i.path)).toContain("cases.0.problemId");
    const foreignProblem = payload(1);
    foreignProblem.problems = [{ id: "<b>x", title: "x", description: "", tags: [], versionHash: "v", json: "{}" }];
    expect((await paths(foreignProblem)).map((i) => i.path)).toContain("problems.0.id");
    const deep = `${"[".repeat(50_000)}${"]".repeat(50_000)}`;
    const rDeep = await post(deep, tokens.engineer);
    expect(rDeep.status).toBeGreaterThanOrEqual(400);
    expect(rDeep.status).toBeLessThan(500);
    const rText = await post(JSON.stringify(payload()), tokens.engineer, { "content-type": "text/plain" });
    expect(rText.status).toBeGreaterThanOrEqual(400);
    expect(rText.status).toBeLessThan(500);
    const rGet = await fetch(`${server.url}/api/problems/trial`, { headers: { authorization: `Bearer ${tokens.engineer}` } });
    expect(rGet.status).toBe(405);
    expect(runCount()).toBe(before);
  });

  it("stores the same run once however often it is posted", async () => {
    const p = payload(4);
    const first = await post(p, tokens.engineer);
    expect(first.status).toBe(201);
    const again = await post(p, tokens.engineer);
    expect(again.status).toBe(200);
    expect(((await again.json()) as { created: boolean }).created).toBe(false);
    // and concurrently
    const burst = await Promise.all(Array.from({ length: 5 }, () => post(p, tokens.engineer)));
    expect(burst.map((r) => r.status).every((s) => s === 200)).toBe(true);
    expect(db.select({ n: sql<number>`count(*)` }).from(runs).where(eq(runs.id, p.run.id)).get()!.n).toBe(1);
    expect(db.select({ n: sql<number>`count(*)` }).from(caseResults).where(eq(caseResults.runId, p.run.id)).get()!.n).toBe(4);
  });

  it("loses nothing when 50 different runs are posted at once", async () => {
    const before = runCount();
    const ps = Array.from({ length: 50 }, () => payload(5));
    const rs = await Promise.all(ps.map((p) => post(p, tokens.engineer)));
    expect(rs.map((r) => r.status)).toEqual(Array(50).fill(201));
    expect(runCount()).toBe(before + 50);
    const ids = ps.map((p) => p.run.id);
    const cases = db.select({ n: sql<number>`count(*)` }).from(caseResults).where(sql`${caseResults.runId} in (${sql.join(ids.map((i) => sql`${i}`), sql`, `)})`).get()!.n;
    expect(cases).toBe(250);
  });
});

describe("reading and exporting", () => {
  it("lists, pages and filters runs, and exports them as CSV", async () => {
    const auth = { authorization: `Bearer ${tokens.viewer}` };
    const list = (await (await fetch(`${server.url}/api/runs?pageSize=10&branch=ci-upload`, { headers: auth })).json()) as { total: number; rows: { id: string; cases: number }[]; pages: number };
    expect(list.total).toBe(51);
    expect(list.rows).toHaveLength(10);
    expect(list.pages).toBe(6);
    const csv = await fetch(`${server.url}/api/runs?pageSize=500&format=csv`, { headers: auth });
    expect(csv.headers.get("content-type")).toMatch(/text\/csv/);
    const lines = (await csv.text()).trim().split("\r\n");
    expect(lines[0]!.split(",").slice(0, 3)).toEqual(["id", "commitHash", "commitSubject"]);
    expect(lines).toHaveLength(52);
    const one = (await (await fetch(`${server.url}/api/runs/${list.rows[0]!.id}`, { headers: auth })).json()) as { cases: { id: number }[] };
    expect(one.cases).toHaveLength(list.rows[0]!.cases);
    const c = await fetch(`${server.url}/api/cases/${one.cases[0]!.id}`, { headers: auth });
    expect(c.status).toBe(200);
    const hist = (await (await fetch(`${server.url}/api/history?caseKey=${encodeURIComponent("pika-rover-dash/trapezoidal/10")}&branch=ci-upload&metric=medianSeconds`, { headers: auth })).json()) as { points: unknown[] };
    expect(hist.points.length).toBe(51);
    expect((await fetch(`${server.url}/api/runs/no-such-run`, { headers: auth })).status).toBe(404);
  });

  it("refuses a viewer's job start (403) and cancel (403)", async () => {
    const auth = { authorization: `Bearer ${tokens.viewer}`, "content-type": "application/json" };
    expect((await fetch(`${server.url}/api/jobs`, { method: "POST", headers: auth, body: JSON.stringify({ kind: "bench", payload: { suite: "quick" } }) })).status).toBe(403);
    expect((await fetch(`${server.url}/api/jobs/1`, { method: "POST", headers: auth, body: JSON.stringify({ intent: "cancel" }) })).status).toBe(403);
  });
});

