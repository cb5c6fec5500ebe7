/**
 * Interleaved A/B comparison of two commits in one sitting: `npm run bench -- --ab <base>..<head>`.
 *
 * Method: randomized multiple interleaved trials (A. Abedi, T. Brecht, "Conducting Repeatable
 * Experiments in Highly Variable Cloud Computing Environments", ICPE 2017). Both commits are
 * checked out in their own git worktrees and get one worker each (the solver code measured is the
 * commit's own; the timing harness is this checkout's). Each case is run in `blocks` blocks; a
 * block is A B B A or B A A B (chosen at random, seeded), every trial `repeats` timed solves, so
 * that whatever load the machine has at that moment hits both commits alike. The verdict comes
 * from the paired per-block ratios r_b = median(B samples of block b) / median(A samples of block
 * b): the case's shift is their geometric mean with a two-stage bootstrap interval over blocks and
 * samples (app/engine/stats/hierarchical-bootstrap.ts), and the pooled shift of all cases treats
 * the cases as the first stage.
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { simpleGit } from "simple-git";
import type { Db } from "../../app/db/client.server";
import { pooledShift, type PooledCase } from "../../app/engine/stats/hierarchical-bootstrap";
import { abConfidenceFor, abGroupsUnclear, abReplicatesFor, abVerdictOf, poolAbCases, type AbGroup, type AbVerdictWord } from "../../app/runs/ab-result";
import { createPrng } from "../../app/engine/stats/prng";
import { problemLibraryFor, uploadedProblemsDir, databaseFileOf } from "../../app/models/library.server";
import { expandCases, loadSuite, suitePath } from "../../app/runs/suite";
import { loadSuiteWithChanges } from "../../app/models/suite-changes.server";
import { isSolved, type CaseSpec } from "../../app/runs/types";
import { resolveCommit } from "./git-meta";
import { openLane, type Lane } from "./pool";

export { AB_MIN_RATIO } from "../../app/runs/ab-result";

export interface AbOptions {
  db: Db;
  /** The repository (its bench/suites and problems/ define the cases). */
  root: string;
  base: string;
  head: string;
  suite: string;
  /** Only these case keys (default: every case of the suite). */
  cases?: string[];
  blocks?: number;
  /**
   * Sequential extension: while the verdict (pooled over the cases, or the one case) is "unclear",
   * run another `blocks` blocks on every case, up to this many in all (default: `blocks`, no
   * extension). The intervals are recomputed over all blocks; the verdict is read once per round,
   * so the 99 % level holds per round, not over the whole sequence (a handful of looks; common
   * practice, no source).
   */
  maxBlocks?: number;
  /**
   * The verdicts the comparison is for (regressions, screened schemes): with them, more rounds run
   * while any group is "unclear" against its own floor, instead of while the pooled verdict is, and
   * a round runs only the cases of groups still unclear (a decided group's cases stop).
   */
  groups?: AbGroup[];
  /** Timed solves per trial. */
  repeats?: number;
  seed?: number;
  /** Interval level of every case and pool (default: app/runs/ab-result.ts `abConfidenceFor` the number of groups). */
  confidence?: number;
  signal?: AbortSignal;
  onTrial?: (info: { key: string; block: number; side: "A" | "B"; done: number; total: number }) => void;
  /** Worktrees already checked out, by commit (bisection reuses them). */
  worktrees?: Map<string, string>;
}

export type AbVerdict = AbVerdictWord;

export interface AbCase {
  key: string;
  /** Paired per-block ratios B/A. */
  blockRatios: number[];
  ratio: number;
  low: number;
  high: number;
  verdict: AbVerdict;
  status: string;
}

export interface AbResult {
  base: string;
  head: string;
  blocks: number;
  repeats: number;
  cases: AbCase[];
  pooled: { ratio: number; low: number; high: number; verdict: AbVerdict; cases: number } | null;
  method: string;
  confidence: number;
}

export const AB_METHOD = "randomized multiple interleaved trials (Abedi & Brecht, ICPE 2017): blocks A B B A / B A A B in one sitting, paired block ratios, two-stage bootstrap";

const verdictOf = abVerdictOf;

/** `base..head` → [base, head]. */
export function parseRange(range: string): [string, string] | null {
  const m = /^([^.\s]+)\.\.([^.\s]+)$/.exec(range.trim());
  return m ? [m[1]!, m[2]!] : null;
}

/** Checks out `commit` in a worktree under `<root>/.tmp/ab/` (node_modules found by walking up). */
export async function checkout(root: string, commit: string, cache?: Map<string, string>): Promise<string> {
  const hit = cache?.get(commit);
  if (hit && fs.existsSync(hit)) return hit;
  const dir = path.join(root, ".tmp", "ab", `${commit.slice(0, 12)}-${process.pid}`);
  fs.mkdirSync(path.dirname(dir), { recursive: true });
  if (fs.existsSync(dir)) await removeCheckout(root, dir);
  await simpleGit(root).raw(["worktree", "add", "--detach", "--force", dir, commit]);
  cache?.set(commit, dir);
  return dir;
}

export async function removeCheckout(root: string, dir: string): Promise<void> {
  try {
    await simpleGit(root).raw(["worktree", "remove", "--force", dir]);
  } catch {
    fs.rmSync(dir, { recursive: true, force: true });
    await simpleGit(root).raw(["worktree", "prune"]).catch(() => undefined);
  }
}

function laneFor(worktree: string, root: string, suiteFile: string, solver: ReturnType<typeof loadSuite>["definition"]["solver"], uploaded: string, repeats: number, clock: "wall" | "cpu"): Lane {
  const here = (f: string) => fileURLToPath(new URL(f, import.meta.url));
  let executorModule: string;
  let options: Record<string, unknown> = {};
  if (solver.kind === "module") {
    // The module as committed at that commit: its path inside the repository, in the worktree.
    const rel = path.relative(root, path.resolve(path.dirname(suiteFile), solver.module));
    executorModule = path.join(worktree, rel);
    options = solver.options;
  } else if (solver.kind === "builtin") {
    executorModule = path.join(worktree, "bench", "runner", "builtin-executor.ts");
    if (!fs.existsSync(executorModule)) executorModule = here("./builtin-executor.ts");
  } else throw new Error("A/B compares commits of this repository; an external solver's repository is not supported");
  return openLane({
    jobs: 1,
    budgetSeconds: 600,
    repeats,
    warmup: 1,
    // The suite's clock: "cpu" (process CPU time) is far less disturbed by a loaded machine; each lane has one worker.
    clock,
    executorModule,
    context: { root: worktree, libraryRoots: [path.join(worktree, "problems"), uploaded], problemsDir: path.join(worktree, "problems"), options },
    tsconfig: fs.existsSync(path.join(worktree, "tsconfig.json")) ? path.join(worktree, "tsconfig.json") : path.join(root, "tsconfig.json"),
  });
}

/** Runs the interleaved comparison; worktrees it created are removed unless `worktrees` was given. */
export async function runAb(opts: AbOptions): Promise<AbResult> {
  const root = path.resolve(opts.root);
  const base = await resolveCommit(root, opts.base);
  const head = await resolveCommit(root, opts.head);
  if (!base) throw new Error(`--ab: unknown commit "${opts.base}"`);
  if (!head) throw new Error(`--ab: unknown commit "${opts.head}"`);
  const suite = loadSuiteWithChanges(opts.db, suitePath(opts.suite, root));
  let cases: CaseSpec[] = expandCases(suite.definition, problemLibraryFor(opts.db, root));
  if (opts.cases?.length) {
    const unknown = opts.cases.filter((k) => !cases.some((c) => c.key === k));
    if (unknown.length) throw new Error(`--ab: not cases of suite ${suite.definition.name}: ${unknown.join(", ")}`);
    cases = cases.filter((c) => opts.cases!.includes(c.key));
  }
  const blocks = opts.blocks ?? 6;
  const repeats = opts.repeats ?? 3;
  const rng = createPrng(opts.seed ?? 1);
  const own = !opts.worktrees;
  const trees = opts.worktrees ?? new Map<string, string>();
  const dirA = await checkout(root, base, trees);
  const dirB = await checkout(root, head, trees);
  const uploaded = uploadedProblemsDir(databaseFileOf(opts.db));
  const laneA = laneFor(dirA, root, suite.file, suite.definition.solver, uploaded, repeats, suite.definition.clock);
  const laneB = laneFor(dirB, root, suite.file, suite.definition.solver, uploaded, repeats, suite.definition.clock);
  const maxBlocks = Math.max(blocks, opts.maxBlocks ?? blocks);
  const perCase = cases.map(() => ({ blocks: [] as PooledCase[], status: "optimal" }));
  let out: AbCase[] = [];
  let pooled: AbResult["pooled"] = null;
  let total = cases.length * blocks * 4;
  // Several verdicts in one sitting share one false-alarm budget (Bonferroni).
  const confidence = opts.confidence ?? abConfidenceFor(opts.groups?.length ?? 1);
  const replicates = abReplicatesFor(confidence);
  let done = 0;
  let ran = 0;
  try {
    // With groups, a round runs only the cases of groups still unclear (a decided group's cases stop).
    let active = new Set(cases.map((c) => c.key));
    for (;;) {
      for (const [i, spec] of cases.entries()) {
        if (!active.has(spec.key)) continue;
        const acc = perCase[i]!;
        for (let b = ran; b < ran + blocks && !opts.signal?.aborted; b++) {
          const order: ("A" | "B")[] = rng.next() < 0.5 ? ["A", "B", "B", "A"] : ["B", "A", "A", "B"];
          const got: Record<"A" | "B", number[]> = { A: [], B: [] };
          for (const side of order) {
            const o = await (side === "A" ? laneA : laneB).run(spec);
            if (!isSolved(o.status)) acc.status = `${side}: ${o.status}${o.message ? ` (${o.message})` : ""}`;
            got[side].push(...o.samples);
            opts.onTrial?.({ key: spec.key, block: b, side, done: ++done, total });
          }
          if (got.A.length && got.B.length) acc.blocks.push({ x: got.B, y: got.A });
        }
      }
      ran += blocks;
      out = cases.map((spec, i) => {
        const acc = perCase[i]!;
        if (acc.blocks.length === 0) return { key: spec.key, blockRatios: [], ratio: NaN, low: NaN, high: NaN, verdict: "unclear", status: acc.status };
        const s = pooledShift(acc.blocks, { confidence, seed: 7, replicates });
        return { key: spec.key, blockRatios: s.caseRatios, ratio: s.ratio, low: s.low, high: s.high, verdict: verdictOf(s.ratio, s.low, s.high), status: acc.status };
      });
      // Cases as the first stage, each case's paired block ratios (against 1) as the second.
      pooled = poolAbCases(out.filter((c) => Number.isFinite(c.ratio)), confidence);
      const deciding = pooled?.verdict ?? out.find((c) => Number.isFinite(c.ratio))?.verdict;
      const open = opts.groups?.length ? opts.groups.filter((g) => abGroupsUnclear(out, [g], confidence)) : null;
      const unclear = open ? open.length > 0 : deciding === "unclear";
      if (!unclear || ran + blocks > maxBlocks || opts.signal?.aborted) break;
      if (open) active = new Set(open.flatMap((g) => g.cases));
      total += cases.filter((c) => active.has(c.key)).length * blocks * 4;
    }
  } finally {
    await laneA.close();
    await laneB.close();
    if (own) for (const dir of trees.values()) await removeCheckout(root, dir);
  }
  return { base, head, blocks: ran, repeats, cases: out, pooled, method: AB_METHOD, confidence };
}

/** One line per case, then the pooled line. */
export function abSummary(r: AbResult): string {
  const lines = [`A = ${r.base.slice(0, 10)}, B = ${r.head.slice(0, 10)} · ${r.blocks} blocks × 4 trials × ${r.repeats} solves per case · ${+(r.confidence * 100).toPrecision(4)} % intervals · ${r.method}`];
  for (const c of r.cases) lines.push(`${c.key}: B/A ×${c.ratio.toFixed(3)} [${c.low.toFixed(3)}, ${c.high.toFixed(3)}] → ${c.verdict}${c.status !== "optimal" ? ` (${c.status})` : ""}`);
  if (r.pooled) lines.push(`all ${r.pooled.cases} cases: ×${r.pooled.ratio.toFixed(3)} [${r.pooled.low.toFixed(3)}, ${r.pooled.high.toFixed(3)}] → ${r.pooled.verdict}`);
  return lines.join("\n");
}
