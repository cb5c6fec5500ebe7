/**
 * Chart ticks (app/components/charts/ticks.ts, after Heckbert, "Nice numbers for graph labels",
 * Graphics Gems, 1990): labels of a nearly flat series differ, time ticks fall on 1-2-5 steps.
 * The two inputs are the cases seen on the case page: a costate constant to 4 digits around
 * −1.53e-4, and a time axis running from 0.2865 to 2.287.
 */
import { describe, expect, it } from "vitest";
import { niceTicks } from "~/components/charts/ticks";

const distinct = (xs: string[]) => new Set(xs).size === xs.length;

describe("nice ticks", () => {
  it("a nearly flat series gets distinct labels", () => {
    const plan = niceTicks(-1.53012e-4, -1.52991e-4);
    const labels = plan.ticks.map(plan.format);
    expect(labels.length).toBeGreaterThanOrEqual(3);
    expect(distinct(labels)).toBe(true);
    expect(plan.domain[0]).toBeLessThanOrEqual(-1.53012e-4);
    expect(plan.domain[1]).toBeGreaterThanOrEqual(-1.52991e-4);
    // a constant series too
    const flat = niceTicks(-1.53e-4, -1.53e-4);
    expect(distinct(flat.ticks.map(flat.format))).toBe(true);
    expect(flat.ticks.length).toBeGreaterThanOrEqual(3);
  });

  it("time ticks are round multiples of a 1-2-5 step inside the data range", () => {
    const plan = niceTicks(0.2865, 2.287, 5, true);
    expect(plan.domain).toEqual([0.2865, 2.287]);
    expect(plan.ticks.map(plan.format)).toEqual(["0.5", "1.0", "1.5", "2.0"]);
    const long = niceTicks(0, 17.888543819998, 5, true);
    expect(long.ticks.map(long.format)).toEqual(["0", "5", "10", "15"]);
  });

  it("ordinary and large ranges", () => {
    const a = niceTicks(0.013, 0.987);
    expect(a.ticks.map(a.format)).toEqual(["0", "0.2", "0.4", "0.6", "0.8", "1.0"]);
    const b = niceTicks(1.2e6, 3.9e6);
    const lb = b.ticks.map(b.format);
    expect(distinct(lb)).toBe(true);
    expect(lb[0]).toMatch(/e\+6$/);
  });
});
