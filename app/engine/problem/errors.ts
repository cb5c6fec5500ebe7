/**
 * Validation errors of problem files. Every error names the file, the JSON path
 * ("dynamics.v", "path[0].expr") and, inside an expression or a CSV file, the column
 * (1-based, counted in UTF-16 code units of the expression text or of the CSV line).
 */
export interface ProblemError {
  /** File label as shown to the engineer, e.g. "problems/kestrel/problem.json". */
  file: string;
  /** JSON path inside the file ("" for the whole file), or "line 12" for CSV files. */
  path: string;
  /** 1-based column inside the expression text (or CSV line), when known. */
  column?: number;
  message: string;
  /** "did you mean 'Tmax'?" without the question part: just the suggested text, e.g. "Tmax". */
  suggestion?: string;
}

/**
 * One line per error:
 *   "problems/x/problem.json: dynamics.v, column 4: unknown name 'Tmx'; did you mean 'Tmax'?"
 */
export function formatProblemError(e: ProblemError): string {
  let where = e.file;
  const parts: string[] = [];
  if (e.path) parts.push(e.path);
  if (e.column !== undefined) parts.push(`column ${e.column}`);
  if (parts.length > 0) where += `: ${parts.join(", ")}`;
  const hint = e.suggestion !== undefined ? `; did you mean '${e.suggestion}'?` : "";
  return `${where}: ${e.message}${hint}`;
}

/** Formats a JSON path from segments: ["path", 0, "expr"] → "path[0].expr". */
export function jsonPath(segments: readonly (string | number)[]): string {
  let s = "";
  for (const seg of segments) {
    if (typeof seg === "number") s += `[${seg}]`;
    else if (/^[A-Za-z_$][A-Za-z0-9_$]*$/.test(seg)) s += s === "" ? seg : `.${seg}`;
    else s += `[${JSON.stringify(seg)}]`;
  }
  return s;
}
