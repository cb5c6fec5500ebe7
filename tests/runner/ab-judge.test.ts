/**
 * An A/B check judges each regression on its own cases (app/runs/ab-result.ts `judgeRegression`):
 * seen 2026-12-02 on a loaded 2-core machine, a planted ×1.5 slowdown of the five Hermite–Simpson
 * cases was flagged as one scheme group, together with a false per-case flag on a trapezoidal case;
 * pooling all six cases in one verdict gave ×1.275 [0.928, 1.642] and cleared the real slowdown.
 * The block ratios below are shaped like that run's (six blocks per case, spread of a loaded
 * machine); they are test data, not measurements.
 */
import { describe, expect, it } from "vitest";
import { abConfidenceFor, abGroupsUnclear, abReplicatesFor, abVerdictOf, judgeRegression, poolAbCases, type AbResultDoc } from "~/runs/ab-result";

const H = "a".repeat(40);
const slowBlocks = [[1.9, 1.2, 1.6, 1.4, 2.1, 1.3], [1.7, 1.5, 1.2, 1.9, 1.4, 1.6], [1.3, 1.8, 1.5, 1.6, 1.2, 1.9], [1.6, 1.4, 2.0, 1.3, 1.5, 1.7], [1.5, 1.7, 1.4, 1.8, 1.6, 1.2]];
const sameBlocks = [0.55, 0.8, 0.62, 0.7, 0.9, 0.6];
const gm = (v: number[]) => Math.exp(v.reduce((a, x) => a + Math.log(x), 0) / v.length);
const c = (key: string, b: number[]) => ({ key, blockRatios: b, ratio: gm(b), low: Math.min(...b), high: Math.max(...b), verdict: "same" as const, status: "optimal" });

const doc: AbResultDoc = {
  base: H,
  head: "b".repeat(40),
  blocks: 6,
  repeats: 3,
  method: "test",
  pooled: null,
  cases: [...slowBlocks.map((b, i) => c(`p${i}/hermite-simpson/12`, b)), c("p0/trapezoidal/12", sameBlocks)],
};

describe("an A/B check judges each regression on its own cases", () => {
  it("confirms a scheme group and clears an unrelated case that one pooled verdict would have mixed", () => {
    const hs = slowBlocks.map((_, i) => `p${i}/hermite-simpson/12`);
    const group = judgeRegression(doc, 1, hs);
    expect(group.cases).toEqual(hs);
    expect(group.verdict).toBe("slower");
    expect(group.low!).toBeGreaterThan(1);
    const lone = judgeRegression(doc, 2, ["p0/trapezoidal/12"]);
    expect(lone.cases).toEqual(["p0/trapezoidal/12"]);
    // One case, faster than its baseline: cleared.
    expect(lone.verdict).toBe("faster");
    // All six pooled: the unrelated case drags the interval across 1, and it still reaches far above
    // the speed floor: neither a slowdown nor a clearing.
    const all = poolAbCases(doc.cases)!;
    expect(all.low).toBeLessThan(1);
    expect(all.high).toBeGreaterThan(1.1);
    expect(all.verdict).toBe("unclear");
  });

  it("runs more blocks while any verdict the check is for is unclear, not while the pooled one is", () => {
    const hs = slowBlocks.map((_, i) => `p${i}/hermite-simpson/12`);
    // The scheme group (slower) and the lone case (faster) are both decided, though all six pooled are not.
    expect(abGroupsUnclear(doc.cases, [{ cases: hs, clearBelow: 1.05 }, { cases: ["p0/trapezoidal/12"], clearBelow: 1.2 }])).toBe(false);
    expect(poolAbCases(doc.cases)!.verdict).toBe("unclear");
    // A group that mixes them is not: the check goes on.
    expect(abGroupsUnclear(doc.cases, [{ cases: hs, clearBelow: 1.05 }, { cases: [...hs, "p0/trapezoidal/12"], clearBelow: 1.05 }])).toBe(true);
    // A group none of whose cases was timed does not hold the check open.
    expect(abGroupsUnclear(doc.cases, [{ cases: ["nowhere/euler/1"], clearBelow: 1.05 }])).toBe(false);
  });

  it("clears only an interval that excludes the suite's speed floor", () => {
    // The intervals are CI's of 2026-12-02 (tests/runner/power-e2e.test.ts): an unchanged rerun
    // ×1.041 [0.932, 1.156] and a planted ×1.5 slowdown of one case ×1.347 [0.986, 1.795].
    expect(abVerdictOf(1.347, 0.986, 1.795)).toBe("unclear");
    expect(abVerdictOf(1.041, 0.932, 1.156)).toBe("unclear");
    expect(abVerdictOf(1.041, 0.932, 1.156, 1.2)).toBe("same");
    expect(abVerdictOf(1.02, 0.96, 1.08)).toBe("same");
    expect(abVerdictOf(1.3, 1.05, 1.6)).toBe("slower");
    // Above 1 but below the ×1.03 reporting floor: not a slowdown worth a finding, and cleared.
    expect(abVerdictOf(1.02, 1.005, 1.04)).toBe("same");
    expect(abVerdictOf(0.7, 0.6, 0.8)).toBe("faster");
    // A possible speed-up does not hold a slowdown check open: the interval excludes the floor.
    expect(abVerdictOf(0.97, 0.9, 1.04, 1.05)).toBe("same");
    expect(abVerdictOf(0.97, 0.9, 1.06, 1.05)).toBe("unclear");
    // A judged regression uses the floor it is given.
    const one = { ...doc, cases: [c("q/euler/4", [1.05, 1.1, 1.0, 1.12, 1.08, 1.02])] };
    const j = judgeRegression(one, 9, ["q/euler/4"], 1.2);
    expect(j.verdict).toBe("same");
  });

  it("shares one 1 % false-alarm budget among the verdicts of one sitting", () => {
    // Bonferroni: m tests at level α/m each keep the chance of any false rejection below α
    // (e.g. Y. Hochberg & A. C. Tamhane, "Multiple Comparison Procedures", Wiley 1987, ch. 2).
    expect(abConfidenceFor(1)).toBeCloseTo(0.99, 12);
    expect(abConfidenceFor(5)).toBeCloseTo(0.998, 12);
    expect(abConfidenceFor(0)).toBeCloseTo(0.99, 12);
    // Enough replicates to put 10 beyond each end of the interval.
    expect(abReplicatesFor(0.99)).toBe(2000);
    expect(abReplicatesFor(0.998)).toBe(10000);
    // A check stored at 99.8 % judges its groups at 99.8 %: a wider interval than at 99 %.
    const hs = slowBlocks.map((_, i) => `p${i}/hermite-simpson/12`);
    const at99 = judgeRegression(doc, 1, hs);
    const at998 = judgeRegression({ ...doc, confidence: 0.998 }, 1, hs);
    expect(at998.low!).toBeLessThan(at99.low!);
    expect(at998.high!).toBeGreaterThan(at99.high!);
    expect(at998.ratio).toBeCloseTo(at99.ratio!, 12);
  });

  it("says so when none of a regression's cases was timed", () => {
    expect(judgeRegression(doc, 3, ["nowhere/euler/4"])).toEqual({ regressionId: 3, cases: [], ratio: null, low: null, high: null, verdict: null });
  });
});
