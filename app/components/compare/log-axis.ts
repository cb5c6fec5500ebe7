/**
 * A base-10 logarithmic chart axis drawn on a linear axis: values are plotted as t = log10(v),
 * the domain is padded in decades, and ticks are placed at 10^k (and at 2·10^k, 5·10^k or
 * every m·10^k when the axis spans few decades) with labels written as powers of ten.
 * Plotting log10 values keeps the charting library's linear scale, whose ticks and clipping
 * we control exactly (its own log scale picks linear-looking ticks on short spans).
 */

/** Share of the data span (in decades) added on each side of a log axis (common practice, no source). */
const PAD_DECADES = 0.06;

const SUPERSCRIPT: Record<string, string> = { "-": "⁻", "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };
const sup = (k: number) => [...String(k)].map((c) => SUPERSCRIPT[c] ?? c).join("");

/** Whether v can sit on a log axis (finite and > 0). */
export const loggable = (v: number) => Number.isFinite(v) && v > 0;

/**
 * Domain [t0, t1] in log10 units covering the positive finite values, padded by PAD_DECADES of
 * the span (at least 0.15 decade) on each side; a single value gets one decade either side.
 * Returns null when no value is loggable.
 */
export function logDomain(values: readonly number[]): [number, number] | null {
  const ts = values.filter(loggable).map(Math.log10);
  if (ts.length === 0) return null;
  const lo = Math.min(...ts);
  const hi = Math.max(...ts);
  if (hi - lo < 1e-12) return [lo - 1, hi + 1];
  const pad = Math.max(0.15, PAD_DECADES * (hi - lo));
  return [lo - pad, hi + pad];
}

/**
 * Tick positions (log10 units) inside [t0, t1]: mantissas 1…9 when the axis spans ≤ 1.2
 * decades, 1, 2, 5 up to 3 decades, otherwise every decade (every second or third one beyond
 * eight decades, so that labels do not collide).
 */
export function logTicks([t0, t1]: [number, number]): number[] {
  const span = t1 - t0;
  const mantissas = span <= 1.2 ? [1, 2, 3, 4, 5, 6, 7, 8, 9] : span <= 3 ? [1, 2, 5] : [1];
  const eps = 1e-9;
  const out: number[] = [];
  const kLo = Math.floor(t0);
  const kHi = Math.ceil(t1);
  const every = mantissas.length > 1 ? 1 : Math.max(1, Math.ceil((kHi - kLo + 1) / 8));
  for (let k = kLo; k <= kHi; k++) {
    if (mantissas.length === 1 && ((k % every) + every) % every !== 0) continue;
    for (const m of mantissas) {
      const t = k + Math.log10(m);
      if (t >= t0 - eps && t <= t1 + eps) out.push(t);
    }
  }
  return out;
}

/**
 * 10^t as a tick label: "1", "20", "500" for 1 ≤ v < 10⁴, else "10⁻³" or "2·10⁻³". Minor
 * mantissas other than 1, 2, 5 get no label unless `always` (the first and last tick, so that a
 * short axis is never unlabelled at an end).
 */
export function logTickLabel(t: number, always = false): string {
  const k = Math.floor(t + 1e-9);
  const m = Math.round(10 ** (t - k));
  if (!always && m !== 1 && m !== 2 && m !== 5) return "";
  if (k >= 0 && k <= 3) return String(m * 10 ** k);
  return m === 1 ? `10${sup(k)}` : `${m}·10${sup(k)}`;
}
