/**
 * Splitting a suite's cases into n shards for n CI runners (pure: no database, no files).
 *
 * Expected time of a case: from the history of that case on the same machine class (seconds),
 * else from its mesh size (collocation points), converted to seconds by the median
 * seconds-per-point of the cases that do have history; with no history at all every case is
 * weighed in points.
 *
 * Assignment: list scheduling in the longest-processing-time order (Graham, "Bounds on
 * multiprocessing timing anomalies", SIAM J. Appl. Math. 17(2), 1969): cases by decreasing
 * expected time (ties by key), each to the shard with the least expected time so far (ties to
 * the lowest index). Every case goes to exactly one shard, and after every step the most and the
 * least loaded shard differ by at most the largest single case: the case just placed went to
 * the least loaded shard, so if it made that shard the most loaded one the gap is at most that
 * case, and otherwise the maximum is unchanged while the minimum did not fall.
 *
 * The plan is a function of (case keys, expected times, n) only, so every runner that computes
 * it from the same inputs gets the same plan; app/models/shard-plans.server.ts freezes the first
 * plan made for a suite version and machine class so that a case keeps its shard while the
 * suite does not change, however the history grows.
 */
import { createHash } from "node:crypto";

/** A runner-set machine class label: what CI systems allow in a runner label, kept short. */
export const MACHINE_CLASS_PATTERN = /^[A-Za-z0-9._-]{1,64}$/;

/** The fields of a suite case the planner reads. */
export interface PlanCase {
  key: string;
  scheme: string;
  intervals: number;
  degree?: number;
}

export type ExpectedBasis = "history" | "mesh";

export interface ShardPlan {
  count: number;
  /** shards[i] = keys of shard i + 1, in the suite's case order. */
  shards: string[][];
  /** Expected time of each shard (same unit as `expected`). */
  loads: number[];
  /** Expected time per case key. */
  expected: Record<string, number>;
  basis: Record<string, ExpectedBasis>;
  /** "s" when any case has history (all values then in seconds), "points" otherwise. */
  unit: "s" | "points";
}

/**
 * Collocation points per mesh interval: where each scheme evaluates the dynamics and holds NLP
 * variables. Euler and trapezoidal 1 (the interval's start node), Hermite–Simpson 2 (node and
 * midpoint), LGR its degree, RK4 multiple shooting 4 (the method's stages). Solve time grows
 * about linearly with this count for the banded KKT systems of these transcriptions (a rule of
 * thumb for ordering cases, common practice, no source).
 */
export function meshPoints(c: PlanCase): number {
  const perInterval = c.scheme === "hermite-simpson" ? 2 : c.scheme === "lgr" ? (c.degree ?? 4) : c.scheme === "rk4-shooting" ? 4 : 1;
  return c.intervals * perInterval;
}

/**
 * Expected time of every case: `history` seconds where known, else mesh points scaled by the
 * median seconds-per-point of the cases with history.
 */
export function expectedTimes(cases: PlanCase[], history: ReadonlyMap<string, number>): Pick<ShardPlan, "expected" | "basis" | "unit"> {
  const known = cases.filter((c) => {
    const s = history.get(c.key);
    return s !== undefined && Number.isFinite(s) && s > 0;
  });
  const expected: Record<string, number> = {};
  const basis: Record<string, ExpectedBasis> = {};
  if (known.length === 0) {
    for (const c of cases) {
      expected[c.key] = meshPoints(c);
      basis[c.key] = "mesh";
    }
    return { expected, basis, unit: "points" };
  }
  const perPoint = median(known.map((c) => history.get(c.key)! / meshPoints(c)));
  for (const c of cases) {
    const s = history.get(c.key);
    if (s !== undefined && Number.isFinite(s) && s > 0) {
      expected[c.key] = s;
      basis[c.key] = "history";
    } else {
      expected[c.key] = meshPoints(c) * perPoint;
      basis[c.key] = "mesh";
    }
  }
  return { expected, basis, unit: "s" };
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

/** Splits `cases` into `count` shards by expected time (see the file comment). */
export function planShards(cases: PlanCase[], count: number, history: ReadonlyMap<string, number> = new Map()): ShardPlan {
  if (!Number.isInteger(count) || count < 1) throw new Error(`shard count must be a positive integer, got ${count}`);
  const seen = new Set<string>();
  for (const c of cases) {
    if (seen.has(c.key)) throw new Error(`case ${c.key} appears twice in the suite`);
    seen.add(c.key);
  }
  const times = expectedTimes(cases, history);
  const order = [...cases].sort((a, b) => times.expected[b.key]! - times.expected[a.key]! || (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
  const loads = new Array<number>(count).fill(0);
  const shardOf = new Map<string, number>();
  for (const c of order) {
    let best = 0;
    for (let i = 1; i < count; i++) if (loads[i]! < loads[best]!) best = i;
    loads[best]! += times.expected[c.key]!;
    shardOf.set(c.key, best);
  }
  const shards: string[][] = Array.from({ length: count }, () => []);
  for (const c of cases) shards[shardOf.get(c.key)!]!.push(c.key);
  return { count, shards, loads, ...times };
}

/** Parses `--shard k/n` (1 ≤ k ≤ n ≤ 256). */
export function parseShard(text: string): { index: number; count: number } {
  const m = /^(\d{1,3})\/(\d{1,3})$/.exec(text.trim());
  const index = m ? Number(m[1]) : NaN;
  const count = m ? Number(m[2]) : NaN;
  if (!m || count < 1 || count > 256 || index < 1 || index > count) {
    throw new Error(`--shard must be k/n with 1 ≤ k ≤ n ≤ 256 (for example 3/8), got "${text}"`);
  }
  return { index, count };
}

/** SHA-256 of the sorted case keys: a plan is reused only for exactly this set of cases. */
export function caseSetHash(keys: string[]): string {
  return createHash("sha256").update([...keys].sort().join("\n")).digest("hex");
}

/** The plan as text: one block per shard with its expected time and cases. */
export function renderPlan(plan: ShardPlan, highlight?: number): string {
  const fmt = (v: number) => (plan.unit === "s" ? `${v.toFixed(1)} s` : `${Math.round(v)} points`);
  const lines: string[] = [];
  const fromHistory = Object.values(plan.basis).filter((b) => b === "history").length;
  const total = Object.keys(plan.basis).length;
  lines.push(
    `${total} cases in ${plan.count} shards; expected times from history for ${fromHistory} case(s), from mesh size for ${total - fromHistory}` +
      (plan.unit === "points" ? " (no history on this machine class: weights are collocation points, not seconds)" : ""),
  );
  const max = Math.max(...plan.loads);
  const min = Math.min(...plan.loads);
  lines.push(`expected per shard: ${fmt(min)} to ${fmt(max)}`);
  plan.shards.forEach((keys, i) => {
    lines.push("", `shard ${i + 1}/${plan.count}${highlight === i + 1 ? " (this runner)" : ""} · ${keys.length} cases · expected ${fmt(plan.loads[i]!)}`);
    for (const k of keys) lines.push(`  ${k}  ${fmt(plan.expected[k]!)}${plan.basis[k] === "history" ? "" : " (mesh)"}`);
  });
  return lines.join("\n");
}
