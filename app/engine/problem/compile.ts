/**
 * Problem file → CompiledProblem: JSON syntax, structure (zod, schema.ts), semantic checks
 * (names, scopes, bounds, files), then compilation of every expression to PointFunctions with
 * exact sparse first and second derivatives (expr/compile.ts).
 *
 * All errors of a phase are collected and returned together: structural errors first (the
 * semantic checks need a well-formed file), otherwise every semantic and expression error.
 * This function never throws for any input text.
 *
 * Input layouts (types.ts): point functions z = [t, x_1..x_nx, u_1..u_nu];
 * endpoint functions e = [t0, x(t0)_1..nx, tf, x(tf)_1..nx].
 */
import { parse, type MathNode } from "mathjs";
import type { $ZodIssue } from "zod/v4/core";
import type {
  CompiledProblem,
  ConstraintInfo,
  Horizon,
  PointFunction,
  ProblemReference,
  Provenance,
  ReferenceTrajectory,
  VariableInfo,
} from "./types";
import { formatProblemError, jsonPath, type ProblemError } from "./errors";
import { ProblemFileSchema, keysAtPath, type ProblemFile, type ProvenanceSpec } from "./schema";
import { findJsonError } from "./json-position";
import { parseTrajectoryCsv, type CsvTable } from "./csv";
import { defaultStateEnds, makeGuess, midOrFinite, type EndRange, type GuessSeries } from "./guess";
import { parseExpression, treeDepth, FUNCTION_ARITY, MAX_TREE_DEPTH, type ExprScope } from "../expr/validate";
import { nearestName } from "../expr/suggest";
import { compilePointFunction, inputResolver, toDag } from "../expr/compile";
import { Dag } from "../expr/dag";
import { substitute } from "../expr/derive";
import { toTex } from "../expr/tex";
import { Sha256 } from "./sha256";

export type CompileResult = { ok: true; problem: CompiledProblem } | { ok: false; errors: ProblemError[] };

export interface ProblemSourceFiles {
  problemJson: string;
  referenceCsv?: string;
  guessCsv?: string;
}

/** Largest problem.json accepted (bytes of text): a bound on hostile input. */
export const MAX_PROBLEM_JSON_LENGTH = 2_000_000;

/** Names with a fixed meaning that declared names may not take. */
export const RESERVED_NAMES: readonly string[] = ["t", "t0", "tf", "initial", "final", "pi", "sign", ...Object.keys(FUNCTION_ARITY)];

/** Known tags (others are accepted; a near miss of one of these gets a warning, to catch typos). */
export const KNOWN_TAGS: readonly string[] = [
  "smooth", "bang-bang", "singular-arc", "state-constrained", "path-constrained", "free-final-time", "fixed-final-time",
  "minimum-time", "unconstrained", "control-constrained", "non-smooth", "stiff", "aerospace", "classic", "demo",
  "linear-quadratic", "multiple-controls", "endpoint-constrained", "chattering",
];

/**
 * sha256 over the problem's files, framed so that moving bytes between files changes it:
 *   "problem.json\n" + len + "\n" + bytes, then the same for reference.csv and guess.csv when present.
 */
export function problemVersionHash(files: ProblemSourceFiles): string {
  const h = new Sha256();
  const utf8 = new TextEncoder();
  const part = (name: string, text: string | undefined) => {
    if (text === undefined) return;
    const bytes = utf8.encode(text);
    h.update(`${name}\n${bytes.length}\n`);
    h.update(bytes);
  };
  part("problem.json", files.problemJson);
  part("reference.csv", files.referenceCsv);
  part("guess.csv", files.guessCsv);
  return h.digestHex();
}

export function compileProblemSource(id: string, files: ProblemSourceFiles, label?: string): CompileResult {
  const file = label ?? `problems/${id}/problem.json`;
  try {
    return new ProblemCompiler(id, files, file).run();
  } catch (err) {
    // Defensive: a bug here must not crash a caller that is validating an upload.
    return {
      ok: false,
      errors: [{ file, path: "", message: `internal compiler error: ${err instanceof Error ? err.message : String(err)}` }],
    };
  }
}

type Seg = string | number;

interface NamedEntry {
  name: string;
  kind: "constant" | "state" | "control" | "intermediate";
  path: Seg[];
}

class ProblemCompiler {
  private readonly errors: ProblemError[] = [];
  private readonly warnings: string[] = [];
  private readonly dir: string;
  constructor(
    private readonly id: string,
    private readonly files: ProblemSourceFiles,
    private readonly file: string,
  ) {
    const slash = file.lastIndexOf("/");
    this.dir = slash >= 0 ? file.slice(0, slash + 1) : "";
  }

  private err(path: readonly Seg[], message: string, extra: { column?: number; suggestion?: string; file?: string } = {}): void {
    const e: ProblemError = { file: extra.file ?? this.file, path: jsonPath(path), message };
    if (extra.column !== undefined) e.column = extra.column;
    if (extra.suggestion !== undefined) e.suggestion = extra.suggestion;
    this.errors.push(e);
  }

  private warn(path: readonly Seg[], message: string): void {
    this.warnings.push(formatProblemError({ file: this.file, path: jsonPath(path), message }));
  }

  run(): CompileResult {
    const raw = this.parseJson();
    if (raw === undefined) return { ok: false, errors: this.errors };
    const parsed = ProblemFileSchema.safeParse(raw);
    if (!parsed.success) {
      for (const issue of parsed.error.issues) this.zodIssue(issue, raw, []);
      return { ok: false, errors: this.errors };
    }
    const problem = this.build(parsed.data);
    if (this.errors.length > 0 || !problem) return { ok: false, errors: this.errors };
    return { ok: true, problem };
  }

  // ---------------------------------------------------------------- JSON and structure

  private parseJson(): unknown {
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

  private zodIssue(issue: $ZodIssue, raw: unknown, prefix: Seg[]): void {
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

  // ---------------------------------------------------------------- semantic checks and build

  private build(p: ProblemFile): CompiledProblem | null {
    const states = p.states;
    const controls = p.controls ?? [];
    const intermediates = p.intermediates ?? [];
    const constantsSpec = p.constants ?? {};

    // ---- names: syntax is zod's; here reserved words and duplicates
    const entries: NamedEntry[] = [
      ...Object.keys(constantsSpec).map((name): NamedEntry => ({ name, kind: "constant", path: ["constants", name] })),
      ...states.map((s, i): NamedEntry => ({ name: s.name, kind: "state", path: ["states", i, "name"] })),
      ...controls.map((s, i): NamedEntry => ({ name: s.name, kind: "control", path: ["controls", i, "name"] })),
      ...intermediates.map((s, i): NamedEntry => ({ name: s.name, kind: "intermediate", path: ["intermediates", i, "name"] })),
    ];
    const byName = new Map<string, NamedEntry>();
    for (const e of entries) {
      if (e.kind === "constant" && !/^[A-Za-z][A-Za-z0-9_]*$/.test(e.name)) {
        this.err(e.path, `'${e.name.slice(0, 40)}' is not a valid name: a letter, then letters, digits or '_'`);
        continue;
      }
      if (RESERVED_NAMES.includes(e.name)) {
        this.err(e.path, `'${e.name}' is reserved (time, endpoint or function name); choose another name`);
        continue;
      }
      const prev = byName.get(e.name);
      if (prev) {
        this.err(e.path, `'${e.name}' is already declared as a ${prev.kind} at ${jsonPath(prev.path)}`);
        continue;
      }
      byName.set(e.name, e);
    }
    const stateNames = states.map((s) => s.name);
    const controlNames = controls.map((s) => s.name);
    const interNames = intermediates.map((s) => s.name);
    const constNames = Object.keys(constantsSpec);
    const stateSet = new Set(stateNames);

    // ---- constants, in order; each may use earlier constants
    const constants: Record<string, number> = Object.create(null);
    const constUsed = new Set<string>();
    const notConstant = (allowed: string) => {
      const m = new Map<string, string>();
      for (const n of stateNames) m.set(n, `state '${n}' cannot be used here: ${allowed}`);
      for (const n of controlNames) m.set(n, `control '${n}' cannot be used here: ${allowed}`);
      for (const n of interNames) m.set(n, `intermediate '${n}' cannot be used here: ${allowed}`);
      for (const n of ["t", "t0", "tf"]) m.set(n, `'${n}' cannot be used here: ${allowed}`);
      return m;
    };
    constNames.forEach((name, k) => {
      const spec = constantsSpec[name];
      const value = typeof spec === "object" ? spec.value : spec;
      const path: Seg[] = typeof spec === "object" ? ["constants", name, "value"] : ["constants", name];
      const earlier = new Set(constNames.slice(0, k));
      const misplaced = notConstant("a constant may use earlier constants only");
      for (const later of constNames.slice(k)) misplaced.set(later, `constant '${later}' is defined later (constants may use earlier constants only)`);
      const v = this.constantValue(value, path, { names: earlier, misplaced }, constants, constUsed);
      if (v !== undefined) constants[name] = v;
    });
    const constScope: ExprScope = { names: new Set(constNames), misplaced: notConstant("bounds and values may use constants only") };
    const num = (v: number | string | null | undefined, path: Seg[], absent: number): number => {
      if (v === null || v === undefined) return absent;
      const r = this.constantValue(v, path, constScope, constants, constUsed);
      return r ?? NaN;
    };

    // ---- states and controls
    const varInfo = (list: typeof states, key: "states" | "controls"): VariableInfo[] =>
      list.map((s, i) => {
        const lower = num(s.lower, [key, i, "lower"], -Infinity);
        const upper = num(s.upper, [key, i, "upper"], Infinity);
        if (lower > upper) this.err([key, i], `contradictory bounds: lower ${lower} > upper ${upper}`);
        return { name: s.name, unit: s.unit ?? "", lower, upper, scale: s.scale ?? 1 };
      });
    const stateInfo = varInfo(states, "states");
    const controlInfo = varInfo(controls, "controls");

    // ---- horizon
    const t0 = p.horizon.initialTime ?? 0;
    let horizon: Horizon;
    const ft = p.horizon.finalTime;
    if ("fixed" in ft) {
      const tf = num(ft.fixed, ["horizon", "finalTime", "fixed"], NaN);
      if (tf <= t0) this.err(["horizon", "finalTime", "fixed"], `final time ${tf} must be greater than initialTime ${t0}`);
      horizon = { kind: "fixed", t0, tf };
    } else {
      const fp: Seg[] = ["horizon", "finalTime", "free"];
      const lower = num(ft.free.lower, [...fp, "lower"], NaN);
      const upper = num(ft.free.upper, [...fp, "upper"], NaN);
      if (!(lower > t0)) this.err([...fp, "lower"], `lower bound ${lower} of the final time must be greater than initialTime ${t0}`);
      if (lower > upper) this.err(fp, `contradictory bounds: lower ${lower} > upper ${upper}`);
      const guessTf = ft.free.guess === undefined ? p.guess?.finalTime ?? 0.5 * (lower + upper) : num(ft.free.guess, [...fp, "guess"], NaN);
      if (guessTf < lower || guessTf > upper) this.err([...fp, "guess"], `guess ${guessTf} is outside [${lower}, ${upper}]`);
      horizon = { kind: "free", t0, lower, upper, guess: guessTf };
    }

    // ---- intermediates, in dependency order
    const pointBase = ["t", ...stateNames, ...controlNames];
    const usedNames = new Set<string>();
    const interTrees = new Map<string, MathNode>(); // substituted
    const interRaw = new Map<string, MathNode>(); // as written
    const endpointOnly = (m: Map<string, string>) => {
      m.set("t0", "'t0' is for endpoint expressions; use 't' in point expressions");
      m.set("tf", "'tf' is for endpoint expressions; use 't' in point expressions");
      return m;
    };
    const nonSmoothAt: string[] = [];
    intermediates.forEach((inter, k) => {
      const misplaced = endpointOnly(new Map());
      for (const later of interNames.slice(k)) {
        misplaced.set(later, later === inter.name
          ? `intermediate '${later}' cannot use itself`
          : `intermediate '${later}' is defined later: list intermediates in dependency order`);
      }
      const scope: ExprScope = { names: new Set([...pointBase, ...constNames, ...interNames.slice(0, k)]), misplaced };
      const node = this.expression(inter.expr, ["intermediates", k, "expr"], scope, usedNames, nonSmoothAt);
      if (node) {
        interRaw.set(inter.name, node);
        interTrees.set(inter.name, substitute(node, interTrees));
      }
    });
    const pointScope: ExprScope = {
      names: new Set([...pointBase, ...constNames, ...interNames]),
      misplaced: endpointOnly(new Map()),
    };
    const endpointScope: ExprScope = (() => {
      const m = new Map<string, string>();
      for (const n of stateNames) m.set(n, `state '${n}' in an endpoint expression: write initial(${n}) or final(${n})`);
      for (const n of controlNames) m.set(n, `control '${n}' cannot be used in an endpoint expression (controls are not endpoint values)`);
      for (const n of interNames) m.set(n, `intermediate '${n}' cannot be used in an endpoint expression (it depends on t, states and controls)`);
      m.set("t", "'t' in an endpoint expression: write t0 or tf");
      return { names: new Set(["t0", "tf", ...constNames]), misplaced: m, endpointStates: stateSet };
    })();

    // ---- dynamics: one entry per state
    const dynRaw: (MathNode | null)[] = stateNames.map(() => null);
    for (const key of Object.keys(p.dynamics)) {
      if (!stateSet.has(key)) {
        this.err(["dynamics", key], `'${key}' is not a state: dynamics has one entry per state`, { suggestion: nearestName(key, stateNames) });
      }
    }
    stateNames.forEach((name, i) => {
      if (!Object.hasOwn(p.dynamics, name)) {
        this.err(["dynamics"], `missing entry for state '${name}' (one expression per state: d${name}/dt)`);
        return;
      }
      dynRaw[i] = this.expression(p.dynamics[name], ["dynamics", name], pointScope, usedNames, nonSmoothAt);
    });

    // ---- initial / final conditions → endpoint rows
    const conditionRows: { node: MathNode; info: ConstraintInfo }[] = [];
    const endRanges: { initial: (EndRange | undefined)[]; final: (EndRange | undefined)[] } = {
      initial: stateNames.map(() => undefined),
      final: stateNames.map(() => undefined),
    };
    const stateUsedByCondition = new Set<string>();
    for (const which of ["initial", "final"] as const) {
      const conds = p[which] ?? {};
      for (const key of Object.keys(conds)) {
        if (!stateSet.has(key)) {
          this.err([which, key], `'${key}' is not a state`, { suggestion: nearestName(key, stateNames) });
        }
      }
      stateNames.forEach((name, i) => {
        if (!Object.hasOwn(conds, name)) return;
        const c = conds[name];
        const path: Seg[] = [which, name];
        let lower: number;
        let upper: number;
        if (typeof c === "object" && c !== null) {
          lower = num(c.lower, [...path, "lower"], -Infinity);
          upper = num(c.upper, [...path, "upper"], Infinity);
          if (lower === -Infinity && upper === Infinity) {
            this.err(path, "a range needs 'lower' and/or 'upper' (omit the entry for a free value)");
          }
        } else {
          lower = upper = num(c, path, NaN);
        }
        if (lower > upper) this.err(path, `contradictory bounds: lower ${lower} > upper ${upper}`);
        const sb = stateInfo[i];
        if (sb.lower <= sb.upper && (upper < sb.lower || lower > sb.upper)) {
          const what = lower === upper ? `${which} value ${lower}` : `${which} range [${lower}, ${upper}]`;
          this.err(path, `${what} of '${name}' lies outside the state's bounds [${sb.lower}, ${sb.upper}]`);
        }
        endRanges[which][i] = { lower, upper };
        stateUsedByCondition.add(name);
        conditionRows.push({
          node: parse(`${which}(${name})`), // name matched NAME_PATTERN: safe mathjs text
          info: { name: `${which}(${name})`, lower, upper },
        });
      });
    }
    // state order: initial rows then final rows (conditionRows was filled per "which" in state order)

    // ---- general endpoint constraints and path constraints
    const boundsOf = (c: { lower?: number | string | null; upper?: number | string | null }, path: Seg[], what: string) => {
      const lower = num(c.lower, [...path, "lower"], -Infinity);
      const upper = num(c.upper, [...path, "upper"], Infinity);
      if (lower === -Infinity && upper === Infinity) this.err(path, `${what} needs 'lower' and/or 'upper' (equal for an equality)`);
      if (lower > upper) this.err(path, `contradictory bounds: lower ${lower} > upper ${upper}`);
      return { lower, upper };
    };
    const constraintNames = new Map<string, string>();
    const constraintName = (given: string | undefined, fallback: string, path: Seg[]) => {
      const name = given ?? fallback;
      const prev = constraintNames.get(name);
      if (prev !== undefined) this.err([...path, "name"], `constraint name '${name}' is already used at ${prev}`);
      constraintNames.set(name, jsonPath(path));
      return name;
    };
    const eventRows: { node: MathNode; info: ConstraintInfo }[] = [];
    (p.endpointConstraints ?? []).forEach((c, k) => {
      const path: Seg[] = ["endpointConstraints", k];
      const used = new Set<string>();
      const node = this.expression(c.expr, [...path, "expr"], endpointScope, used, nonSmoothAt);
      used.forEach((u) => usedNames.add(u));
      const b = boundsOf(c, path, "an endpoint constraint");
      const name = constraintName(c.name, `endpoint${k}`, path);
      if (node && ![...used].some((u) => u === "t0" || u === "tf" || u.includes("("))) {
        this.err([...path, "expr"], "the expression depends on no endpoint value (initial(x), final(x), t0, tf)");
      }
      if (node) eventRows.push({ node, info: { name, ...b } });
    });
    const pathRaw: (MathNode | null)[] = [];
    const pathInfo: ConstraintInfo[] = [];
    (p.path ?? []).forEach((c, k) => {
      const path: Seg[] = ["path", k];
      const used = new Set<string>();
      const node = this.expression(c.expr, [...path, "expr"], pointScope, used, nonSmoothAt);
      used.forEach((u) => usedNames.add(u));
      if (node && !pointBase.some((n) => used.has(n)) && !interNames.some((n) => used.has(n))) {
        this.err([...path, "expr"], "the expression depends on no time, state or control");
      }
      const b = boundsOf(c, path, "a path constraint");
      pathRaw.push(node);
      pathInfo.push({ name: constraintName(c.name, `path${k}`, path), ...b });
    });

    // ---- objective
    const obj = p.objective;
    if (obj.terminal === undefined && obj.running === undefined) {
      this.err(["objective"], "the objective needs a 'terminal' term, a 'running' term or both");
    }
    const terminalRaw = obj.terminal === undefined ? null : this.expression(obj.terminal, ["objective", "terminal"], endpointScope, usedNames, nonSmoothAt);
    const runningRaw = obj.running === undefined ? null : this.expression(obj.running, ["objective", "running"], pointScope, usedNames, nonSmoothAt);

    // ---- substituted trees and their depth
    const sub = (n: MathNode | null, path: Seg[]): MathNode | null => {
      if (!n) return null;
      const s = substitute(n, interTrees);
      if (treeDepth(s) > 4 * MAX_TREE_DEPTH) this.err(path, `expression is nested more than ${4 * MAX_TREE_DEPTH} levels deep after substituting intermediates`);
      return s;
    };
    const dynTrees = dynRaw.map((n, i) => sub(n, ["dynamics", stateNames[i]]));
    const pathTrees = pathRaw.map((n, k) => sub(n, ["path", k, "expr"]));
    const runningTree = sub(runningRaw, ["objective", "running"]);

    // ---- unused names
    for (const n of constNames) {
      if (!usedNames.has(n) && !constUsed.has(n)) this.warn(["constants", n], `constant '${n}' is never used`);
    }
    for (const [k, n] of interNames.entries()) {
      if (!usedNames.has(n)) this.warn(["intermediates", k], `intermediate '${n}' is never used`);
    }
    const symbolsIn = (trees: (MathNode | null)[]) => {
      const s = new Set<string>();
      for (const t of trees) t?.traverse((n) => {
        if (n.type === "SymbolNode") s.add((n as unknown as { name: string }).name);
      });
      return s;
    };
    const pointUsed = symbolsIn([...dynTrees, ...pathTrees, runningTree]);
    controlNames.forEach((n, i) => {
      if (dynTrees.every((t) => t) && !pointUsed.has(n)) {
        this.err(["controls", i], `control '${n}' is never used in the dynamics, path constraints or running cost`);
      }
    });
    stateNames.forEach((n, i) => {
      const anywhere = pointUsed.has(n) || usedNames.has(`initial(${n})`) || usedNames.has(`final(${n})`) || stateUsedByCondition.has(n);
      if (!anywhere) this.warn(["states", i], `state '${n}' is never used`);
    });
    for (const w of new Set(nonSmoothAt)) this.warnings.push(w);

    // ---- tags
    const tags = p.tags ?? [];
    tags.forEach((tag, k) => {
      // tags are free-form; only a near miss of a known tag (a likely typo) is worth a warning
      const near = KNOWN_TAGS.includes(tag) ? undefined : nearestName(tag, KNOWN_TAGS);
      if (near) this.warn(["tags", k], `unknown tag '${tag}'; did you mean '${near}'?`);
    });
    if (tags.includes("free-final-time") && horizon.kind === "fixed") this.warn(["tags"], "tag 'free-final-time' but the final time is fixed");
    if (tags.includes("fixed-final-time") && horizon.kind === "free") this.warn(["tags"], "tag 'fixed-final-time' but the final time is free");

    // ---- guess
    const guessSpec = p.guess ?? { kind: "linear" as const };
    const nSeries = stateNames.length + controlNames.length;
    const series: GuessSeries[] = [];
    stateNames.forEach((_, i) => {
      const [a, b] = defaultStateEnds(endRanges.initial[i], endRanges.final[i], stateInfo[i]);
      series.push(guessSpec.kind === "constant" ? { kind: "line", a, b: a } : { kind: "line", a, b });
    });
    controlInfo.forEach((c) => {
      const m = midOrFinite(c.lower, c.upper) ?? 0;
      series.push({ kind: "line", a: m, b: m });
    });
    let guessTf = horizon.kind === "fixed" ? horizon.tf : horizon.guess;
    if (guessSpec.kind === "trajectory") {
      const table = this.csvChecked(this.files.guessCsv, guessSpec.file, ["guess", "file"], stateNames, controlNames, false);
      if (table) {
        const t = table.columns[0];
        const span = t[t.length - 1] - t[0];
        const tau = t.map((x) => (x - t[0]) / span);
        table.header.forEach((h, k) => {
          const j = h === "t" ? -1 : stateNames.includes(h) ? stateNames.indexOf(h) : controlNames.includes(h) ? stateNames.length + controlNames.indexOf(h) : -1;
          if (j >= 0) series[j] = { kind: "table", tau, y: table.columns[k] };
        });
        if (horizon.kind === "free" && guessSpec.finalTime === undefined && p.horizon.finalTime && "free" in p.horizon.finalTime && p.horizon.finalTime.free.guess === undefined) {
          guessTf = t[t.length - 1];
        }
      }
    } else {
      for (const which of ["states", "controls"] as const) {
        const vals = guessSpec[which] ?? {};
        const names = which === "states" ? stateNames : controlNames;
        for (const key of Object.keys(vals)) {
          const j = names.indexOf(key);
          if (j < 0) {
            this.err(["guess", which, key], `'${key}' is not a ${which === "states" ? "state" : "control"}`, { suggestion: nearestName(key, names) });
            continue;
          }
          const v = vals[key];
          series[(which === "states" ? 0 : stateNames.length) + j] = typeof v === "number" ? { kind: "line", a: v, b: v } : { kind: "line", a: v[0], b: v[1] };
        }
      }
    }
    if (guessSpec.finalTime !== undefined) {
      if (horizon.kind === "fixed") this.warn(["guess", "finalTime"], "ignored: the final time is fixed");
      else {
        if (guessSpec.finalTime < horizon.lower || guessSpec.finalTime > horizon.upper) {
          this.err(["guess", "finalTime"], `guess ${guessSpec.finalTime} is outside the final-time bounds [${horizon.lower}, ${horizon.upper}]`);
        }
        guessTf = guessSpec.finalTime;
      }
    }
    if (series.length !== nSeries) throw new Error("guess series count mismatch");
    if (horizon.kind === "free") {
      if (guessSpec.finalTime !== undefined && ft && "free" in ft && ft.free.guess !== undefined && horizon.guess !== guessSpec.finalTime) {
        this.warn(["guess", "finalTime"], `differs from horizon.finalTime.free.guess (${horizon.guess}); guess.finalTime is used`);
      }
      horizon.guess = guessTf; // one final-time guess for everybody
    }

    // ---- references
    const reference: ProblemReference = {};
    const ref = p.reference ?? {};
    if (ref.objective) reference.objective = { value: ref.objective.value, tolerance: ref.objective.tolerance, provenance: provenance(ref.objective.provenance) };
    if (ref.finalTime) {
      reference.finalTime = { value: ref.finalTime.value, tolerance: ref.finalTime.tolerance, provenance: provenance(ref.finalTime.provenance) };
      if (horizon.kind === "fixed" && Math.abs(ref.finalTime.value - horizon.tf) > ref.finalTime.tolerance) {
        this.err(["reference", "finalTime", "value"], `reference final time ${ref.finalTime.value} differs from the fixed final time ${horizon.tf}`);
      }
      if (horizon.kind === "free" && (ref.finalTime.value < horizon.lower || ref.finalTime.value > horizon.upper)) {
        this.err(["reference", "finalTime", "value"], `reference final time ${ref.finalTime.value} is outside the final-time bounds [${horizon.lower}, ${horizon.upper}]`);
      }
    }
    if (ref.switchingTimes) {
      const st = ref.switchingTimes;
      const hi = horizon.kind === "fixed" ? horizon.tf : horizon.upper;
      st.values.forEach((v, k) => {
        if (v < t0 || v > hi) this.err(["reference", "switchingTimes", "values", k], `switching time ${v} lies outside the horizon [${t0}, ${hi}]`);
        if (k > 0 && !(v > st.values[k - 1])) this.err(["reference", "switchingTimes", "values", k], "switching times must increase");
      });
      reference.switchingTimes = { values: [...st.values], tolerance: st.tolerance, provenance: provenance(st.provenance) };
    }
    if (ref.arcs) {
      const pathNames = pathInfo.map((c) => c.name);
      ref.arcs.forEach((arc, k) => {
        const m = /^boundary:(.*)$/.exec(arc);
        if (m && !pathNames.includes(m[1]) && !stateNames.includes(m[1])) {
          this.err(["reference", "arcs", k], `'${m[1]}' is not a path constraint or state`, { suggestion: nearestName(m[1], [...pathNames, ...stateNames]) });
        }
      });
      reference.arcs = [...ref.arcs];
    }
    if (ref.trajectory) {
      const table = this.csvChecked(this.files.referenceCsv, ref.trajectory.file, ["reference", "trajectory", "file"], stateNames, controlNames, true);
      if (table) {
        const columns: Record<string, Float64Array> = {};
        table.header.forEach((h, k) => {
          if (k > 0) columns[h] = table.columns[k];
        });
        const traj: ReferenceTrajectory = { t: table.columns[0], columns, provenance: provenance(ref.trajectory.provenance) };
        if (ref.trajectory.tolerance !== undefined) traj.tolerance = ref.trajectory.tolerance;
        reference.trajectory = traj;
      }
    } else if (this.files.referenceCsv !== undefined) {
      this.warn(["reference"], "reference.csv is present but no reference.trajectory names it");
    }
    if (guessSpec.kind !== "trajectory" && this.files.guessCsv !== undefined) {
      this.warn(["guess"], "guess.csv is present but the guess is not of kind \"trajectory\"");
    }

    if (this.errors.length > 0) return null;

    // ---- compile
    const dynNodes = dynTrees as MathNode[];
    const endpointInputs = ["t0", ...stateNames.map((n) => `initial(${n})`), "tf", ...stateNames.map((n) => `final(${n})`)];
    const consts = { ...constants };
    const compile = (nodes: MathNode[], inputs: string[]): PointFunction => compilePointFunction(nodes, inputs, consts);
    const initialRows = conditionRows.filter((r) => r.info.name.startsWith("initial("));
    const finalRows = conditionRows.filter((r) => r.info.name.startsWith("final("));
    const endpointRows = [...initialRows, ...finalRows, ...eventRows];
    const terminalTree = terminalRaw;

    const tex: Record<string, string> = {};
    const texOf = (key: string, n: MathNode | null) => {
      if (!n) return;
      try {
        tex[key] = toTex(n);
      } catch {
        tex[key] = "";
      }
    };
    intermediates.forEach((it) => texOf(`intermediates.${it.name}`, interRaw.get(it.name) ?? null));
    stateNames.forEach((n, i) => texOf(`dynamics.${n}`, dynRaw[i]));
    pathRaw.forEach((n, k) => texOf(`path[${k}].expr`, n));
    eventRows.forEach((r, k) => texOf(`endpointConstraints[${k}].expr`, r.node));
    texOf("objective.terminal", terminalRaw);
    texOf("objective.running", runningRaw);

    const compiled: CompiledProblem = {
      id: this.id,
      versionHash: problemVersionHash(this.files),
      title: p.title,
      description: p.description,
      tags: [...tags],
      nx: stateNames.length,
      nu: controlNames.length,
      states: stateInfo,
      controls: controlInfo,
      constants: consts,
      horizon,
      dynamics: compile(dynNodes, pointBase),
      path: compile(pathTrees as MathNode[], pointBase),
      pathInfo,
      runningCost: runningTree ? compile([runningTree], pointBase) : null,
      terminalCost: terminalTree ? compile([terminalTree], endpointInputs) : null,
      endpoint: compile(endpointRows.map((r) => r.node), endpointInputs),
      endpointInfo: endpointRows.map((r) => r.info),
      sense: obj.sense,
      objectiveSign: obj.sense === "max" ? -1 : 1,
      guess: makeGuess(series, guessTf),
      reference,
      warnings: this.warnings,
      symbolic: {
        pointInputs: pointBase,
        dynamics: dynNodes,
        path: pathTrees as MathNode[],
        runningCost: runningTree,
        terminalCost: terminalTree,
        tex,
        endpointInputs,
        endpoint: endpointRows.map((r) => r.node),
      },
      defaults: p.defaults ? { ...p.defaults } : undefined,
    };
    return compiled;
  }

  /** Validates one expression; returns its tree or null (errors recorded). */
  private expression(
    value: string | number,
    path: Seg[],
    scope: ExprScope,
    used: Set<string>,
    nonSmoothAt: string[],
  ): MathNode | null {
    const text = typeof value === "number" ? numberText(value) : value;
    const r = parseExpression(text, scope);
    for (const issue of r.issues) this.err(path, issue.message, { column: issue.column, suggestion: issue.suggestion });
    r.used.forEach((u) => used.add(u));
    for (const fn of r.nonSmooth) {
      nonSmoothAt.push(formatProblemError({ file: this.file, path: jsonPath(path), message: `${fn} is not smooth: derivatives jump where its arguments meet or cross zero` }));
    }
    return r.node;
  }

  /** Value of a number or an expression of constants (undefined when invalid). */
  private constantValue(
    value: number | string,
    path: Seg[],
    scope: ExprScope,
    constants: Record<string, number>,
    used: Set<string>,
  ): number | undefined {
    if (typeof value === "number") return value;
    const r = parseExpression(value, scope);
    for (const issue of r.issues) this.err(path, issue.message, { column: issue.column, suggestion: issue.suggestion });
    if (!r.node) return undefined;
    r.used.forEach((u) => used.add(u));
    const dag = new Dag();
    const n = toDag(dag, r.node, inputResolver(dag, [], constants));
    const v = dag.isConst(n) ? dag.value[n] : NaN;
    if (!Number.isFinite(v)) {
      this.err(path, `the expression evaluates to ${v}, not a finite number`);
      return undefined;
    }
    return v;
  }

  private csvFile(text: string | undefined, name: string, path: Seg[]): CsvTable | null {
    if (text === undefined) {
      this.err(path, `file '${name}' was not found next to problem.json`);
      return null;
    }
    const label = this.dir + name;
    const errs: ProblemError[] = [];
    const table = parseTrajectoryCsv(text, label, errs);
    this.errors.push(...errs);
    return table;
  }

  /** A CSV table whose header and rows are valid, after the column check. */
  private csvChecked(text: string | undefined, name: string, path: Seg[], states: string[], controls: string[], reference: boolean): CsvTable | null {
    const table = this.csvFile(text, name, path);
    if (!table) return null;
    this.checkColumns(table, name, states, controls, reference);
    return table.valid ? table : null;
  }

  /** Header check: t, every state (reference) or any states (guess), optional controls and costates. */
  private checkColumns(table: CsvTable, name: string, states: string[], controls: string[], needAllStates: boolean): void {
    const file = this.dir + name;
    const valid = [...states, ...controls, ...(needAllStates ? states.map((s) => `lambda_${s}`) : [])];
    table.header.forEach((h, k) => {
      if (k === 0) return;
      if (!valid.includes(h)) {
        this.err([], `unknown column '${h}' (expected states, controls${needAllStates ? " or lambda_<state>" : ""})`, {
          file,
          column: table.headerColumns[k],
          suggestion: nearestName(h, valid),
        });
        // path of a CSV error is its line, not a JSON path
        this.errors[this.errors.length - 1].path = `line ${table.headerLine}`;
      }
    });
    if (needAllStates) {
      const missing = states.filter((s) => !table.header.includes(s));
      if (missing.length > 0) {
        this.errors.push({ file, path: `line ${table.headerLine}`, message: `missing state column${missing.length > 1 ? "s" : ""} ${missing.map((m) => `'${m}'`).join(", ")}` });
      }
    }
  }
}

function numberText(v: number): string {
  return Number.isFinite(v) ? String(v) : "NaN";
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

function provenance(p: ProvenanceSpec): Provenance {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(p)) if (v !== undefined) out[k] = v;
  return out as Provenance;
}
