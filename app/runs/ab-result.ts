/**
 * The verdict of an interleaved A/B comparison as a document: what `bench --ab … --json` prints
 * (bench/runner/ab.ts builds it) and what an "ab" job stores (ab_checks.result_json). Pure: no
 * database, no git. The job worker parses the command's output with `abResultSchema`, so a
 * command of another version that prints something else is a failed job, not a wrong verdict.
 */
import { z } from "zod";

export const AB_VERDICTS = ["slower", "faster", "same"] as const;
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
});
export type AbResultDoc = z.infer<typeof abResultSchema>;

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
});
export type AbJobPayload = z.infer<typeof abJobPayload>;

/**
 * Does the comparison say "slower"? With several cases the pooled verdict decides (one finding
 * for the group), with one case its own verdict. Null when no case could be timed.
 */
export function abSaysSlower(r: AbResultDoc): { slower: boolean; ratio: number; low: number; high: number } | null {
  if (r.pooled) return { slower: r.pooled.verdict === "slower", ratio: r.pooled.ratio, low: r.pooled.low, high: r.pooled.high };
  const c = r.cases.find((x) => x.ratio !== null && x.low !== null && x.high !== null);
  if (!c) return null;
  return { slower: c.verdict === "slower", ratio: c.ratio!, low: c.low!, high: c.high! };
}

/** "×1.412 [1.30, 1.55]" */
export function fmtAbRatio(ratio: number | null, low: number | null, high: number | null): string {
  if (ratio === null || !Number.isFinite(ratio)) return "—";
  const iv = low !== null && high !== null && Number.isFinite(low) && Number.isFinite(high) ? ` [${low.toFixed(3)}, ${high.toFixed(3)}]` : "";
  return `×${ratio.toFixed(3)}${iv}`;
}
