/**
 * Culprit search: in a temporary git repository whose solver (a small module executor committed
 * with it) doubles its work three commits before the tip, A/B bisection (bench/runner/bisect.ts,
 * interleaved trials of bench/runner/ab.ts) names that commit, with evidence at each step. Solves
 * take a few milliseconds of CPU time (the suite's clock): sub-millisecond wall-clock solves spread
 * the paired block ratios from 0.5 to 30 on the loaded shared machine and the search went astray. The
 * command line is run as a separate process there, as a person would run it.
 */
import { describe, expect, it } from "vitest";
import { execFileSync, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { REPO, tempDir } from "./helpers";
import { standInExecutor } from "../helpers/stand-in-executor";

function git(cwd: string, ...args: string[]): string {
  return execFileSync("git", args, { cwd, encoding: "utf8", env: { ...process.env, GIT_AUTHOR_NAME: "Arcwatch Test", GIT_AUTHOR_EMAIL: "test@example.com", GIT_COMMITTER_NAME: "Arcwatch Test", GIT_COMMITTER_EMAIL: "test@example.com" } }).trim();
}

const executor = (work: number) => standInExecutor(work, "bisect-test");

describe("bisection with interleaved A/B comparisons", () => {
  it("names the commit that planted a slowdown three commits back", { timeout: 600_000 }, async () => {
    const repo = tempDir("bisect");
    fs.cpSync(path.join(REPO, "tsconfig.json"), path.join(repo, "tsconfig.json"));
    fs.cpSync(path.join(REPO, "problems", "pika-rover-dash"), path.join(repo, "problems", "pika-rover-dash"), { recursive: true });
    fs.mkdirSync(path.join(repo, "bench", "suites"), { recursive: true });
    fs.writeFileSync(path.join(repo, ".gitignore"), ".tmp\n*.db*\nnode_modules\n");
    fs.writeFileSync(
      path.join(repo, "bench", "suites", "bis.json"),
      JSON.stringify({ format: "arcwatch-suite/1", name: "bis", problems: ["pika-rover-dash"], schemes: ["euler"], meshes: [{ intervals: 6 }], jobs: 1, clock: "cpu", solver: { kind: "module", module: "../../exec.ts" } }),
    );
    fs.writeFileSync(path.join(repo, "exec.ts"), executor(40_000));
    fs.writeFileSync(path.join(repo, "notes.txt"), "0\n");
    git(repo, "init", "-q", "-b", "main");
    git(repo, "add", "-A");
    git(repo, "commit", "-q", "-m", "Baseline");
    const good = git(repo, "rev-parse", "HEAD");
    const hashes: string[] = [];
    for (let k = 1; k <= 6; k++) {
      if (k === 3) fs.writeFileSync(path.join(repo, "exec.ts"), executor(80_000));
      fs.appendFileSync(path.join(repo, "notes.txt"), `${k}\n`);
      git(repo, "commit", "-q", "-am", k === 3 ? "Commit 3: twice the work per solve" : `Commit ${k}: notes`);
      hashes.push(git(repo, "rev-parse", "HEAD"));
    }
    const culprit = hashes[2]!;
    // Three commits come after it: the tip is three commits past the culprit.
    expect(git(repo, "rev-parse", "HEAD~3")).toBe(culprit);

    fs.symlinkSync(path.join(REPO, "node_modules"), path.join(repo, "node_modules"), "dir");
    const run = spawnSync(
      process.execPath,
      ["--import", "tsx", path.join(REPO, "bench/run.ts"), "--suite", "bis", "--bisect", `${good}..HEAD`, "--cases", "pika-rover-dash/euler/6", "--blocks", "4", "--db", path.join(repo, "bisect.db"), "--json"],
      { cwd: repo, encoding: "utf8", env: { ...process.env, TSX_TSCONFIG_PATH: path.join(REPO, "tsconfig.json"), ARCWATCH_MIGRATIONS: path.join(REPO, "drizzle") }, timeout: 580_000 },
    );
    expect(run.status, run.stderr).toBe(0);
    const r = JSON.parse(run.stdout) as { firstBad: { hash: string } | null; steps: { commit: string; subject: string; bad: boolean; ratio: number; low: number; high: number; cases: { blockRatios: number[]; status: string }[] }[] };
    console.log(r.steps.map((s) => `${s.subject}: ×${s.ratio.toFixed(3)} [${s.low.toFixed(3)}, ${s.high.toFixed(3)}] → ${s.bad ? "bad" : "good"} (${s.cases[0]?.status})`).join("\n"));
    expect(r.firstBad?.hash).toBe(culprit);
    expect(r.steps.length).toBeGreaterThanOrEqual(2);
    expect(r.steps.length).toBeLessThanOrEqual(3);
    for (const s of r.steps) {
      // Every step carries its evidence: the paired block ratios and the interval.
      expect(s.cases[0]!.blockRatios).toHaveLength(4);
      expect(s.bad).toBe(hashes.indexOf(s.commit) >= 2);
    }
    // The worktrees are gone.
    expect(git(repo, "worktree", "list").split("\n")).toHaveLength(1);
  });
});
