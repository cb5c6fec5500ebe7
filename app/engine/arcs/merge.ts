/**
 * Runs of equal pointwise labels and the minimum-length filter that removes spurious short runs
 * (mesh noise, pseudospectral ringing near junctions, isolated points touching a bound).
 *
 * A run covers grid points k0..k1 (inclusive); its extent runs from the midpoint with the previous
 * point to the midpoint with the next (t0 / tf at the ends). Common practice, no source.
 */

export interface Run {
  label: string;
  /** First and last grid index belonging to the run. */
  k0: number;
  k1: number;
}

export function runsOf(labels: string[]): Run[] {
  const runs: Run[] = [];
  for (let k = 0; k < labels.length; k++) {
    const last = runs[runs.length - 1];
    if (last && last.label === labels[k] && last.k1 === k - 1) last.k1 = k;
    else runs.push({ label: labels[k], k0: k, k1: k });
  }
  return runs;
}

/** Extent [a, b] of a run on grid t (t0, tf at the ends of the grid). */
export function runExtent(run: Run, t: ArrayLike<number>, t0: number, tf: number): [number, number] {
  const n = t.length;
  const a = run.k0 === 0 ? t0 : 0.5 * (t[run.k0 - 1] + t[run.k0]);
  const b = run.k1 === n - 1 ? tf : 0.5 * (t[run.k1] + t[run.k1 + 1]);
  return [a, b];
}

/** Share of a label needed for fragments to form an arc inside a gap (common practice, no source). */
export const gapMajority = 0.75;

/**
 * Filtered runs. A run is stable when its extent is at least minDuration and it has at least
 * minPoints grid points; only stable runs and
 * clear majorities inside the gaps between them become arcs, so fragments never add up into a
 * spurious arc (ringing mixes labels) while a real arc broken by noise (one label holding at least
 * gapMajority of a gap at least minDuration long) survives. Consecutive arcs with the same label
 * merge. Returned runs may leave gaps (k0 > previous k1 + 1): the junction lies inside the gap.
 */
export function filterRuns(input: Run[], t: ArrayLike<number>, t0: number, tf: number, minDuration: number, minPoints = 1): Run[] {
  if (input.length <= 1) return input.map((r) => ({ ...r }));
  const len = (r: Run) => {
    const [a, b] = runExtent(r, t, t0, tf);
    return b - a;
  };
  const stable = input.filter((r) => len(r) >= minDuration && r.k1 - r.k0 + 1 >= minPoints).map((r) => ({ ...r }));
  const nLast = input[input.length - 1].k1;
  if (stable.length === 0) {
    const longest = input.reduce((a, b) => (len(b) > len(a) ? b : a));
    return [{ label: longest.label, k0: 0, k1: nLast }];
  }
  // Majority arcs inside gaps (including before the first and after the last stable run).
  const out: Run[] = [];
  const gapArc = (k0: number, k1: number): Run | null => {
    if (k1 < k0) return null;
    const frag = input.filter((r) => r.k0 >= k0 && r.k1 <= k1);
    const [a] = runExtent({ label: "", k0, k1 }, t, t0, tf);
    const [, b] = runExtent({ label: "", k0, k1 }, t, t0, tf);
    if (b - a < minDuration) return null;
    const share = new Map<string, number>();
    for (const r of frag) share.set(r.label, (share.get(r.label) ?? 0) + len(r));
    for (const [label, d] of share) {
      const mine = frag.filter((r) => r.label === label);
      const points = mine.reduce((n, r) => n + r.k1 - r.k0 + 1, 0);
      if (d >= gapMajority * (b - a) && points >= minPoints) return { label, k0: mine[0].k0, k1: mine[mine.length - 1].k1 };
    }
    return null;
  };
  let prevEnd = -1;
  for (const s of stable) {
    const g = gapArc(prevEnd + 1, s.k0 - 1);
    if (g) out.push(g);
    out.push(s);
    prevEnd = s.k1;
  }
  const tail = gapArc(prevEnd + 1, nLast);
  if (tail) out.push(tail);
  // Merge equal neighbours; extend the ends to the grid ends.
  const merged: Run[] = [];
  for (const r of out) {
    const last = merged[merged.length - 1];
    if (last && last.label === r.label) last.k1 = r.k1;
    else merged.push({ ...r });
  }
  merged[0].k0 = 0;
  merged[merged.length - 1].k1 = nLast;
  return merged;
}
