/**
 * Cost of the statistics the regression check runs per case (npx tsx bench/stats.bench.ts).
 * Prints the best of 5 runs of each (the machine is shared; the minimum is least disturbed).
 * Target (common practice, no source): the whole check of a 25-case suite well under a second.
 */
import { mannWhitneyU, exactUDistribution } from "../app/engine/stats/mann-whitney";
import { bootstrapMedianRatio } from "../app/engine/stats/bootstrap";
import { pelt } from "../app/engine/stats/change-point";
import { createPrng } from "../app/engine/stats/prng";

const rng = createPrng(7);
const sample = (n: number, m: number) => Array.from({ length: n }, () => m * (1 + 0.1 * (rng.next() - 0.5)));

function best(label: string, fn: () => void, reps = 5): number {
  let t = Infinity;
  for (let r = 0; r < reps; r++) {
    const t0 = performance.now();
    fn();
    t = Math.min(t, performance.now() - t0);
  }
  console.log(`${label.padEnd(58)} ${t.toFixed(2).padStart(9)} ms`);
  return t;
}

const x10 = sample(10, 1.1);
const y10 = sample(10, 1);
const x50 = sample(50, 1.1);
const y50 = sample(50, 1);
best("exact U distribution 50×50 (first call; cached afterwards)", () => exactUDistribution(50, 50), 1);
const mw = best("Mann–Whitney 25 cases × (10 vs 10), exact", () => {
  for (let k = 0; k < 25; k++) mannWhitneyU(x10, y10, { alternative: "greater" });
});
const bs = best("bootstrap CI 25 cases × (10 vs 10), B = 2000", () => {
  for (let k = 0; k < 25; k++) bootstrapMedianRatio(x10, y10, { replicates: 2000, seed: k });
});
best("bootstrap CI 50 vs 50, B = 2000, BCa", () => bootstrapMedianRatio(x50, y50, { replicates: 2000, method: "bca" }));
const series = Array.from({ length: 30 }, (_, i) => (i < 20 ? 0 : 0.2) + 0.01 * (rng.next() - 0.5));
const pe = best("PELT 25 cases × 30-run history", () => {
  for (let k = 0; k < 25; k++) pelt(series);
});
console.log(`regression statistics for a 25-case suite: ${(mw + bs + pe).toFixed(1)} ms`);
