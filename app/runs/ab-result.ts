/**
 * The verdict of an interleaved A/B comparison as a document: what `bench --ab … --json` prints
 * (bench/runner/ab.ts builds it) and what an "ab" job stores (ab_checks.result_json). Pure: no
 * database, no git. The job worker parses the command's output with `abResultSchema`, so a
 * command of another version that prints something else is a failed job, not a wrong verdict.
 */
import { z } from "zod";
import { pooledShift } from "../engine/stats/hierarchical-bootstrap";

/** A shift is reported only from this ratio on (common practice, no source: 3 %, below the per-case floor). */
export const AB_MIN_RATIO = 1.03;

/**
 * An A/B says "same" only when its interval excludes a slowdown (and a speed-up) of this size: the
 * shipped per-case speed floor (app/runs/suite.ts `speedRatio`); a check judging a suite's
 * regressions uses that suite's floor.
 */
export const AB_CLEAR_RATIO = 1.1;

/**
 * The automatic confirmation of a speed finding: rounds of 6 blocks, up to 18 while unclear
 * (common practice, no source; 6 blocks cost about 20 s for four small cases).
 */
export const AB_CONFIRM_BLOCKS = { blocks: 6, maxBlocks: 18 } as const;

/**
 * The chance of a false "slower" an A/B sitting may take over all the verdicts it is asked for
 * (1 %, the product's false-alarm budget per suite run). A sitting that judges several groups at
 * once (a screened suite: every scheme) gives each group 1 − 0.01 / groups as its interval level
 * (Bonferroni; e.g. C. E. Bonferroni 1936, as in any multiple-comparisons text): five schemes at
 * 99 % each let through 0.8–3.0 % of unchanged suite runs in the detection-power simulation.
 */
export const AB_FAMILY_ERROR = 0.01;

/** The two-sided interval level of each verdict of a sitting that judges `groups` of them. */
export const abConfidenceFor = (groups: number): number => 1 - AB_FAMILY_ERROR / Math.max(1, Math.floor(groups));

/**
 * Bootstrap replicates for a percentile interval at `confidence`: 2,000, or enough to put at least
 * 10 replicates beyond each end (common practice, no source).
 */
export const abReplicatesFor = (confidence: number): number => Math.max(2000, Math.ceil(20 / (1 - confidence)));

/**
 * "slower" when the shift passes AB_MIN_RATIO and its interval lies above 1 (mirrored for
 * "faster"); "same" when neither holds and the interval lies below clearBelow: it excludes a
 * slowdown as large as the suite's floor, which is all a check of a slowdown asks (a possible
 * speed-up is no finding; until 2026-12-02 the interval also had to lie above 1/clearBelow, which
 * sent unchanged schemes to the last block for a question nobody asked). Otherwise "unclear": the
 * interval is too wide to tell a slowdown the suite cares about from none, and the comparison
 * must not be read as clearing the finding.
 */
export const abVerdictOf = (ratio: number, low: number, high: number, clearBelow = AB_CLEAR_RATIO): AbVerdictWord =>
  ratio > AB_MIN_RATIO && low > 1 ? "slower" : ratio < 1 / AB_MIN_RATIO && high < 1 ? "faster" : high < clearBelow ? "same" : "unclear";

/**
 * The pooled shift of several A/B cases: cases as the first stage of a two-stage bootstrap, each
 * case's paired block ratios (against 1) as the second (app/engine/stats/hierarchical-bootstrap.ts);
 * the shift is the geometric mean of the cases' ratios. Null with fewer than two usable cases.
 */
export function poolAbCases(cases: readonly { ratio: number | null; blockRatios: readonly number[] }[], confidence = 0.99): { ratio: number; low: number; high: number; verdict: AbVerdictWord; cases: number } | null {
  const usable = cases.filter((c) => c.ratio !== null && Number.isFinite(c.ratio) && c.blockRatios.length > 0);
  if (usable.length < 2) return null;
  const ratio = Math.exp(usable.reduce((a, c) => a + Math.log(c.ratio!), 0) / usable.length);
  const s = pooledShift(usable.map((c) => ({ x: c.blockRatios, y: c.blockRatios.map(() => 1) })), { confidence, seed: 11, replicates: abReplicatesFor(confidence) });
  return { ratio, low: s.low, high: s.high, verdict: abVerdictOf(ratio, s.low, s.high), cases: usable.length };
}

export const AB_VERDICTS = ["slower", "faster", "same", "unclear"] as const;
export type AbVerdictWord = (typeof AB_VERDICTS)[number];

/** JSON has no NaN: a case with no usable block prints null for its ratio and interval. */
const num = z.number().nullable();

export const abCaseSchema = z.object({
  key: z.string(),
  blockRatios: z.array(z.number()),
  ratio: num,
  low: num,
  high: num,
  verdict: z.enum(AB_VERDICTS),
  status: z.string(),
});

export const abResultSchema = z.object({
  base: z.string().regex(/^[0-9a-f]{40}$/),
  head: z.string().regex(/^[0-9a-f]{40}$/),
  blocks: z.number().int().min(1),
  repeats: z.number().int().min(1),
  cases: z.array(abCaseSchema),
  pooled: z.object({ ratio: z.number(), low: z.number(), high: z.number(), verdict: z.enum(AB_VERDICTS), cases: z.number().int() }).nullable(),
  method: z.string(),
  /** The interval level of every case and pool of the check (absent before 2026-12-03: 0.99). */
  confidence: z.number().gt(0).lt(1).optional(),
  /**
   * Stored with a check, not printed by the command: the verdict on each regression the check
   * judges, from that regression's own cases (a group's members pooled), so that a one-scheme
   * slowdown is not diluted by an unrelated case flagged in the same run.
   */
  judged: z
    .array(z.object({ regressionId: z.number().int(), cases: z.array(z.string()), ratio: num, low: num, high: num, verdict: z.enum(AB_VERDICTS).nullable() }))
    .optional(),
});
export type AbResultDoc = z.infer<typeof abResultSchema>;
export type AbJudged = NonNullable<AbResultDoc["judged"]>[number];

/**
 * The verdict on one regression from the A/B cases of `keys` (its own case, or a group's members):
 * one case's own verdict, or the pooled shift of several. `verdict` null when none was timed.
 */
/** What judging needs of a case of an A/B result. */
type AbCaseLike = { key: string; ratio: number | null; low: number | null; high: number | null; blockRatios: readonly number[] };

export function judgeRegression(r: { cases: readonly AbCaseLike[]; confidence?: number }, regressionId: number, keys: readonly string[], clearBelow = AB_CLEAR_RATIO): AbJudged {
  const mine = r.cases.filter((c) => keys.includes(c.key) && c.ratio !== null && c.low !== null && c.high !== null);
  if (mine.length === 1) {
    const c = mine[0]!;
    return { regressionId, cases: [c.key], ratio: c.ratio, low: c.low, high: c.high, verdict: abVerdictOf(c.ratio!, c.low!, c.high!, clearBelow) };
  }
  const p = poolAbCases(mine, r.confidence ?? 0.99);
  return p ? { regressionId, cases: mine.map((c) => c.key), ratio: p.ratio, low: p.low, high: p.high, verdict: abVerdictOf(p.ratio, p.low, p.high, clearBelow) } : { regressionId, cases: [], ratio: null, low: null, high: null, verdict: null };
}

export const abGroupSchema = z.object({
  cases: z.array(z.string().trim().min(1).max(300)).min(1).max(200),
  clearBelow: z.number().gt(1).max(10),
});
export type AbGroup = z.infer<typeof abGroupSchema>;

/**
 * Is any group's verdict still "unclear" (its cases pooled as `judgeRegression` pools them, judged
 * against its own floor)? A group none of whose cases could be timed counts as decided: more
 * blocks would not time it either.
 */
export function abGroupsUnclear(cases: readonly AbCaseLike[], groups: readonly AbGroup[], confidence = 0.99): boolean {
  return groups.some((g) => judgeRegression({ cases, confidence }, 0, g.cases, g.clearBelow).verdict === "unclear");
}

/** Payload of an "ab" job: compare `head` with `base` on a suite's cases (default: all of them). */
export const abJobPayload = z.object({
  base: z.string().trim().regex(/^[0-9a-f]{7,40}$/, "A commit is 7 to 40 hexadecimal characters."),
  head: z.string().trim().regex(/^[0-9a-f]{7,40}$/, "A commit is 7 to 40 hexadecimal characters."),
  suite: z.string().trim().regex(/^[a-z0-9][a-z0-9_-]{0,63}$/, "Suite names use a-z, 0-9, - and _ (at most 64)."),
  cases: z
    .array(z.string().trim().min(1).max(300).regex(/^[^,\s]+$/, "A case key has no commas or spaces."))
    .max(200, "At most 200 cases.")
    .optional(),
  /** Blocks of four trials per case (ABBA or BAAB); default 6. */
  blocks: z.number().int().min(2, "At least 2 blocks.").max(40, "At most 40 blocks.").optional(),
  /** While the verdict is "unclear", more rounds of `blocks` blocks, up to this many in all. */
  maxBlocks: z.number().int().min(2, "At least 2 blocks.").max(60, "At most 60 blocks.").optional(),
  /**
   * The verdicts the check is for: each a set of its cases and the slowdown it must exclude to clear
   * (a regression's, or a screened scheme's). More rounds run while any of them is "unclear"
   * (`abGroupsUnclear`); without groups, while the pooled verdict of all cases is.
   */
  groups: z.array(abGroupSchema).max(100, "At most 100 groups.").optional(),
});
export type AbJobPayload = z.infer<typeof abJobPayload>;

/**
 * Does the comparison say "slower"? With several cases the pooled verdict decides (one finding
 * for the group), with one case its own verdict. Null when no case could be timed.
 */
export function abSaysSlower(r: AbResultDoc, clearBelow = AB_CLEAR_RATIO): { slower: boolean; unclear: boolean; ratio: number; low: number; high: number } | null {
  const p = r.pooled ?? r.cases.find((x) => x.ratio !== null && x.low !== null && x.high !== null);
  if (!p) return null;
  const v = abVerdictOf(p.ratio!, p.low!, p.high!, clearBelow);
  return { slower: v === "slower", unclear: v === "unclear", ratio: p.ratio!, low: p.low!, high: p.high! };
}

/** "×1.412 [1.30, 1.55]" */
export function fmtAbRatio(ratio: number | null, low: number | null, high: number | null): string {
  if (ratio === null || !Number.isFinite(ratio)) return "—";
  const iv = low !== null && high !== null && Number.isFinite(low) && Number.isFinite(high) ? ` [${low.toFixed(3)}, ${high.toFixed(3)}]` : "";
  return `×${ratio.toFixed(3)}${iv}`;
}
