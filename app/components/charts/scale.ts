/**
 * Arcwatch's own colour scale for the run matrix, "ember to tide": a value in [0, 1] (0 best)
 * is mapped to a colour between a teal (good), a pale sand (middling) and a burnt red (bad),
 * interpolated in linear RGB so that the midpoint is not muddy. Errors and times span decades,
 * so they are placed on the scale by log10 between two bounds (`logPosition`).
 */
const STOPS: [number, [number, number, number]][] = [
  [0, [13, 117, 96]], // teal, --aw-good (light theme)
  [0.5, [226, 196, 120]], // sand
  [1, [179, 38, 30]], // brick, --aw-bad (light theme)
];

const toLinear = (c: number) => {
  const s = c / 255;
  return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
};
const toSrgb = (l: number) => Math.round(255 * (l <= 0.0031308 ? 12.92 * l : 1.055 * l ** (1 / 2.4) - 0.055));

export function scaleColour(x: number): string {
  const v = Math.min(1, Math.max(0, Number.isFinite(x) ? x : 1));
  let i = 0;
  while (i < STOPS.length - 2 && v > STOPS[i + 1]![0]) i++;
  const [a, ca] = STOPS[i]!;
  const [b, cb] = STOPS[i + 1]!;
  const f = (v - a) / (b - a);
  const rgb = ca.map((c, k) => toSrgb(toLinear(c) + f * (toLinear(cb[k]!) - toLinear(c))));
  return `rgb(${rgb[0]}, ${rgb[1]}, ${rgb[2]})`;
}

/** Position of `value` on [lo, hi] by log10, clamped to [0, 1]; null/≤0 values sit at 0 (exact). */
export function logPosition(value: number | null, lo: number, hi: number): number {
  if (value === null || !Number.isFinite(value)) return 1;
  if (value <= lo) return 0;
  return Math.min(1, Math.log10(value / lo) / Math.log10(hi / lo));
}

/** Black or white text, whichever reads better on the background (relative luminance, WCAG 2). */
export function inkOn(rgb: string): string {
  const m = /rgb\((\d+), (\d+), (\d+)\)/.exec(rgb);
  if (!m) return "#000";
  const L = 0.2126 * toLinear(+m[1]!) + 0.7152 * toLinear(+m[2]!) + 0.0722 * toLinear(+m[3]!);
  return L > 0.18 ? "#16202b" : "#ffffff";
}
