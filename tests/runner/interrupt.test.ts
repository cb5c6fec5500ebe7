import { describe, expect, it } from "vitest";
import { spawn } from "node:child_process";
import path from "node:path";
import Database from "better-sqlite3";
import { REPO, SIM_EXECUTOR, tempDir, writeSuite } from "./helpers";

describe("interrupting a run", () => {
  it("SIGTERM midway: exit 130, database intact, finished cases kept, run marked interrupted", async () => {
    const dir = tempDir("interrupt");
    const dbFile = path.join(dir, "bench.db");
    const suite = writeSuite(dir, {
      name: "slow",
      problems: ["pika-rover-dash", "kestrel-2-ascent"],
      schemes: ["euler", "trapezoidal", "hermite-simpson", "rk4-shooting"],
      meshes: [{ intervals: 6 }],
      repeats: 2,
      warmup: 0,
      jobs: 1,
      solver: { kind: "module", module: SIM_EXECUTOR, options: { work: 10, sleepMs: 250 } },
    });
    const child = spawn(process.execPath, ["--import", "tsx", "bench/run.ts", "--suite", suite, "--db", dbFile, "--no-alerts"], { cwd: REPO, stdio: ["ignore", "pipe", "pipe"] });
    let stderr = "";
    child.stderr.on("data", (c) => (stderr += c));
    const exited = new Promise<number | null>((r) => child.on("exit", (code) => r(code)));
    // Wait until at least two cases are committed, then stop the run.
    const t0 = Date.now();
    let seen = 0;
    while (Date.now() - t0 < 60_000) {
      await new Promise((r) => setTimeout(r, 150));
      try {
        const probe = new Database(dbFile, { readonly: true, fileMustExist: true });
        try {
          seen = (probe.prepare("select count(*) as n from case_results").get() as { n: number }).n;
        } finally {
          probe.close();
        }
      } catch {
        /* not created yet */
      }
      if (seen >= 2) break;
    }
    expect(seen).toBeGreaterThanOrEqual(2);
    child.kill("SIGTERM");
    const code = await exited;
    expect(code, stderr).toBe(130);
    const db = new Database(dbFile);
    expect(db.pragma("integrity_check", { simple: true })).toBe("ok");
    expect(db.pragma("foreign_key_check")).toEqual([]);
    const run = db.prepare("select status, finished_at from runs").get() as { status: string; finished_at: number | null };
    expect(run.status).toBe("interrupted");
    expect(run.finished_at).not.toBeNull();
    const n = (db.prepare("select count(*) as n from case_results").get() as { n: number }).n;
    expect(n).toBeGreaterThanOrEqual(2);
    expect(n).toBeLessThan(8);
    const samples = (db.prepare("select count(*) as n from timing_samples").get() as { n: number }).n;
    expect(samples).toBe(n);
    expect(db.prepare("select count(*) as n from regressions").get()).toEqual({ n: 0 });
    db.close();
    expect(stderr).toMatch(/SIGTERM: stopping/);
  });
});
