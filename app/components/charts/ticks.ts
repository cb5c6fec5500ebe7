/**
 * Axis ticks at round values with labels that always differ: the "nice numbers" method of
 * P. S. Heckbert, "Nice numbers for graph labels", Graphics Gems (1990), pp. 61–63 — the step is
 * 1, 2 or 5 × 10^k, ticks are its multiples, and each label carries exactly as many digits as
 * the step needs. A nearly flat series (a costate that hardly moves, a metric that is constant
 * to 1e-10) therefore gets ticks such as −1.5301e-4, −1.5302e-4 instead of five copies of
 * −1.53e-4, and a time axis from 0.2865 to 2.287 gets 0.5, 1, 1.5, 2.
 */

export interface TickPlan {
  /** Tick values, ascending. */
  ticks: number[];
  /** Axis bounds: the data bounds (`tight`) or the outermost ticks. */
  domain: [number, number];
  format: (v: number) => string;
}

/** 1, 2, 5 or 10 × 10^k nearest to x (rounded) or at least x (not rounded) — Heckbert's nicenum. */
function niceNumber(x: number, round: boolean): number {
  const exp = Math.floor(Math.log10(x));
  const f = x / 10 ** exp;
  const nf = round ? (f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10) : f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
  return nf * 10 ** exp;
}

/**
 * Ticks for data in [lo, hi], about `count` of them. `tight`: the domain stays [lo, hi] and only
 * ticks inside it are kept (a time axis that should end where the data end); otherwise the
 * domain is widened to the outermost ticks. Equal bounds are spread by 1e-3 of their magnitude
 * (1e-9 at zero) so that a constant series still gets an axis.
 */
export function niceTicks(lo: number, hi: number, count = 5, tight = false): TickPlan {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return { ticks: [], domain: [0, 1], format: String };
  if (hi < lo) [lo, hi] = [hi, lo];
  if (hi - lo <= 1e-12 * Math.max(Math.abs(lo), Math.abs(hi))) {
    const mid = 0.5 * (lo + hi);
    const half = Math.max(1e-3 * Math.abs(mid), 1e-9);
    lo = mid - half;
    hi = mid + half;
  }
  // a widened axis rounds its range first (Heckbert); a tight one keeps the data's own range
  const range = tight ? hi - lo : niceNumber(hi - lo, false);
  const step = niceNumber(range / Math.max(1, count - 1), true);
  const first = Math.ceil((tight ? lo : Math.floor(lo / step) * step) / step - 1e-9);
  const last = Math.floor((tight ? hi : Math.ceil(hi / step) * step) / step + 1e-9);
  const ticks: number[] = [];
  for (let k = first; k <= last; k++) ticks.push(k * step);
  const domain: [number, number] = tight ? [lo, hi] : [ticks[0]!, ticks[ticks.length - 1]!];
  return { ticks, domain, format: tickFormat(step, ticks) };
}

/** Labels with as many digits as `step` needs: fixed notation for ordinary magnitudes, else exponential. */
export function tickFormat(step: number, ticks: number[]): (v: number) => string {
  const stepExp = Math.floor(Math.log10(step) + 1e-9);
  const big = Math.max(...ticks.map((t) => Math.abs(t)), Math.abs(step));
  const bigExp = Math.floor(Math.log10(big) + 1e-9);
  const exponential = big >= 1e5 || big < 1e-3;
  return (v: number) => {
    if (!Number.isFinite(v)) return "";
    if (Math.abs(v) < step * 1e-6) return "0";
    if (exponential) return v.toExponential(Math.max(0, bigExp - stepExp));
    return v.toFixed(Math.max(0, -stepExp));
  };
}
