import { describe, expect, it } from "vitest";
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { eq } from "drizzle-orm";
import { caseResults, runs } from "~/db/schema";
import { runSuite } from "../../bench/runner/run-suite";
import { REPO, tempDb, tempDir, writeSuite } from "./helpers";

const gitEnv = { ...process.env, GIT_AUTHOR_NAME: "Solver Team", GIT_AUTHOR_EMAIL: "solver@example.com", GIT_COMMITTER_NAME: "Solver Team", GIT_COMMITTER_EMAIL: "solver@example.com" };

describe("external solver protocol (arcwatch-solver/1) with the Python example adapter", () => {
  it("records the run per commit of the solver's own repository, with errors computed by Arcwatch", async () => {
    const dir = tempDir("external");
    const solverRepo = path.join(dir, "solver-repo");
    fs.mkdirSync(solverRepo);
    fs.copyFileSync(path.join(REPO, "bench/external/example_adapter.py"), path.join(solverRepo, "example_adapter.py"));
    execFileSync("git", ["init", "-q", "-b", "main"], { cwd: solverRepo });
    execFileSync("git", ["add", "-A"], { cwd: solverRepo });
    execFileSync("git", ["commit", "-q", "-m", "Bang-bang shooting adapter"], { cwd: solverRepo, env: gitEnv });
    const head = execFileSync("git", ["rev-parse", "HEAD"], { cwd: solverRepo, encoding: "utf8" }).trim();
    const suite = writeSuite(dir, {
      name: "ext",
      problems: ["pika-rover-dash", "kestrel-2-ascent"],
      schemes: ["rk4-shooting"],
      meshes: [{ intervals: 20 }],
      repeats: 3,
      warmup: 0,
      timeBudgetSeconds: 60,
      solver: { kind: "external", label: "python bang-bang shooting", command: ["python3", "example_adapter.py"], repository: "./solver-repo" },
    });
    const db = tempDb(dir);
    const s = await runSuite({ suite, db, root: REPO, progress: null, alerts: false });
    expect(s.status).toBe("complete");
    expect(s.commit.commitHash).toBe(head);
    expect(s.commit.subject).toBe("Bang-bang shooting adapter");
    const run = db.select().from(runs).where(eq(runs.id, s.runId)).get()!;
    expect(run.externalRepo).toBe(solverRepo);
    expect(run.solverLabel).toBe("python bang-bang shooting");
    const rows = db.select().from(caseResults).where(eq(caseResults.runId, s.runId)).all();
    const pika = rows.find((r) => r.problemId === "pika-rover-dash")!;
    expect(pika.status, pika.message ?? "").toBe("optimal");
    // Analytic t_f = 2√(D/umax) = 17.88854381999832 (problem file, reference.objective); RK4 is exact
    // for this polynomial dynamics, so only the Newton tolerance (1e-10 on the final state) remains.
    expect(pika.objectiveErrorRel).toBeLessThan(1e-9);
    expect(pika.finalTimeError).toBeLessThan(1e-8);
    // State error: the reference CSV (201 points, h_ref = 0.0894 s) is linearly interpolated at the
    // answer's grid; for x(t) with |x''| = umax = 0.5 that costs ≤ h_ref²/8 · 0.5 / 40 (scale) = 1.2e-5.
    expect(pika.stateError).toBeLessThan(2e-5);
    expect(pika.sampleCount).toBe(3);
    expect(pika.iterations).toBeGreaterThan(0);
    const kestrel = rows.find((r) => r.problemId === "kestrel-2-ascent")!;
    expect(kestrel.status).toBe("unsupported");
    expect(kestrel.message).toMatch(/minimum-time/);
    db.$client.close();
  });
});
