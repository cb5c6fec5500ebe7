/**
 * The real-repository part of the detection-power benchmark (and of its reduced end-to-end test,
 * tests/runner/power-e2e.test.ts): the project's code is copied into a fresh git repository
 * (node_modules linked), the bench command line records a baseline and unchanged reruns there,
 * then commits plant a slowdown in ONE scheme as a code change of that copy's engine
 * (app/engine/solve.ts): after each solve of that scheme, more transcription + NLP solves of the
 * same case, cut at a share of the first solve's iterations — deterministic extra CPU work
 * proportional to the scheme's own work on that case, sized to about `fraction` of a whole solve
 * (ATTEMPT_SHARE below); the slowdown actually obtained is measured and printed. A commit reverting it follows each plant,
 * so every planted commit is judged against a run of the unchanged code (its parent).
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { runBenchJson } from "../../tests/helpers/bench-cli";

export const REPO = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");
const COPY = ["app", "bench", "problems", "drizzle", "tsconfig.json", "package.json"];

export interface BenchFinding {
  kind: string;
  direction: string;
  caseKey: string;
  metric: string;
  ratio: number | null;
  ciLow: number | null;
  ciHigh: number | null;
  scope?: string;
  detail: string;
}

interface BenchJson {
  runId: string;
  status: string;
  exitCode: number;
  commit: { commitHash: string };
  findings: BenchFinding[];
  newRegressions: number;
  /** `--confirm`: the A/B verdict on the run's new speed regressions (null when there were none). */
  confirmation: { state: string; note: string | null } | null;
  /** New regressions that stand after the confirmation. */
  standing: number;
  counts: { solved: number };
}

export interface RealRun {
  label: string;
  /** Planted size (fraction of the iterations re-solved), 0 for unchanged code. */
  fraction: number;
  commit: string;
  code: number | null;
  solved: number;
  findings: BenchFinding[];
  /** With `confirm`: the A/B verdict on the speed regressions ("confirmed", "cleared", "unavailable") and its words. */
  confirmation: { state: string; note: string | null } | null;
  /** New regressions that stand (after the confirmation, with `confirm`). */
  standing: number;
  seconds: number;
}

export interface RealCheckOptions {
  /** Scheme whose solves get the extra work. */
  scheme: string;
  problems: string[];
  schemes: string[];
  intervals: number;
  repeats: number;
  /** Unchanged reruns after the baseline (each judged against the previous run). */
  reruns: number;
  /** Planted fractions, one commit each (followed by a revert commit and its run). */
  fractions: number[];
  /** Follow each plant by a commit reverting it and its run (default true). */
  revert?: boolean;
  onRun?: (r: RealRun) => void;
  /** Keep the temporary repository (default: removed). */
  keep?: boolean;
  /** Run the bench command with `--confirm`: speed regressions are put to an interleaved A/B at once. */
  confirm?: boolean;
  /** Thresholds over the quick suite's (which the suite copies by default). */
  thresholds?: Record<string, number | boolean>;
}

function git(cwd: string, ...args: string[]): string {
  return execFileSync("git", args, { cwd, encoding: "utf8", env: { ...process.env, GIT_AUTHOR_NAME: "Arcwatch Power", GIT_AUTHOR_EMAIL: "power@example.com", GIT_COMMITTER_NAME: "Arcwatch Power", GIT_COMMITTER_EMAIL: "power@example.com" } }).trim();
}

/**
 * Share of a whole solve (solveProblem: transcription, NLP, recovery, re-simulation, arcs, mesh
 * estimate) spent in its transcription + NLP (solveAttempt): measured 0.30–0.42 (CPU time,
 * median of 8) for Hermite–Simpson at 20 intervals on pika-rover-dash, kestrel-2-ascent and
 * tern-orbit-raise, 2026-12-02. The plant re-solves fraction / ATTEMPT_SHARE attempts' worth of
 * iterations so that the extra work is about `fraction` of the whole solve.
 */
export const ATTEMPT_SHARE = 0.35;

/** app/engine/solve.ts with the planted extra work for `scheme` (throws if the file's shape changed). */
export function plantedSolveSource(src: string, scheme: string, fraction: number): string {
  if (!/export function solveAttempt\(problem: CompiledProblem, scheme: SchemeId, mesh: Mesh, options: SolveOptions = \{\}\): SolveAttempt \{/.test(src))
    throw new Error("app/engine/solve.ts: solveAttempt's signature changed; update bench/power/real-check.ts");
  const attempts = fraction / ATTEMPT_SHARE;
  return (
    src.replace("export function solveAttempt(", "function solveAttemptOnce(") +
    `
export function solveAttempt(problem: CompiledProblem, scheme: SchemeId, mesh: Mesh, options: SolveOptions = {}): SolveAttempt {
  const first = solveAttemptOnce(problem, scheme, mesh, options);
  if (scheme !== ${JSON.stringify(scheme)}) return first;
  // Planted slowdown: ${attempts.toFixed(3)} more transcriptions + NLP solves' worth of this case's own iterations.
  const iterations = Math.max(1, first.report.iterations ?? 1);
  for (let left = ${attempts}; left > 1e-9; left -= 1) {
    const cut = Math.max(1, Math.round(Math.min(1, left) * iterations));
    solveAttemptOnce(problem, scheme, mesh, { ...options, nlp: { ...options.nlp, maxIter: cut } });
  }
  return first;
}
`
  );
}

export async function realCheck(o: RealCheckOptions): Promise<{ runs: RealRun[]; repo: string }> {
  const repo = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-power-"));
  try {
    for (const p of COPY) fs.cpSync(path.join(REPO, p), path.join(repo, p), { recursive: true });
    fs.symlinkSync(path.join(REPO, "node_modules"), path.join(repo, "node_modules"), "dir");
    fs.writeFileSync(path.join(repo, ".gitignore"), "node_modules\n*.db*\n.tmp\n");
    fs.writeFileSync(
      path.join(repo, "bench/suites/power.json"),
      JSON.stringify({
        format: "arcwatch-suite/1",
        name: "power",
        description: "Detection-power check: a few problems, every listed scheme, one coarse mesh, CPU clock.",
        problems: o.problems,
        schemes: o.schemes,
        meshes: [{ intervals: o.intervals }],
        repeats: o.repeats,
        warmup: 2,
        timeBudgetSeconds: 120,
        jobs: 1,
        clock: "cpu",
        thresholds: { ...JSON.parse(fs.readFileSync(path.join(REPO, "bench/suites/quick.json"), "utf8")).thresholds, ...o.thresholds },
      }),
    );
    git(repo, "init", "-q", "-b", "main");
    git(repo, "add", "-A");
    git(repo, "commit", "-q", "-m", "Baseline");
    const db = path.join(repo, "power.db");
    const solveFile = path.join(repo, "app/engine/solve.ts");
    const original = fs.readFileSync(solveFile, "utf8");
    const runs: RealRun[] = [];
    const measure = async (label: string, fraction: number) => {
      const t0 = Date.now();
      const r = await runBenchJson<BenchJson>(repo, "power", db, o.confirm ? ["--confirm"] : []);
      if (r.json.status !== "complete") throw new Error(`${label}: run ${r.json.status}\n${r.stderr}`);
      const run: RealRun = { label, fraction, commit: r.json.commit.commitHash, code: r.code, solved: r.json.counts.solved, findings: r.json.findings, confirmation: r.json.confirmation ?? null, standing: r.json.standing ?? r.json.newRegressions, seconds: (Date.now() - t0) / 1000 };
      runs.push(run);
      o.onRun?.(run);
    };
    await measure("baseline", 0);
    for (let k = 1; k <= o.reruns; k++) {
      fs.appendFileSync(path.join(repo, "NOTES"), `rerun ${k}\n`);
      git(repo, "add", "-A");
      git(repo, "commit", "-q", "-m", `Unchanged code ${k}`);
      await measure(`unchanged ${k}`, 0);
    }
    for (const f of o.fractions) {
      fs.writeFileSync(solveFile, plantedSolveSource(original, o.scheme, f));
      git(repo, "commit", "-q", "-am", `Plant: ${o.scheme} re-solves ${Math.round(f * 100)} % of its iterations`);
      await measure(`planted ${Math.round(f * 100)} % in ${o.scheme}`, f);
      fs.writeFileSync(solveFile, original);
      if (o.revert === false) continue;
      git(repo, "commit", "-q", "-am", "Revert the plant");
      await measure(`reverted ${Math.round(f * 100)} %`, 0);
    }
    return { runs, repo };
  } finally {
    if (!o.keep) fs.rmSync(repo, { recursive: true, force: true });
  }
}
