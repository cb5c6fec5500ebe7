import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { caseResults, runs, timingSamples } from "~/db/schema";
import { runSuite } from "../../bench/runner/run-suite";
import { REPO, SIM_EXECUTOR, tempDb, tempDir, writeSuite } from "./helpers";

describe("runSuite with worker threads (simulated executor)", () => {
  it("records every case, stops an overrun as a timeout, survives a crashing case", async () => {
    const dir = tempDir("runner");
    const db = tempDb(dir);
    const suite = writeSuite(dir, {
      name: "sim",
      problems: ["kestrel-2-ascent", "pika-rover-dash"],
      schemes: ["trapezoidal", "hermite-simpson"],
      meshes: [{ intervals: 8 }],
      repeats: 4,
      warmup: 1,
      timeBudgetSeconds: 3,
      jobs: 2,
      solver: {
        kind: "module",
        module: SIM_EXECUTOR,
        options: { work: 500, hang: ["pika-rover-dash/trapezoidal/8"], crash: ["pika-rover-dash/hermite-simpson/8"] },
      },
    });
    const t0 = Date.now();
    const s = await runSuite({ suite, db, root: REPO, progress: null, alerts: false });
    expect(Date.now() - t0).toBeLessThan(30_000);
    expect(s.status).toBe("complete");
    expect(s.exitCode).toBe(0);
    const byKey = new Map(s.outcomes.map((o) => [o.spec.key, o]));
    expect(byKey.get("pika-rover-dash/trapezoidal/8")?.status).toBe("timeout");
    expect(byKey.get("pika-rover-dash/hermite-simpson/8")?.status).toBe("error");
    expect(byKey.get("pika-rover-dash/hermite-simpson/8")?.message).toMatch(/simulated crash/);
    const ok = byKey.get("kestrel-2-ascent/trapezoidal/8")!;
    expect(ok.status).toBe("optimal");
    expect(ok.samples).toHaveLength(4);

    const run = db.select().from(runs).where(eq(runs.id, s.runId)).get()!;
    expect(run.status).toBe("complete");
    expect(run.calibrationSeconds).toBeGreaterThan(0);
    expect((run.machineJson as { calibration: { after: number } }).calibration.after).toBeGreaterThan(0);
    expect(run.machineKey).toMatch(/^[0-9a-f]{64}$/);
    const rows = db.select().from(caseResults).where(eq(caseResults.runId, s.runId)).all();
    expect(rows).toHaveLength(4);
    const okRow = rows.find((r) => r.caseKey === "kestrel-2-ascent/trapezoidal/8")!;
    expect(okRow.sampleCount).toBe(4);
    expect(okRow.objectiveErrorRel).toBeCloseTo(1 / 64, 12);
    expect(okRow.medianSeconds).toBeGreaterThan(0);
    const samples = db.select().from(timingSamples).where(eq(timingSamples.caseResultId, okRow.id)).get()!;
    expect(samples.samplesJson).toHaveLength(4);
    expect(rows.find((r) => r.caseKey === "pika-rover-dash/trapezoidal/8")!.message).toMatch(/time budget of 3 s/);
    db.$client.close();
  });
});
