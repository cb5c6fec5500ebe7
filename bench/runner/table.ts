/** Plain-text tables for the end-of-run summary (monospace, right-aligned numbers). */
import { isSolved, type CaseOutcome } from "../../app/runs/types";
export function renderTable(header: string[], rows: string[][]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? "").length)));
  const isNum = (s: string) => /^[-+]?[\d.]+(e[-+]?\d+)?( s)?$|^—$/.test(s);
  const line = (cells: string[]) => cells.map((c, i) => (isNum(c) ? c.padStart(widths[i]) : c.padEnd(widths[i]))).join("  ").trimEnd();
  return [line(header), widths.map((w) => "-".repeat(w)).join("  "), ...rows.map(line)].join("\n");
}

export const fmtNum = (v: number | null | undefined, digits = 3): string =>
  v === null || v === undefined || !Number.isFinite(v) ? "—" : Math.abs(v) >= 1e-3 && Math.abs(v) < 1e4 ? v.toPrecision(digits) : v.toExponential(digits - 1);

/** Counts for a one-line verdict. */
export function tally(outcomes: CaseOutcome[]): { solved: number; failed: number; timeouts: number; errors: number } {
  let solved = 0;
  let failed = 0;
  let timeouts = 0;
  let errors = 0;
  for (const o of outcomes) {
    if (isSolved(o.status)) solved++;
    else if (o.status === "timeout") timeouts++;
    else if (o.status === "error") errors++;
    else failed++;
  }
  return { solved, failed, timeouts, errors };
}
