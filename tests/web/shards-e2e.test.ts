/**
 * Sharded runs end to end against the built server on loopback: 4 shard processes of one small
 * suite run and upload concurrently with an upload-only token (shard 1's upload is posted twice,
 * shard 4 starts only after the others are in); the server holds one run with every case once,
 * its regression check ran once (exactly one upload completed the run), and its cases and
 * accuracy numbers equal those of an unsharded run of the same suite on the same commit.
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, ROOT, type RunningServer } from "../helpers/server";
import { openDatabase, type Db } from "~/db/client.server";
import { caseResults, runShards, runs, users } from "~/db/schema";
import { createApiToken } from "~/services/tokens.server";
import { buildRunPayload } from "~/models/recording.server";

let server: RunningServer;
let db: Db;
let token = "";
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-shards-"));
const suiteFile = path.join(dir, "tiny.json");

interface BenchOut {
  runId: string;
  exitCode: number;
  shard: { index: number; count: number } | null;
  uploaded: { status: number; body: { runId: string; created: boolean; shard?: { in: number; count: number; completed: boolean } } } | null;
}

function bench(args: string[], dbFile: string): Promise<BenchOut> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--import", "tsx", "bench/run.ts", "--suite", suiteFile, "--db", dbFile, "--json", "--no-alerts", ...args], { cwd: ROOT, stdio: ["ignore", "pipe", "pipe"] });
    let out = "";
    let err = "";
    child.stdout.on("data", (c) => (out += c));
    child.stderr.on("data", (c) => (err += c));
    child.on("exit", (code) => {
      try {
        resolve(JSON.parse(out) as BenchOut);
      } catch {
        reject(new Error(`bench exit ${code}:\n${out}\n${err}`));
      }
    });
  });
}

beforeAll(async () => {
  fs.writeFileSync(
    suiteFile,
    JSON.stringify({
      format: "arcwatch-suite/1",
      name: "tiny",
      problems: ["pika-rover-dash"],
      schemes: ["trapezoidal", "euler", "hermite-simpson"],
      meshes: [{ intervals: 10 }, { intervals: 12 }],
      repeats: 1,
      warmup: 0,
      timeBudgetSeconds: 60,
      jobs: 1,
    }),
  );
  server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "0" } });
  db = openDatabase(server.dbFile);
  const admin = db.select().from(users).where(eq(users.email, "admin@arcwatch.test")).get()!;
  token = createApiToken(db, { name: "runners", role: "engineer", scope: "upload", createdById: admin.id }).token;
}, 240_000);

afterAll(async () => {
  db?.$client.close();
  await server?.stop();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("4 shards of one suite", () => {
  it("become one run with every case once, checked once, equal to an unsharded run", async () => {
    const up = ["--upload", server.url, "--token", token, "--pipeline", "e2e-1"];
    const dbOf = (k: number | string) => path.join(dir, `runner-${k}.db`);
    const [s1, s2, s3, whole] = await Promise.all([
      bench(["--shard", "1/4", ...up], dbOf(1)),
      bench(["--shard", "2/4", ...up], dbOf(2)),
      bench(["--shard", "3/4", ...up], dbOf(3)),
      bench(["--upload", server.url, "--token", token], dbOf("whole")),
    ]);
    for (const s of [s1, s2, s3]) expect(s.uploaded?.status, JSON.stringify(s)).toBe(201);
    const runId = s1.uploaded!.body.runId;
    expect(new Set([s1, s2, s3].map((s) => s.uploaded!.body.runId))).toEqual(new Set([runId]));
    expect(db.select().from(runs).where(eq(runs.id, runId)).get()!.status).toBe("running");
    // The overview shows the run waiting for its shards (3 of 4 in) before the late one comes.
    const page = await fetch(`${server.url}/runs/${runId}`, { headers: { authorization: `Bearer ${createApiToken(db, { name: "reader", role: "viewer", createdById: null }).token}` } });
    expect((await page.text()).replace(/<!-- -->/g, "")).toContain("3 of 4 shards in");

    // Shard 1 again (a retried CI job): nothing changes.
    const again = buildRunPayload(openDatabase(dbOf(1)), s1.runId);
    again.run.shard = { index: 1, count: 4, pipeline: "e2e-1" };
    const re = await fetch(`${server.url}/api/runs`, { method: "POST", headers: { "content-type": "application/json", authorization: `Bearer ${token}` }, body: JSON.stringify(again) });
    expect(re.status).toBe(200);
    expect(((await re.json()) as { created: boolean }).created).toBe(false);

    // The late shard completes the run.
    const s4 = await bench(["--shard", "4/4", ...up], dbOf(4));
    expect(s4.uploaded!.body.shard).toMatchObject({ in: 4, count: 4, completed: true });
    const completions = [s1, s2, s3, s4].filter((s) => s.uploaded!.body.shard?.completed);
    expect(completions, "exactly one upload completed the run (and ran its regression check)").toHaveLength(1);

    const merged = db.select().from(runs).where(eq(runs.id, runId)).get()!;
    expect(merged.status).toBe("complete");
    expect(merged.timingsCompared).toBe(true);
    expect(db.select().from(runShards).where(eq(runShards.runId, runId)).all()).toHaveLength(4);
    const mergedCases = db.select().from(caseResults).where(eq(caseResults.runId, runId)).all();
    const wholeCases = db.select().from(caseResults).where(eq(caseResults.runId, whole.uploaded!.body.runId)).all();
    expect(mergedCases).toHaveLength(6);
    expect(new Set(mergedCases.map((c) => c.caseKey)).size).toBe(6);
    const numbers = (cs: typeof mergedCases) =>
      Object.fromEntries(cs.map((c) => [c.caseKey, { status: c.status, objective: c.objective, objectiveErrorRel: c.objectiveErrorRel, stateError: c.stateError, controlError: c.controlError, iterations: c.iterations }]));
    expect(numbers(mergedCases)).toEqual(numbers(wholeCases));
  }, 600_000);
});
