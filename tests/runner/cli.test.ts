import { describe, expect, it } from "vitest";
import { spawnSync } from "node:child_process";
import path from "node:path";
import { REPO, SIM_EXECUTOR, tempDir, writeSuite } from "./helpers";

const run = (args: string[]) => spawnSync(process.execPath, ["--import", "tsx", "bench/run.ts", ...args], { cwd: REPO, encoding: "utf8", timeout: 120_000 });

describe("bench command line", () => {
  it("usage errors exit 2 with a message", () => {
    const r = run(["--suite"]);
    expect(r.status).toBe(2);
    const m = run([]);
    expect(m.status).toBe(2);
    expect(m.stderr).toMatch(/--suite is required/);
    expect(run(["--suite", "quick", "--upload", "http://127.0.0.1:1"]).stderr).toMatch(/--upload needs --token/);
    const bad = run(["--suite", "no-such-suite", "--db", path.join(tempDir("cli0"), "x.db")]);
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(/Suite file not found: .*no-such-suite\.json/);
  });

  it("prints the summary table and a baseline comparison on the second run", () => {
    const dir = tempDir("cli");
    const db = path.join(dir, "cli.db");
    const suite = writeSuite(dir, {
      name: "cli",
      problems: ["pika-rover-dash"],
      schemes: ["euler", "lgr"],
      meshes: [{ intervals: 6 }],
      repeats: 3,
      warmup: 0,
      solver: { kind: "module", module: SIM_EXECUTOR, options: { work: 20 } },
    });
    const first = run(["--suite", suite, "--db", db, "--no-alerts"]);
    expect(first.status, first.stderr).toBe(0);
    expect(first.stdout).toMatch(/case\s+status\s+objective\s+obj err\s+state err\s+iter\s+median/);
    expect(first.stdout).toMatch(/pika-rover-dash\/lgr\/6x4\s+optimal/);
    expect(first.stdout).toMatch(/2\/2 cases: 2 solved, 0 failed, 0 timeouts, 0 errors/);
    expect(first.stdout).toMatch(/no baseline run found/);
    expect(first.stderr).toMatch(/\] 2\/2 .*pika-rover-dash\/(euler|lgr)/);
    const second = run(["--suite", suite, "--db", db, "--no-alerts"]);
    expect(second.stdout).toMatch(/baseline: run [0-9a-f-]{36}/);
  });
});
