/**
 * Plain-text lines describing a refinement, for the command line (one line per pass, then the
 * total). Numbers only; the caller decides where they go.
 */
import type { AdaptiveReport, RefinementPass } from "./adaptive";

const e = (v: number | null) => (v === null ? "—" : Number.isFinite(v) ? v.toExponential(2) : String(v));

export function passLine(p: RefinementPass): string {
  const change = p.change === null ? "" : "added" in p.change ? `, +${p.change.added} points` : `, ${p.change.raised} raised in degree, ${p.change.split} split`;
  return `  pass ${String(p.pass).padStart(2)}  ${String(p.intervals).padStart(5)} intervals  ${String(p.points).padStart(6)} points  ${p.status.padEnd(16)} ${String(p.iterations).padStart(4)} iterations  ${p.seconds.toFixed(3)} s  largest estimate ${e(p.maxEstimate)}${change}`;
}

export function refinementLines(r: AdaptiveReport): string[] {
  const verdict =
    r.stop === "met" ? `tolerance ${e(r.tolerance)} met` :
    r.stop === "solver" ? `stopped: pass ${r.passes.length} did not converge` :
    r.stop === "size" ? `stopped: the next mesh would exceed the interval limit` :
    `stopped: pass limit reached with the largest estimate above ${e(r.tolerance)}`;
  return [
    `  refinement   ${r.method ?? "—"}; ${verdict}`,
    ...r.passes.map(passLine),
    `  total        ${r.passes.length} passes, ${r.totalIterations} iterations, ${r.totalSeconds.toFixed(3)} s`,
  ];
}
