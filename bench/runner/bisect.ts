/**
 * Culprit search: when a slowdown spans several commits (baseline and flagged commit are not
 * adjacent), bisect the first-parent commits between them on the affected cases only. Every step
 * is an interleaved A/B comparison (./ab.ts) of the known-good commit against the middle commit;
 * "slower" moves the bad end there, anything else the good end. It assumes one change point (the
 * slowdown, once in, stays), as `git bisect` does. The evidence of every step is returned.
 */
import path from "node:path";
import { simpleGit } from "simple-git";
import type { Db } from "../../app/db/client.server";
import { removeCheckout, runAb, type AbResult } from "./ab";
import { resolveCommit } from "./git-meta";

export interface BisectStep {
  commit: string;
  subject: string;
  bad: boolean;
  /** Pooled (or single-case) B/A ratio and interval. */
  ratio: number;
  low: number;
  high: number;
  ab: AbResult;
}

export interface BisectResult {
  good: string;
  bad: string;
  /** Commits after `good` up to `bad`, oldest first. */
  commits: { hash: string; subject: string }[];
  firstBad: { hash: string; subject: string } | null;
  steps: BisectStep[];
}

export interface BisectOptions {
  db: Db;
  root: string;
  good: string;
  bad: string;
  suite: string;
  cases: string[];
  blocks?: number;
  repeats?: number;
  signal?: AbortSignal;
  onStep?: (step: BisectStep, left: number) => void;
}

/** Slower by the pooled verdict (several cases) or the one case's verdict. */
function slower(r: AbResult): { bad: boolean; ratio: number; low: number; high: number } {
  if (r.pooled) return { bad: r.pooled.verdict === "slower", ratio: r.pooled.ratio, low: r.pooled.low, high: r.pooled.high };
  const c = r.cases[0]!;
  return { bad: c.verdict === "slower", ratio: c.ratio, low: c.low, high: c.high };
}

export async function bisect(opts: BisectOptions): Promise<BisectResult> {
  const root = path.resolve(opts.root);
  const good = await resolveCommit(root, opts.good);
  const bad = await resolveCommit(root, opts.bad);
  if (!good || !bad) throw new Error(`bisect: unknown commit "${!good ? opts.good : opts.bad}"`);
  const out = await simpleGit(root).raw(["log", "--first-parent", "--reverse", "--format=%H%x00%s", `${good}..${bad}`]);
  const commits = out
    .split("\n")
    .filter((l) => l.trim())
    .map((l) => {
      const [hash, subject] = l.split("\0");
      return { hash: hash!, subject: subject ?? "" };
    });
  if (commits.length === 0) throw new Error(`bisect: ${bad.slice(0, 10)} is not a descendant of ${good.slice(0, 10)}`);
  const steps: BisectStep[] = [];
  const trees = new Map<string, string>();
  // lo: index of the last known-good commit (-1 = `good`); hi: first known-bad (the flagged one).
  let lo = -1;
  let hi = commits.length - 1;
  try {
    while (hi - lo > 1 && !opts.signal?.aborted) {
      const mid = Math.floor((lo + hi) / 2);
      const c = commits[mid]!;
      const ab = await runAb({ db: opts.db, root, base: good, head: c.hash, suite: opts.suite, cases: opts.cases, blocks: opts.blocks, repeats: opts.repeats, signal: opts.signal, worktrees: trees, seed: mid + 1 });
      const v = slower(ab);
      const step: BisectStep = { commit: c.hash, subject: c.subject, ...v, ab };
      steps.push(step);
      if (v.bad) hi = mid;
      else lo = mid;
      opts.onStep?.(step, Math.max(0, Math.ceil(Math.log2(hi - lo))));
    }
  } finally {
    for (const dir of trees.values()) await removeCheckout(root, dir);
  }
  return { good, bad, commits, firstBad: opts.signal?.aborted ? null : commits[hi]!, steps };
}

/** The search in words, one line per step. */
export function bisectSummary(r: BisectResult): string {
  const lines = [`${r.commits.length} commits after ${r.good.slice(0, 10)} up to ${r.bad.slice(0, 10)}`];
  for (const s of r.steps) lines.push(`${s.commit.slice(0, 10)} ${s.subject}: ×${s.ratio.toFixed(3)} [${s.low.toFixed(3)}, ${s.high.toFixed(3)}] against ${r.good.slice(0, 10)} → ${s.bad ? "bad" : "good"}`);
  lines.push(r.firstBad ? `first bad commit: ${r.firstBad.hash} ${r.firstBad.subject}` : "search stopped before the end");
  return lines.join("\n");
}
