/**
 * End to end in a temporary git repository: the project's code is copied into a fresh repo
 * (node_modules linked), the bench command line is run there on a small suite, then commits that
 * (1) slow the solver down (every solve done twice) and (2) spoil the trapezoidal scheme's
 * accuracy (its mesh silently coarsened three-fold) must be flagged on the right commit, while
 * reruns of an unchanged commit must leave nothing standing.
 *
 * The reruns go the way a CI runner goes, `bench --confirm`: a raw per-case speed finding of a
 * sequential run is a suspect that the interleaved A/B decides (DEVELOPERS.md, "`bench --confirm`").
 * Until 2026-12-04 this test allowed at most one raw speed finding in its 12 unchanged
 * comparisons; CI logs of 12 clean runs showed 5 in 144 (3.5 %, two in one run, which failed):
 * sequential runs on a shared 2-core machine under the test suite's own load move a case's median
 * by more than ×1.1 now and then, which a within-run test cannot tell from a change. The raw rate is
 * still printed; what is asserted is the verdict after the A/B.
 */
import { describe, expect, it } from "vitest";
import { execFileSync } from "node:child_process";
import { runBenchJson } from "../helpers/bench-cli";
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { REPO, tempDir } from "./helpers";

const COPY = ["app", "bench", "problems", "drizzle", "tsconfig.json", "package.json"];

function git(cwd: string, ...args: string[]): string {
  return execFileSync("git", args, { cwd, encoding: "utf8", env: { ...process.env, GIT_AUTHOR_NAME: "Arcwatch Test", GIT_AUTHOR_EMAIL: "test@example.com", GIT_COMMITTER_NAME: "Arcwatch Test", GIT_COMMITTER_EMAIL: "test@example.com" } }).trim();
}

interface BenchJson {
  runId: string;
  status: string;
  exitCode: number;
  commit: { commitHash: string };
  findings: { kind: string; direction: string; caseKey: string; metric: string; ratio: number | null; pValue: number | null; detail: string }[];
  newRegressions: number;
  /** `--confirm`: the A/B's state on the run's speed regressions (null when none was needed). */
  confirmation: { state: string; note: string | null } | null;
  /** New regressions that stand after the A/B. */
  standing: number;
  counts: { solved: number };
}

const bench = (cwd: string, db: string, extra: string[] = []) => runBenchJson<BenchJson>(cwd, "e2e", db, extra);

describe("end to end in a temporary git repository", () => {
  it("flags a slowdown and an accuracy loss on the right commits and nothing on unchanged reruns", { timeout: 900_000 }, async () => {
    const repo = tempDir("e2e");
    for (const p of COPY) fs.cpSync(path.join(REPO, p), path.join(repo, p), { recursive: true });
    fs.symlinkSync(path.join(REPO, "node_modules"), path.join(repo, "node_modules"), "dir");
    fs.writeFileSync(path.join(repo, ".gitignore"), "node_modules\n*.db*\n");
    fs.writeFileSync(
      path.join(repo, "bench/suites/e2e.json"),
      JSON.stringify({
        format: "arcwatch-suite/1",
        name: "e2e",
        description: "End-to-end test suite: one problem with an analytic reference, two schemes, two meshes.",
        problems: ["pika-rover-dash"],
        schemes: ["trapezoidal", "hermite-simpson"],
        meshes: [{ intervals: 12 }, { intervals: 16 }],
        repeats: 20,
        warmup: 2,
        timeBudgetSeconds: 60,
        jobs: 1,
        clock: "cpu",
      }),
    );
    git(repo, "init", "-q", "-b", "main");
    git(repo, "add", "-A");
    git(repo, "commit", "-q", "-m", "Baseline");
    const db = path.join(repo, "bench.db");

    // Baseline and unchanged reruns.
    const first = await bench(repo, db);
    expect(first.json.status).toBe("complete");
    expect(first.json.counts.solved).toBe(4);
    const reruns = 3;
    let falseAlarms = 0;
    let falseImprovements = 0;
    let comparisons = 0;
    for (let k = 0; k < reruns; k++) {
      const r = await bench(repo, db, ["--confirm"]);
      comparisons += 4;
      expect(r.json.findings.filter((f) => f.kind !== "speed" && f.kind !== "drift")).toEqual([]);
      const speed = r.json.findings.filter((f) => f.kind === "speed" && f.direction === "regression");
      falseAlarms += speed.length;
      falseImprovements += r.json.findings.filter((f) => f.direction === "improvement").length;
      if (r.json.findings.length || r.json.confirmation) {
        console.log(`rerun ${k + 1}: ${r.json.findings.map((f) => `${f.kind} ${f.caseKey} ${f.detail}`).join("; ") || "nothing"}${r.json.confirmation ? ` · A/B ${r.json.confirmation.state}: ${r.json.confirmation.note}` : ""} · standing ${r.json.standing}`);
      }
      // A raw speed finding is cleared by the A/B, or left undecided (open, not failing the run).
      if (speed.length) expect(["cleared", "unavailable"], `rerun ${k + 1}`).toContain(r.json.confirmation?.state);
      expect(r.json.standing, `rerun ${k + 1}`).toBe(0);
      expect(r.code, `rerun ${k + 1}`).toBe(0);
    }
    console.log(
      `raw per-case findings on unchanged reruns (before the A/B): ${falseAlarms} regression(s) and ${falseImprovements} improvement(s) in ${comparisons} case comparisons (${((100 * falseAlarms) / comparisons).toFixed(1)} % / ${((100 * falseImprovements) / comparisons).toFixed(1)} %)`,
    );

    // A commit that slows the solver: every solve is done twice.
    const solve = path.join(repo, "app/engine/solve.ts");
    const src = fs.readFileSync(solve, "utf8");
    expect(src).toMatch(/export function solveProblem\(/);
    const wrapped =
      src.replace("export function solveProblem(", "function solveProblemOnce(") +
      "\nexport function solveProblem(...args: Parameters<typeof solveProblemOnce>): SolveReport {\n  solveProblemOnce(...args);\n  return solveProblemOnce(...args);\n}\n";
    fs.writeFileSync(solve, wrapped);
    git(repo, "commit", "-q", "-am", "Solve twice (slows the solver)");
    const slowHash = git(repo, "rev-parse", "HEAD");
    const slow = await bench(repo, db);
    expect(slow.json.commit.commitHash).toBe(slowHash);
    const speed = slow.json.findings.filter((f) => f.kind === "speed" && f.direction === "regression");
    console.log(`slow commit: ${speed.length} speed regressions: ${speed.map((f) => `${f.caseKey} ${f.detail}`).join("; ")}`);
    expect(speed.length).toBeGreaterThanOrEqual(3);
    expect(slow.json.findings.filter((f) => f.kind === "accuracy")).toEqual([]);
    expect(slow.code).toBe(3);

    // A commit that spoils the trapezoidal scheme's accuracy (and removes the slowdown).
    const spoiled =
      src.replace("export function solveProblem(", "function solveProblemExact(") +
      "\nexport function solveProblem(problem: CompiledProblem, scheme: SchemeId, mesh: Mesh, options: SolveOptions = {}): SolveReport {\n" +
      "  const m = scheme === \"trapezoidal\" ? { ...mesh, intervals: Math.max(2, Math.round(mesh.intervals / 3)) } : mesh;\n" +
      "  return solveProblemExact(problem, scheme, m, options);\n}\n";
    fs.writeFileSync(solve, spoiled);
    git(repo, "commit", "-q", "-am", "Coarsen trapezoidal mesh (spoils accuracy)");
    const spoilHash = git(repo, "rev-parse", "HEAD");
    const acc = await bench(repo, db);
    expect(acc.json.commit.commitHash).toBe(spoilHash);
    const accuracy = acc.json.findings.filter((f) => f.kind === "accuracy" && f.direction === "regression");
    console.log(`spoiled commit: ${accuracy.map((f) => `${f.caseKey} ${f.metric} ×${f.ratio?.toFixed(1)}`).join("; ")}`);
    expect(accuracy.length).toBeGreaterThanOrEqual(2);
    expect(accuracy.every((f) => f.caseKey.includes("/trapezoidal/"))).toBe(true);
    expect(acc.code).toBe(3);

    // The regression rows point at the right runs and commits.
    const d = new Database(db, { readonly: true });
    const rows = d
      .prepare("select r.kind, r.direction, ru.commit_hash as commit_hash from regressions r join runs ru on ru.id = r.run_id where r.direction = 'regression'")
      .all() as { kind: string; commit_hash: string }[];
    expect(rows.filter((r) => r.kind === "speed" && r.commit_hash === slowHash).length).toBeGreaterThanOrEqual(3);
    expect(rows.filter((r) => r.kind === "speed" && r.commit_hash === spoilHash)).toEqual([]);
    expect(rows.filter((r) => r.kind === "accuracy").length).toBeGreaterThanOrEqual(2);
    expect(rows.filter((r) => r.kind === "accuracy").every((r) => r.commit_hash === spoilHash)).toBe(true);
    expect(d.pragma("integrity_check", { simple: true })).toBe("ok");
    d.close();
  });
});
