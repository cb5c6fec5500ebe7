/**
 * The built command line (scripts/arcwatch.mjs → dist/cli, built by scripts/build-cli.mjs; the test
 * setup builds it first): the command list, usage errors, a solve through the bundle that
 * matches the same solve run from the TypeScript sources exactly, and the staleness check that
 * makes the launcher rebuild after a source changes.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { cliState } from "../../scripts/build-cli.mjs";

const REPO = path.resolve(__dirname, "../..");
const arcwatch = (...args: string[]) => spawnSync(process.execPath, [path.join(REPO, "scripts/arcwatch.mjs"), ...args], { cwd: REPO, encoding: "utf8", timeout: 120_000 });

describe("arcwatch command line (built)", () => {
  it("lists its commands with --help and exits 0; no or an unknown command exits 2", () => {
    const help = arcwatch("--help");
    expect(help.status).toBe(0);
    for (const c of ["solve", "bench", "refine"]) expect(help.stdout).toMatch(new RegExp(`^  ${c} `, "m"));
    expect(help.stderr).not.toMatch(/building/); // the setup built it: no rebuild here
    const none = arcwatch();
    expect(none.status).toBe(2);
    expect(none.stderr).toMatch(/a command is required/);
    const bad = arcwatch("frobnicate");
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/unknown command "frobnicate" \(known: solve, bench, refine\)/);
  });

  it("bench --help prints the usage without opening a database", () => {
    const cwd = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-cli-"));
    const r = spawnSync(process.execPath, [path.join(REPO, "scripts/arcwatch.mjs"), "bench", "--help"], { cwd, encoding: "utf8", timeout: 60_000 });
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/--suite <name\|file>/);
    expect(fs.existsSync(path.join(cwd, "data"))).toBe(false);
  });

  it("bench --ab --groups names the group and field of a bad entry, exits 2 before any checkout", () => {
    const cwd = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-cli-"));
    try {
      const run = (groups: string) => spawnSync(process.execPath, [path.join(REPO, "scripts/arcwatch.mjs"), "bench", "--suite", "quick", "--ab", "aaaaaaa..bbbbbbb", "--groups", groups], { cwd, encoding: "utf8", timeout: 60_000 });
      const floor = run('[{"cases":["pika-rover-dash/euler/20"],"clearBelow":0.9}]');
      expect(floor.status).toBe(2);
      expect(floor.stderr).toMatch(/--groups: 0\.clearBelow: /);
      const notJson = run("[{cases:");
      expect(notJson.status).toBe(2);
      expect(notJson.stderr).toMatch(/--groups takes JSON/);
      expect(fs.existsSync(path.join(cwd, "data"))).toBe(false);
    } finally {
      fs.rmSync(cwd, { recursive: true, force: true });
    }
  });

  it("a solve through the bundle gives the same report as the TypeScript sources", () => {
    const args = ["pika-rover-dash", "--scheme", "trapezoidal", "--intervals", "20", "--json", "--quiet"];
    const built = arcwatch("solve", ...args);
    expect(built.status, built.stderr).toBe(0);
    const source = spawnSync(process.execPath, ["--import", "tsx", "bench/solve.ts", ...args], { cwd: REPO, encoding: "utf8", timeout: 120_000 });
    expect(source.status, source.stderr).toBe(0);
    const a = JSON.parse(built.stdout);
    const b = JSON.parse(source.stdout);
    expect(a.status).toBe("optimal");
    // same code, same arithmetic: identical iterates, not merely close ones
    for (const k of ["status", "iterations", "objective", "finalTime", "constraintViolation", "versionHash"]) expect(a[k], k).toStrictEqual(b[k]);
    expect(a.errors).toStrictEqual(b.errors);
  });

  it("a build is stale once any file it was built from is newer, or gone", () => {
    const root = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-clistate-"));
    const dist = path.join(root, "dist", "cli");
    expect(cliState(root)).toBe("missing");
    fs.mkdirSync(dist, { recursive: true });
    fs.mkdirSync(path.join(root, "app"));
    const src = path.join(root, "app", "a.ts");
    fs.writeFileSync(src, "export const a = 1;\n");
    fs.writeFileSync(path.join(dist, "inputs.json"), JSON.stringify(["app/a.ts"]));
    fs.writeFileSync(path.join(dist, "arcwatch.mjs"), "");
    const t = Date.now() / 1000;
    fs.utimesSync(src, t - 100, t - 100);
    fs.utimesSync(path.join(dist, "arcwatch.mjs"), t - 50, t - 50);
    expect(cliState(root)).toBe("fresh");
    fs.utimesSync(src, t, t); // edited after the build
    expect(cliState(root)).toBe("stale");
    fs.utimesSync(src, t - 100, t - 100);
    fs.writeFileSync(path.join(root, "package.json"), "{}"); // a dependency change
    expect(cliState(root)).toBe("stale");
    fs.utimesSync(path.join(root, "package.json"), t - 100, t - 100);
    fs.rmSync(src);
    expect(cliState(root)).toBe("stale");
  });
});
