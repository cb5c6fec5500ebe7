/**
 * A "nice" linear chart axis: the tick step is 1, 2 or 5 times a power of ten chosen so that
 * the data span [lo, hi] holds about `target` steps, and the domain is widened to whole steps
 * (lo' = ⌊lo/step⌋·step, hi' = ⌈hi/step⌉·step), so that both ends carry round labels instead of
 * the raw extremes (common practice, no source).
 */

/** Relative slack when snapping to whole steps, so that round-off does not add a step (common practice, no source). */
const SNAP = 1e-9;

/**
 * Step, widened domain and ticks for data in [lo, hi] (finite, lo ≤ hi; equal ends are widened
 * by 1 either side first). `target` is the wanted number of steps (default 5); the step is the
 * smallest of {1, 2, 5}·10^k with span/step ≤ target.
 */
export function niceLinear(lo: number, hi: number, target = 5): { step: number; domain: [number, number]; ticks: number[] } {
  if (!Number.isFinite(lo) || !Number.isFinite(hi) || lo > hi) throw new Error(`niceLinear: needs finite lo ≤ hi, got [${lo}, ${hi}]`);
  if (hi === lo) [lo, hi] = [lo - 1, hi + 1];
  const span = hi - lo;
  const base = 10 ** Math.floor(Math.log10(span / target));
  const step = [1, 2, 5, 10].map((m) => m * base).find((s) => span / s <= target * (1 + SNAP)) ?? 10 * base;
  const n0 = Math.floor(lo / step + SNAP);
  const n1 = Math.ceil(hi / step - SNAP);
  const clean = (v: number) => Number(v.toPrecision(12));
  const ticks: number[] = [];
  for (let n = n0; n <= n1; n++) ticks.push(clean(n * step));
  return { step, domain: [clean(n0 * step), clean(n1 * step)], ticks };
}
