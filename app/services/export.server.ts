/**
 * CSV and JSON answers for tables and series: `?format=csv` or `?format=json` (default json).
 * CSV follows RFC 4180: comma separated, CRLF line ends, fields quoted when they hold a comma,
 * quote or line break, quotes doubled. A field starting with = + - @ (a spreadsheet formula)
 * is prefixed with a single quote so that opening the file cannot run it; numbers are written
 * as JavaScript prints them (shortest round-trip form).
 */
export type Cell = string | number | boolean | null | undefined;

function csvField(v: Cell): string {
  if (v === null || v === undefined) return "";
  if (typeof v === "number") return Number.isFinite(v) ? String(v) : "";
  let s = String(v);
  if (/^[=+\-@\t\r]/.test(s)) s = `'${s}`;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Arrays and objects (e.g. tags) are written as JSON text in one field. */
function cellOf(v: unknown): Cell {
  if (v === null || v === undefined || typeof v === "string" || typeof v === "number" || typeof v === "boolean") return v;
  return JSON.stringify(v);
}

export function toCsv(columns: readonly string[], rows: readonly object[]): string {
  const lines = [columns.map(csvField).join(",")];
  for (const r of rows) lines.push(columns.map((c) => csvField(cellOf((r as Record<string, unknown>)[c]))).join(","));
  return `${lines.join("\r\n")}\r\n`;
}

export function wantsCsv(request: Request): boolean {
  return new URL(request.url).searchParams.get("format") === "csv";
}

export function csvResponse(filename: string, columns: readonly string[], rows: readonly object[]): Response {
  return new Response(toCsv(columns, rows), {
    headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${filename.replace(/[^A-Za-z0-9._-]/g, "_")}.csv"` },
  });
}

/** JSON answer; with `?download=1` it is offered as a file. */
export function jsonResponse(request: Request, filename: string, body: unknown, init: ResponseInit = {}): Response {
  const headers = new Headers(init.headers);
  if (new URL(request.url).searchParams.get("download") === "1") headers.set("Content-Disposition", `attachment; filename="${filename.replace(/[^A-Za-z0-9._-]/g, "_")}.json"`);
  return Response.json(body, { ...init, headers });
}
