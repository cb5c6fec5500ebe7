/**
 * The solve command (bench/solve.ts) end to end, as `npm run --silent solve -- ...` runs it
 * (tsx bench/solve.ts): --json prints exactly one JSON object with the documented fields and exits 0
 * on an optimal solve; an unknown option or a missing problem exits 2 with the validation error on
 * stderr; a solver that stops at its iteration limit exits 1.
 */
import { describe, expect, it } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, mkdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";

const run = (...args: string[]) => spawnSync(process.execPath, ["--import", "tsx", "bench/solve.ts", ...args], { encoding: "utf8", timeout: 120_000 });

describe("solve command", () => {
  it("--json: one object on stdout, iteration log on stderr, exit 0", () => {
    const r = run("dunlin-rail-shuttle", "--scheme", "hermite-simpson", "--intervals", "6", "--json");
    expect(r.status).toBe(0);
    const lines = r.stdout.trim().split("\n");
    expect(lines.length).toBe(1);
    const rep = JSON.parse(lines[0]);
    for (const k of ["problemId", "versionHash", "scheme", "intervals", "degree", "status", "objective", "finalTime", "iterations", "solveSeconds", "resim", "errors", "trajectory"]) expect(rep).toHaveProperty(k);
    expect(rep.problemId).toBe("dunlin-rail-shuttle");
    expect(rep.status).toBe("optimal");
    // J = 6D²/T³ = 3.75 (problem description); Hermite–Simpson is exact for this cubic optimum
    expect(Math.abs(rep.objective - 3.75)).toBeLessThan(1e-8);
    expect(rep.trajectory.states.x.length).toBe(13);
    expect(rep.errors.stateMax).toBeLessThan(1e-8);
    expect(r.stderr).toMatch(/step\s+│\s+objective\s+primal inf\./);
  });

  it("bad options and missing problems exit 2 with the reason", () => {
    const a = run("dunlin-rail-shuttle", "--scheme", "simpson");
    expect(a.status).toBe(2);
    expect(a.stderr).toMatch(/unknown scheme "simpson"/);
    const b = run("no-such-problem", "--scheme", "lgr");
    expect(b.status).toBe(2);
    expect(b.stderr).toMatch(/no problem\.json/);
  });

  it("a bad problem file prints its validation errors and exits 2", () => {
    const dir = mkdtempSync(path.join(tmpdir(), "arcwatch-cli-"));
    mkdirSync(path.join(dir, "broken"));
    writeFileSync(path.join(dir, "broken", "problem.json"), JSON.stringify({ format: "arcwatch-problem/1", title: "x" }));
    const r = run(path.join(dir, "broken"), "--scheme", "lgr");
    rmSync(dir, { recursive: true, force: true });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/problem\.json/);
  });

  it("a solver stopped by its iteration limit exits 1", () => {
    const r = run("kestrel-2-ascent", "--scheme", "trapezoidal", "--intervals", "20", "--max-iter", "2", "--quiet");
    expect(r.status).toBe(1);
    expect(r.stdout).toMatch(/iteration_limit/);
  });
});
