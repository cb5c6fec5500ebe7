import { describe, expect, it } from "vitest";
import http from "node:http";
import type { AddressInfo } from "node:net";
import { eq } from "drizzle-orm";
import { caseResults, runs, timingSamples } from "~/db/schema";
import { runSuite } from "../../bench/runner/run-suite";
import { buildRunPayload, storeRunPayload } from "~/models/recording.server";
import { runPayloadSchema } from "~/runs/payload";
import { ingestUrl, uploadRun } from "../../bench/runner/upload";
import { REPO, SIM_EXECUTOR, tempDb, tempDir, writeSuite } from "./helpers";

describe("upload payload and client", () => {
  it("round-trips a run through JSON into another database, refuses duplicates and tampering, uploads with a token", async () => {
    const dir = tempDir("payload");
    const a = tempDb(dir, "a.db");
    const suite = writeSuite(dir, {
      name: "up",
      problems: ["pika-rover-dash"],
      schemes: ["euler", "lgr"],
      meshes: [{ intervals: 6 }],
      repeats: 3,
      warmup: 0,
      solver: { kind: "module", module: SIM_EXECUTOR, options: { work: 50 } },
    });
    const s = await runSuite({ suite, db: a, root: REPO, progress: null, alerts: false });
    const payload = JSON.parse(JSON.stringify(buildRunPayload(a, s.runId)));
    expect(runPayloadSchema.safeParse(payload).success).toBe(true);

    const b = tempDb(dir, "b.db");
    expect(storeRunPayload(b, payload).runId).toBe(s.runId);
    const ra = a.select().from(caseResults).where(eq(caseResults.runId, s.runId)).all();
    const rb = b.select().from(caseResults).where(eq(caseResults.runId, s.runId)).all();
    const strip = (r: (typeof ra)[number]) => ({ ...r, id: 0, createdAt: 0 });
    expect(rb.map(strip).sort((x, y) => x.caseKey.localeCompare(y.caseKey))).toEqual(ra.map(strip).sort((x, y) => x.caseKey.localeCompare(y.caseKey)));
    expect(b.select().from(timingSamples).all().map((t) => t.samplesJson.length)).toEqual([3, 3]);
    expect(b.select().from(runs).get()?.machineKey).toBe(s.machineKey);
    expect(() => storeRunPayload(b, payload)).toThrow(/already uploaded/);
    const tampered = structuredClone(payload);
    tampered.run.id = crypto.randomUUID();
    tampered.suite.definition.repeats = 99;
    expect(() => storeRunPayload(b, tampered)).toThrow(/does not match its definition/);
    expect(() => storeRunPayload(b, { ...payload, format: "other/1" })).toThrow(/invalid run payload: format/);

    // The client against a loopback server that checks the token and ingests.
    const c = tempDb(dir, "c.db");
    const server = http.createServer((req, res) => {
      let body = "";
      req.on("data", (d) => (body += d));
      req.on("end", () => {
        if (req.url !== "/api/runs" || req.headers.authorization !== "Bearer aw_test_token") {
          res.writeHead(401, { "content-type": "application/json" }).end(JSON.stringify({ error: "bad token" }));
          return;
        }
        try {
          const out = storeRunPayload(c, JSON.parse(body));
          res.writeHead(201, { "content-type": "application/json" }).end(JSON.stringify(out));
        } catch (err) {
          res.writeHead(400).end((err as Error).message);
        }
      });
    });
    await new Promise<void>((r) => server.listen(0, "127.0.0.1", () => r()));
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    expect(ingestUrl(base)).toBe(`${base}/api/runs`);
    await expect(uploadRun(a, s.runId, base, "wrong")).rejects.toThrow(/HTTP 401/);
    const up = await uploadRun(a, s.runId, base, "aw_test_token");
    expect(up.status).toBe(201);
    expect(up.body).toEqual({ runId: s.runId });
    expect(c.select().from(caseResults).all()).toHaveLength(2);
    await new Promise<void>((r) => server.close(() => r()));
    for (const d of [a, b, c]) d.$client.close();
  });
});
