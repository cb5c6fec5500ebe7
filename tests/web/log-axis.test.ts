/**
 * The base-10 log axis of the comparison and regression charts (app/components/compare/log-axis.ts):
 * padded domains in decades, tick sets, power-of-ten labels, first/last tick labelled and thinning
 * of long axes. Every expected value below is worked out by hand from the definition of base-10
 * ticks (a tick at m·10^k sits at t = k + log10 m) and the padding rule stated in the module
 * (pad = max(0.15, 0.06 · span) decades each side; a single value gets one decade each side);
 * the arithmetic is written beside each case. Positions are compared to 1e-12 decade (round-off
 * of log10 on doubles is ~1e-16; 1e-12 leaves room, common practice, no source).
 * The linear companion (app/components/compare/linear-axis.ts, 1-2-5 steps) is checked at the end
 * the same way.
 */
import { describe, expect, it } from "vitest";
import { niceLinear } from "~/components/compare/linear-axis";
import { logDomain, loggable, logTickLabel, logTicks } from "~/components/compare/log-axis";

const TOL_DIGITS = 12; // toBeCloseTo(x, 12): |Δ| < 5e-13

function expectTicks(actual: number[], expected: number[]) {
  expect(actual.length).toBe(expected.length);
  expected.forEach((e, i) => expect(actual[i]!).toBeCloseTo(e, TOL_DIGITS));
}

/** Labels as the chart draws them: the first and the last tick always labelled. */
const labels = (ticks: number[]) => ticks.map((t, i) => logTickLabel(t, i === 0 || i === ticks.length - 1));

describe("loggable", () => {
  it("accepts only finite positive values", () => {
    expect(loggable(1e-300)).toBe(true);
    expect(loggable(3)).toBe(true);
    expect(loggable(0)).toBe(false);
    expect(loggable(-1)).toBe(false);
    expect(loggable(Number.NaN)).toBe(false);
    expect(loggable(Number.POSITIVE_INFINITY)).toBe(false);
  });
});

describe("logDomain", () => {
  it("is null when nothing can sit on a log axis", () => {
    expect(logDomain([])).toBeNull();
    expect(logDomain([0, -2, Number.NaN, Number.POSITIVE_INFINITY])).toBeNull();
  });

  it("gives a single value one decade either side", () => {
    // log10(100) = 2 → [2 − 1, 2 + 1]
    const d = logDomain([100])!;
    expect(d[0]).toBeCloseTo(1, TOL_DIGITS);
    expect(d[1]).toBeCloseTo(3, TOL_DIGITS);
  });

  it("pads a long span by 6 % of it", () => {
    // log10: −3 … 1, span 4 decades, pad = max(0.15, 0.06·4 = 0.24) = 0.24 → [−3.24, 1.24]
    const d = logDomain([1e-3, 0.02, 10])!;
    expect(d[0]).toBeCloseTo(-3.24, TOL_DIGITS);
    expect(d[1]).toBeCloseTo(1.24, TOL_DIGITS);
  });

  it("pads a short span by at least 0.15 decade and ignores values a log axis cannot show", () => {
    // log10: 0 … 1, span 1, pad = max(0.15, 0.06) = 0.15 → [−0.15, 1.15]; 0 and −5 are dropped
    const d = logDomain([0, -5, 1, 10])!;
    expect(d[0]).toBeCloseTo(-0.15, TOL_DIGITS);
    expect(d[1]).toBeCloseTo(1.15, TOL_DIGITS);
  });
});

describe("logTicks and logTickLabel", () => {
  it("uses every decade on a span over three decades", () => {
    // [−3.24, 1.24]: span 4.48 > 3 → mantissa 1 only; k from floor(−3.24) = −4 to ceil(1.24) = 2,
    // 7 decades ≤ 8 so none skipped; −4 and 2 lie outside → k = −3, −2, −1, 0, 1.
    const ticks = logTicks([-3.24, 1.24]);
    expectTicks(ticks, [-3, -2, -1, 0, 1]);
    expect(labels(ticks)).toEqual(["10⁻³", "10⁻²", "10⁻¹", "1", "10"]);
  });

  it("uses 1, 2, 5 per decade on a span of 1.2 to 3 decades", () => {
    // [−0.15, 1.15]: span 1.3 → mantissas 1, 2, 5; k = −1 … 2.
    // k = −1: −1, −0.699, −0.301 all < −0.15; k = 0: 0, log10 2 = 0.30103, log10 5 = 0.69897;
    // k = 1: 1 (1 + log10 2 = 1.301 > 1.15); k = 2: 2 > 1.15.
    const ticks = logTicks([-0.15, 1.15]);
    expectTicks(ticks, [0, Math.log10(2), Math.log10(5), 1]);
    expect(labels(ticks)).toEqual(["1", "2", "5", "10"]);
  });

  it("uses every mantissa on a short axis, labels 1, 2, 5 and always the two ends", () => {
    // Data 1e-3 … 3e-3: log10 −3 … −2.52288, span 0.47712, pad = max(0.15, 0.0286) = 0.15
    // → domain [−3.15, −2.37288]; span 0.77712 ≤ 1.2 → mantissas 1 … 9, k = −4 … −2.
    // k = −4: −4 + log10 7 = −3.1549 < −3.15 (out), −4 + log10 8 = −3.0969 and −4 + log10 9 = −3.0458 in;
    // k = −3: −3, −2.6990 (2), −2.5229 (3), −2.3979 (4) in, −2.3010 (5) > −2.37288 out; k = −2 out.
    const domain = logDomain([1e-3, 3e-3])!;
    expect(domain[0]).toBeCloseTo(-3.15, TOL_DIGITS);
    expect(domain[1]).toBeCloseTo(Math.log10(3e-3) + 0.15, TOL_DIGITS);
    const ticks = logTicks(domain);
    expectTicks(ticks, [-4 + Math.log10(8), -4 + Math.log10(9), -3, -3 + Math.log10(2), -3 + Math.log10(3), -3 + Math.log10(4)]);
    // 9 and 3 are minor mantissas (no label); 8·10⁻⁴ and 4·10⁻³ are the ends (always labelled).
    expect(labels(ticks)).toEqual(["8·10⁻⁴", "", "10⁻³", "2·10⁻³", "", "4·10⁻³"]);
  });

  it("thins a long axis to at most about eight labelled decades", () => {
    // logDomain([1e-10, 1e10]): span 20, pad = 0.06·20 = 1.2 → [−11.2, 11.2]; mantissa 1 only;
    // k = −12 … 12 is 25 decades → every ceil(25 / 8) = 4th decade, k ≡ 0 (mod 4):
    // −12 and 12 lie outside → −8, −4, 0, 4, 8.
    const domain = logDomain([1e-10, 1, 1e10])!;
    expect(domain[0]).toBeCloseTo(-11.2, TOL_DIGITS);
    expect(domain[1]).toBeCloseTo(11.2, TOL_DIGITS);
    const ticks = logTicks(domain);
    expectTicks(ticks, [-8, -4, 0, 4, 8]);
    expect(labels(ticks)).toEqual(["10⁻⁸", "10⁻⁴", "1", "10⁴", "10⁸"]);
  });

  it("keeps every second decade on nine decades", () => {
    // [0, 9]: k = 0 … 9 is 10 decades → every ceil(10 / 8) = 2nd: 0, 2, 4, 6, 8 (10 > 9 out).
    // 10² = 100 is written out (1 ≤ v < 10⁴), 10⁴ and beyond as powers.
    const ticks = logTicks([0, 9]);
    expectTicks(ticks, [0, 2, 4, 6, 8]);
    expect(labels(ticks)).toEqual(["1", "100", "10⁴", "10⁶", "10⁸"]);
  });

  it("writes values as powers of ten outside 1 … 10⁴ and leaves minor mantissas unlabelled", () => {
    expect(logTickLabel(Math.log10(1e-3))).toBe("10⁻³");
    expect(logTickLabel(Math.log10(2e-3))).toBe("2·10⁻³"); // k = floor(−2.699) = −3, m = 10^0.301 = 2
    expect(logTickLabel(Math.log10(5e-7))).toBe("5·10⁻⁷");
    expect(logTickLabel(Math.log10(1e-12))).toBe("10⁻¹²");
    expect(logTickLabel(Math.log10(500))).toBe("500");
    expect(logTickLabel(1)).toBe("10");
    expect(logTickLabel(4)).toBe("10⁴");
    expect(logTickLabel(Math.log10(2e5))).toBe("2·10⁵");
    // 3·10³ is a minor mantissa: blank unless forced (an end of the axis)
    expect(logTickLabel(Math.log10(3000))).toBe("");
    expect(logTickLabel(Math.log10(3000), true)).toBe("3000");
    expect(logTickLabel(Math.log10(7e5), true)).toBe("7·10⁵");
  });
});

describe("niceLinear (the linear axis next to it)", () => {
  it("picks the smallest 1-2-5 step with at most five steps and widens to whole steps", () => {
    // [0, 17.89]: span/5 = 3.578, base 10^0; 1 → 17.9 steps, 2 → 8.9, 5 → 3.6 ≤ 5 → step 5,
    // ⌈17.89/5⌉ = 4 → [0, 20]
    expect(niceLinear(0, 17.89)).toEqual({ step: 5, domain: [0, 20], ticks: [0, 5, 10, 15, 20] });
    // [0, 4.472]: base 10^−1; 0.1, 0.2, 0.5 give 44.7, 22.4, 8.9 steps; 1 gives 4.5 → step 1, [0, 5]
    expect(niceLinear(0, 4.472)).toEqual({ step: 1, domain: [0, 5], ticks: [0, 1, 2, 3, 4, 5] });
    // [0, 40]: base 1; 1, 2, 5 give 40, 20, 8 steps; 10 gives 4 → [0, 40]
    expect(niceLinear(0, 40)).toEqual({ step: 10, domain: [0, 40], ticks: [0, 10, 20, 30, 40] });
    // [−0.5, 0.5]: span/5 = 0.2, base 0.1; 0.1 → 10 steps, 0.2 → exactly 5 → step 0.2;
    // ⌊−2.5⌋ = −3, ⌈2.5⌉ = 3 → [−0.6, 0.6]
    expect(niceLinear(-0.5, 0.5)).toEqual({ step: 0.2, domain: [-0.6, 0.6], ticks: [-0.6, -0.4, -0.2, 0, 0.2, 0.4, 0.6] });
  });

  it("does not add a step when the data ends on one, and widens a single value by 1 each side", () => {
    // [0, 1]: step 0.2, 1/0.2 = 5 (4.999… in doubles) must snap to 5 → [0, 1]
    expect(niceLinear(0, 1).domain).toEqual([0, 1]);
    // [3, 3] → [2, 4]: span/5 = 0.4, base 0.1; 0.1 → 20, 0.2 → 10, 0.5 → 4 steps → step 0.5
    expect(niceLinear(3, 3)).toEqual({ step: 0.5, domain: [2, 4], ticks: [2, 2.5, 3, 3.5, 4] });
  });

  it("refuses non-finite or reversed ends", () => {
    expect(() => niceLinear(Number.NaN, 1)).toThrow(/finite lo ≤ hi/);
    expect(() => niceLinear(2, 1)).toThrow(/\[2, 1\]/);
  });
});
