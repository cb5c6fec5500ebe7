/**
 * The "build a problem" form: its fields, how they become a problem.json (format
 * arcwatch-problem/1, DEVELOPERS.md "Problem files"), and where each compiler error belongs.
 * Pure functions, used by the server (to build and validate) and the page (field names).
 *
 * Line formats of the multi-line fields (blank lines and lines starting with '#' skipped):
 *   constants    name = value-or-expression [; unit]
 *   states       name, unit, lower, upper, initial, final      (empty cell: absent / free)
 *   controls     name, unit, lower, upper
 *   dynamics     name' = expression                              (one per state)
 *   path         name | expression | lower | upper
 */
import type { ProblemError } from "./errors";

export const BUILDER_FIELDS = [
  "id", "title", "description", "tags", "constants", "states", "controls", "dynamics", "path",
  "t0", "tfKind", "tf", "tfLower", "tfUpper", "tfGuess", "sense", "terminal", "running",
  "refObjective", "refTolerance", "refKind", "refDetail",
] as const;
export type BuilderField = (typeof BUILDER_FIELDS)[number];
export type BuilderValues = Record<BuilderField, string>;

export const UPLOAD_FIELDS = ["id", "problemJson", "referenceCsv"] as const;
export type UploadField = (typeof UPLOAD_FIELDS)[number];

export function emptyBuilderValues(): BuilderValues {
  const v = Object.fromEntries(BUILDER_FIELDS.map((k) => [k, ""])) as BuilderValues;
  v.t0 = "0";
  v.tfKind = "fixed";
  v.sense = "min";
  v.refKind = "analytic";
  return v;
}

/** Non-blank, non-comment lines, trimmed; `lead` counts the spaces cut from the start. */
function lines(text: string): { line: string; n: number; lead: number }[] {
  return text
    .split(/\r?\n/)
    .map((raw, i) => ({ line: raw.trim(), n: i + 1, lead: raw.length - raw.trimStart().length }))
    .filter((l) => l.line !== "" && !l.line.startsWith("#"));
}

/** Start offset (0-based, in the trimmed line) of each trimmed cell of a separated line. */
function cellStarts(line: string, sep: string): number[] {
  const out: number[] = [];
  let at = 0;
  for (const cell of line.split(sep)) {
    out.push(at + (cell.length - cell.trimStart().length));
    at += cell.length + sep.length;
  }
  return out;
}

/**
 * Where the text of one JSON path came from in the form: the field, the line of that field
 * (1-based) and the 0-based offset of the expression in that line as the user typed it. The
 * compiler's columns count inside the expression; adding the offset makes them count from the
 * start of the typed line.
 */
export interface BuilderOrigin {
  field: BuilderField;
  line: number;
  offset: number;
}
export type BuilderOrigins = Record<string, BuilderOrigin>;

/** "" → undefined, a plain number → number, otherwise the text (an expression of constants). */
function numOrExpr(s: string | undefined): number | string | undefined {
  const t = (s ?? "").trim();
  if (t === "") return undefined;
  const n = Number(t);
  return Number.isFinite(n) && /^[-+]?(\d|\.\d)/.test(t) ? n : t;
}

export type BuiltProblem = { ok: true; json: Record<string, unknown>; origins: BuilderOrigins } | { ok: false; errors: Partial<Record<BuilderField, string>> };

/** Builds the problem.json object from the form; line-format mistakes are errors at their field. */
export function buildProblemJson(v: BuilderValues): BuiltProblem {
  const errors: Partial<Record<BuilderField, string>> = {};
  const origins: BuilderOrigins = {};
  const constants: Record<string, unknown> = {};
  for (const { line, n, lead } of lines(v.constants)) {
    const m = /^([A-Za-z][A-Za-z0-9_]*)\s*=\s*([^;]+?)\s*(?:;\s*(.*))?$/.exec(line);
    if (!m) {
      errors.constants ??= `line ${n}: expected 'name = value' (optionally '; unit'), got '${line.slice(0, 40)}'`;
      continue;
    }
    const value = numOrExpr(m[2]);
    constants[m[1]!] = m[3] ? { value, unit: m[3] } : value;
    const eq = line.indexOf("=") + 1;
    const valueAt = lead + eq + (line.slice(eq).length - line.slice(eq).trimStart().length);
    origins[`constants.${m[1]}`] = { field: "constants", line: n, offset: valueAt };
    origins[`constants.${m[1]}.value`] = { field: "constants", line: n, offset: valueAt };
  }
  const states: Record<string, unknown>[] = [];
  const initial: Record<string, unknown> = {};
  const final: Record<string, unknown> = {};
  for (const { line, n, lead } of lines(v.states)) {
    const cells = line.split(",").map((c) => c.trim());
    const at = cellStarts(line, ",").map((o) => lead + o);
    if (!/^[A-Za-z][A-Za-z0-9_]*$/.test(cells[0] ?? "")) {
      errors.states ??= `line ${n}: expected 'name, unit, lower, upper, initial, final', got '${line.slice(0, 40)}'`;
      continue;
    }
    const [name, unit, lower, upper, ini, fin] = cells as [string, ...string[]];
    const s: Record<string, unknown> = { name };
    if (unit) s.unit = unit;
    if (numOrExpr(lower) !== undefined) s.lower = numOrExpr(lower);
    if (numOrExpr(upper) !== undefined) s.upper = numOrExpr(upper);
    const k = states.length;
    states.push(s);
    if (numOrExpr(ini) !== undefined) initial[name] = numOrExpr(ini);
    if (numOrExpr(fin) !== undefined) final[name] = numOrExpr(fin);
    origins[`states[${k}].lower`] = { field: "states", line: n, offset: at[2] ?? lead };
    origins[`states[${k}].upper`] = { field: "states", line: n, offset: at[3] ?? lead };
    origins[`initial.${name}`] = { field: "states", line: n, offset: at[4] ?? lead };
    origins[`final.${name}`] = { field: "states", line: n, offset: at[5] ?? lead };
  }
  const controls: Record<string, unknown>[] = [];
  for (const { line, n, lead } of lines(v.controls)) {
    const cells = line.split(",").map((c) => c.trim());
    const at = cellStarts(line, ",").map((o) => lead + o);
    if (!/^[A-Za-z][A-Za-z0-9_]*$/.test(cells[0] ?? "")) {
      errors.controls ??= `line ${n}: expected 'name, unit, lower, upper', got '${line.slice(0, 40)}'`;
      continue;
    }
    const [name, unit, lower, upper] = cells as [string, ...string[]];
    const c: Record<string, unknown> = { name };
    if (unit) c.unit = unit;
    if (numOrExpr(lower) !== undefined) c.lower = numOrExpr(lower);
    if (numOrExpr(upper) !== undefined) c.upper = numOrExpr(upper);
    origins[`controls[${controls.length}].lower`] = { field: "controls", line: n, offset: at[2] ?? lead };
    origins[`controls[${controls.length}].upper`] = { field: "controls", line: n, offset: at[3] ?? lead };
    controls.push(c);
  }
  const dynamics: Record<string, string> = {};
  for (const { line, n, lead } of lines(v.dynamics)) {
    const m = /^([A-Za-z][A-Za-z0-9_]*)\s*'?\s*=\s*(.+)$/.exec(line);
    if (!m) {
      errors.dynamics ??= `line ${n}: expected "name' = expression", got '${line.slice(0, 40)}'`;
      continue;
    }
    dynamics[m[1]!] = m[2]!;
    origins[`dynamics.${m[1]}`] = { field: "dynamics", line: n, offset: lead + line.length - m[2]!.length };
  }
  const path: Record<string, unknown>[] = [];
  for (const { line, n, lead } of lines(v.path)) {
    const cells = line.split("|").map((c) => c.trim());
    const at = cellStarts(line, "|").map((o) => lead + o);
    if (cells.length < 3 || !cells[1]) {
      errors.path ??= `line ${n}: expected 'name | expression | lower | upper', got '${line.slice(0, 40)}'`;
      continue;
    }
    const c: Record<string, unknown> = { expr: cells[1] };
    if (cells[0]) c.name = cells[0];
    if (numOrExpr(cells[2]) !== undefined) c.lower = numOrExpr(cells[2]);
    if (numOrExpr(cells[3]) !== undefined) c.upper = numOrExpr(cells[3]);
    origins[`path[${path.length}].expr`] = { field: "path", line: n, offset: at[1] ?? lead };
    origins[`path[${path.length}].lower`] = { field: "path", line: n, offset: at[2] ?? lead };
    origins[`path[${path.length}].upper`] = { field: "path", line: n, offset: at[3] ?? lead };
    path.push(c);
  }
  const num = (field: BuilderField, required: boolean): number | undefined => {
    const t = v[field].trim();
    if (t === "") {
      if (required) errors[field] ??= "Enter a number.";
      return undefined;
    }
    const x = Number(t);
    if (!Number.isFinite(x)) errors[field] ??= `'${t.slice(0, 30)}' is not a number.`;
    return x;
  };
  const t0 = num("t0", true);
  let finalTime: unknown;
  if (v.tfKind === "free") {
    const lower = num("tfLower", true);
    const upper = num("tfUpper", true);
    const guess = num("tfGuess", false);
    finalTime = { free: { lower, upper, ...(guess !== undefined ? { guess } : {}) } };
  } else finalTime = { fixed: num("tf", true) };
  const objective: Record<string, unknown> = { sense: v.sense === "max" ? "max" : "min" };
  if (v.terminal.trim()) objective.terminal = v.terminal.trim();
  if (v.running.trim()) objective.running = v.running.trim();
  const leadOf = (s: string) => s.length - s.trimStart().length;
  origins["objective.terminal"] = { field: "terminal", line: 1, offset: leadOf(v.terminal) };
  origins["objective.running"] = { field: "running", line: 1, offset: leadOf(v.running) };
  const tags = v.tags
    .split(",")
    .map((t) => t.trim())
    .filter(Boolean);
  const json: Record<string, unknown> = {
    format: "arcwatch-problem/1",
    title: v.title.trim(),
    description: v.description.trim(),
    tags,
    constants,
    states,
    controls,
    dynamics,
    ...(path.length ? { path } : {}),
    horizon: { initialTime: t0, finalTime },
    initial,
    final,
    objective,
    guess: { kind: "linear" },
  };
  if (v.refObjective.trim()) {
    const value = num("refObjective", true);
    const tolerance = num("refTolerance", true);
    const kind = ["analytic", "published", "fine-mesh", "shooting"].includes(v.refKind) ? v.refKind : "analytic";
    const detail = v.refDetail.trim();
    const provenance: Record<string, unknown> = { kind };
    if (kind === "published") provenance.citation = detail;
    else if (detail || kind === "fine-mesh" || kind === "shooting") provenance.detail = detail;
    json.reference = { objective: { value, tolerance, provenance } };
  }
  if (Object.keys(errors).length) return { ok: false, errors };
  return { ok: true, json, origins };
}

/** The builder field a compiler error belongs to, from its JSON path (DEVELOPERS.md format). */
export function builderFieldOf(e: ProblemError): BuilderField | "form" {
  const p = e.path;
  const head = /^[A-Za-z_$][A-Za-z0-9_$]*/.exec(p)?.[0] ?? "";
  switch (head) {
    case "title":
    case "description":
    case "tags":
    case "constants":
    case "states":
    case "controls":
    case "dynamics":
    case "path":
      return head;
    case "initial":
    case "final":
      return "states";
    case "intermediates":
      return "dynamics";
    case "horizon":
      if (p.includes("initialTime")) return "t0";
      if (p.includes("lower")) return "tfLower";
      if (p.includes("upper")) return "tfUpper";
      if (p.includes("guess")) return "tfGuess";
      return "tf";
    case "guess":
      return "tfGuess";
    case "objective":
      if (p.startsWith("objective.running")) return "running";
      return "terminal";
    case "reference":
      if (p.includes("tolerance")) return "refTolerance";
      if (p.includes("provenance")) return "refDetail";
      return "refObjective";
    default:
      return "form";
  }
}

/** The upload field a compiler error belongs to: the CSV's errors go to the reference file. */
export function uploadFieldOf(e: ProblemError): UploadField {
  return /\.csv$/i.test(e.file) ? "referenceCsv" : "problemJson";
}

/** One line of an error as shown at its field: where (path, column), message, suggestion. */
export function describeError(e: ProblemError): string {
  const where = [e.path, e.column !== undefined ? `column ${e.column}` : ""].filter(Boolean).join(", ");
  const hint = e.suggestion !== undefined ? ` — did you mean '${e.suggestion}'?` : "";
  return `${where ? `${where}: ` : ""}${e.message}${hint}`;
}

/**
 * An error at a form-builder field, placed as the user sees it: the line of the field and the
 * column counted from the start of what was typed on that line (not inside the expression the
 * builder cut out of it). Falls back to the JSON path when the origin is unknown.
 */
export function describeBuilderError(e: ProblemError, origins: BuilderOrigins): string {
  const o = origins[e.path];
  if (!o) return describeError(e);
  const multiLine = o.field === "constants" || o.field === "states" || o.field === "controls" || o.field === "dynamics" || o.field === "path";
  const col = e.column !== undefined ? `column ${o.offset + e.column}` : "";
  const where = [multiLine ? `line ${o.line}` : "", col].filter(Boolean).join(", ");
  const hint = e.suggestion !== undefined ? ` — did you mean '${e.suggestion}'?` : "";
  return `${where ? `${where}: ` : ""}${e.message}${hint}`;
}

/** Groups errors by field; several errors at one field are joined one per line. */
export function errorsByField<K extends string>(errors: ProblemError[], fieldOf: (e: ProblemError) => K, describe: (e: ProblemError) => string = describeError): Partial<Record<K, string>> {
  const out: Partial<Record<K, string>> = {};
  for (const e of errors) {
    const k = fieldOf(e);
    out[k] = out[k] ? `${out[k]}\n${describe(e)}` : describe(e);
  }
  return out;
}
