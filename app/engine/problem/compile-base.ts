/**
 * The state every phase of the problem compiler shares (compile.ts): collected errors and
 * warnings with their file and JSON path, constants evaluated so far, names used; and the first
 * phase, reading problem.json (size limit, JSON syntax with line and column, refused prototype
 * keys) and turning schema (zod) issues into errors at their path with suggestions.
 */
import type { $ZodIssue } from "zod/v4/core";
import type { ProblemError } from "./errors";
import { formatProblemError, jsonPath } from "./errors";
import { keysAtPath } from "./schema";
import { findJsonError } from "./json-position";
import type { ExprScope } from "../expr/validate";
import { nearestName } from "../expr/suggest";
import type { ProblemSourceFiles } from "./compile";

/** Largest problem.json accepted (bytes of text): a bound on hostile input. */
export const MAX_PROBLEM_JSON_LENGTH = 2_000_000;

export type Seg = string | number;

/** Declared names, by kind. */
export interface Declared {
  stateNames: string[];
  controlNames: string[];
  interNames: string[];
  constNames: string[];
  stateSet: Set<string>;
  /** ["t", ...states, ...controls]: the point-function input names. */
  pointInputs: string[];
}

export abstract class CompilerBase {
  protected readonly errors: ProblemError[] = [];
  protected readonly warnings: string[] = [];
  /** Values of the constants evaluated so far. */
  protected readonly constants: Record<string, number> = Object.create(null);
  /** Names used by constant expressions (bounds, values) and by all other expressions. */
  protected readonly constUsed = new Set<string>();
  protected readonly usedNames = new Set<string>();
  /** Non-smooth-function warnings, one per expression. */
  protected readonly nonSmoothAt: string[] = [];
  protected readonly constraintNames = new Map<string, string>();
  protected constScope: ExprScope = { names: new Set() };
  protected readonly dir: string;
  constructor(
    protected readonly id: string,
    protected readonly files: ProblemSourceFiles,
    protected readonly file: string,
  ) {
    const slash = file.lastIndexOf("/");
    this.dir = slash >= 0 ? file.slice(0, slash + 1) : "";
  }

  protected err(path: readonly Seg[], message: string, extra: { column?: number; suggestion?: string; file?: string } = {}): void {
    const e: ProblemError = { file: extra.file ?? this.file, path: jsonPath(path), message };
    if (extra.column !== undefined) e.column = extra.column;
    if (extra.suggestion !== undefined) e.suggestion = extra.suggestion;
    this.errors.push(e);
  }

  protected warn(path: readonly Seg[], message: string): void {
    this.warnings.push(formatProblemError({ file: this.file, path: jsonPath(path), message }));
  }

  protected parseJson(): unknown {
    let text = this.files.problemJson;
    if (typeof text !== "string") {
      this.err([], "problem.json must be text");
      return undefined;
    }
    if (text.length > MAX_PROBLEM_JSON_LENGTH) {
      this.err([], `file is ${text.length} characters long; at most ${MAX_PROBLEM_JSON_LENGTH} are allowed`);
      return undefined;
    }
    if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
    const syntax = findJsonError(text);
    if (syntax) {
      this.err([], `invalid JSON: ${syntax.message}`, { column: syntax.column });
      this.errors[this.errors.length - 1].path = `line ${syntax.line}`;
      return undefined;
    }
    let raw: unknown;
    try {
      raw = JSON.parse(text);
    } catch (e) {
      this.err([], `invalid JSON: ${e instanceof Error ? e.message : String(e)}`);
      return undefined;
    }
    // keys that could reach an object prototype are refused outright
    const stack: [unknown, Seg[]][] = [[raw, []]];
    while (stack.length > 0) {
      const [v, p] = stack.pop()!;
      if (Array.isArray(v)) v.forEach((x, k) => stack.push([x, [...p, k]]));
      else if (v !== null && typeof v === "object") {
        for (const k of Object.keys(v)) {
          if (k === "__proto__" || k === "constructor" || k === "prototype") this.err([...p, k], `the field name '${k}' is not allowed`);
          else stack.push([(v as Record<string, unknown>)[k], [...p, k]]);
        }
      }
    }
    return this.errors.length > 0 ? undefined : raw;
  }

  protected zodIssue(issue: $ZodIssue, raw: unknown, prefix: Seg[]): void {
    const path = [...prefix, ...(issue.path as Seg[])];
    if (issue.code === "unrecognized_keys") {
      const valid = keysAtPath(path);
      for (const key of issue.keys) {
        this.err([...path, key], `unknown field '${key}'${valid.length ? ` (fields here: ${valid.join(", ")})` : ""}`, {
          suggestion: nearestName(key, valid),
        });
      }
      return;
    }
    if (issue.code === "invalid_union" && issue.errors.length > 0) {
      // choose the one alternative whose shape matches (no complaint about the value's own type)
      const fits = issue.errors.filter(
        (branch) => !branch.some((b) => b.path.length === 0 && (b.code === "invalid_type" || b.code === "unrecognized_keys")),
      );
      const value = valueAt(raw, path);
      if (fits.length === 1 && value !== null && typeof value === "object") {
        for (const b of fits[0]) this.zodIssue(b, raw, path);
        return;
      }
    }
    const value = valueAt(raw, path);
    if (value === undefined && (issue.code === "invalid_type" || issue.code === "invalid_union")) {
      const last = path[path.length - 1];
      this.err(path.slice(0, -1), `missing required field '${String(last)}'`);
      return;
    }
    this.err(path, issue.message.replace(/^Invalid input: /, ""));
  }
}

function valueAt(raw: unknown, path: readonly Seg[]): unknown {
  let v: unknown = raw;
  for (const seg of path) {
    if (v === null || typeof v !== "object") return undefined;
    if (!Object.hasOwn(v as object, seg)) return undefined;
    v = (v as Record<string | number, unknown>)[seg];
  }
  return v;
}
