/**
 * Trajectory CSV files (reference.csv, guess.csv): a header row `t,<names...>`, then one row of
 * numbers per time, times strictly increasing. Comma separated, no quoting; blank lines and
 * lines starting with '#' are skipped. Errors name the file, the line and the column (1-based
 * character position in the line).
 */
import type { ProblemError } from "./errors";

export interface CsvTable {
  header: string[];
  /** 1-based line number of the header row. */
  headerLine: number;
  /** Column of each header entry, 1-based character position (for messages). */
  headerColumns: number[];
  /** False when a row had errors (reported): then only the header may be used. */
  valid: boolean;
  /** columns[k] holds the values of header[k]. */
  columns: Float64Array[];
}

/** At most this many rows (a bound on hostile input; 10⁶ rows ≈ a 4th-order fine mesh many times over). */
export const MAX_CSV_ROWS = 1_000_000;

/** Parses the table; null only when there is no header. Check `valid` before using the values. */
export function parseTrajectoryCsv(text: string, file: string, errors: ProblemError[]): CsvTable | null {
  const before = errors.length;
  const lines = text.split(/\r?\n/);
  let headerLine = -1;
  for (let i = 0; i < lines.length; i++) {
    const s = lines[i].trim();
    if (s === "" || s.startsWith("#")) continue;
    headerLine = i;
    break;
  }
  if (headerLine < 0) {
    errors.push({ file, path: "line 1", message: "empty file: expected a header row 't,<names...>'" });
    return null;
  }
  const cells = splitCells(lines[headerLine]);
  const header = cells.map((c) => c.text);
  const headerColumns = cells.map((c) => c.column);
  const hpath = `line ${headerLine + 1}`;
  if (header[0] !== "t") {
    errors.push({ file, path: hpath, column: headerColumns[0], message: `the first column must be 't', found '${header[0]}'` });
  }
  const seen = new Set<string>();
  header.forEach((h, k) => {
    if (h === "") errors.push({ file, path: hpath, column: headerColumns[k], message: "empty column name" });
    else if (seen.has(h)) errors.push({ file, path: hpath, column: headerColumns[k], message: `duplicate column '${h}'` });
    seen.add(h);
  });
  const values: number[][] = header.map(() => []);
  let rows = 0;
  let lastT = -Infinity;
  for (let i = headerLine + 1; i < lines.length; i++) {
    const raw = lines[i];
    const s = raw.trim();
    if (s === "" || s.startsWith("#")) continue;
    const path = `line ${i + 1}`;
    if (++rows > MAX_CSV_ROWS) {
      errors.push({ file, path, message: `more than ${MAX_CSV_ROWS} rows` });
      break;
    }
    const row = splitCells(raw);
    if (row.length !== header.length) {
      errors.push({ file, path, message: `expected ${header.length} values (as in the header), found ${row.length}` });
      if (errors.length - before > 20) break;
      continue;
    }
    row.forEach((c, k) => {
      const v = c.text === "" ? NaN : Number(c.text);
      if (!Number.isFinite(v)) {
        errors.push({ file, path, column: c.column, message: `'${c.text.slice(0, 30)}' is not a finite number (column '${header[k]}')` });
      }
      values[k].push(v);
    });
    const t = values[0][values[0].length - 1];
    if (Number.isFinite(t)) {
      if (!(t > lastT)) errors.push({ file, path, column: row[0].column, message: `times must increase strictly (${t} after ${lastT})` });
      lastT = t;
    }
    if (errors.length - before > 20) break;
  }
  if (rows < 2 && errors.length === before) {
    errors.push({ file, path: `line ${headerLine + 1}`, message: "at least two rows of values are needed" });
  }
  return {
    header,
    headerLine: headerLine + 1,
    headerColumns,
    valid: errors.length === before,
    columns: values.map((v) => Float64Array.from(v)),
  };
}

function splitCells(line: string): { text: string; column: number }[] {
  const out: { text: string; column: number }[] = [];
  let start = 0;
  for (let i = 0; i <= line.length; i++) {
    if (i === line.length || line[i] === ",") {
      const piece = line.slice(start, i);
      const lead = piece.length - piece.trimStart().length;
      out.push({ text: piece.trim(), column: start + lead + 1 });
      start = i + 1;
    }
  }
  return out;
}

/**
 * Linear interpolation of column y over strictly increasing t at time s (held constant outside).
 * Binary search: O(log n).
 */
export function interpolateLinear(t: Float64Array, y: Float64Array, s: number): number {
  const n = t.length;
  if (s <= t[0]) return y[0];
  if (s >= t[n - 1]) return y[n - 1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= s) lo = mid;
    else hi = mid;
  }
  const w = (s - t[lo]) / (t[hi] - t[lo]);
  return y[lo] + w * (y[hi] - y[lo]);
}
