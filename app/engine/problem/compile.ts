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
import type { MathNode } from "mathjs";
import { parse } from "../expr/math";
import type { $ZodIssue } from "zod/v4/core";
import type {
  CompiledProblem,
  ConstraintInfo,
  Horizon,
  InitialGuess,
  PointFunction,
  ProblemReference,
  Provenance,
  ReferenceTrajectory,
  VariableInfo,
} from "./types";
import { formatProblemError, jsonPath, type ProblemError } from "./errors";
import { NAME_PATTERN, ProblemFileSchema, keysAtPath, type ProblemFile, type ProvenanceSpec, type VariableSpec } from "./schema";
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

/** Declared names, by kind. */
interface Declared {
  stateNames: string[];
  controlNames: string[];
  interNames: string[];
  constNames: string[];
  stateSet: Set<string>;
  /** ["t", ...states, ...controls]: the point-function input names. */
  pointInputs: string[];
}

interface EndpointRow {
  node: MathNode;
  info: ConstraintInfo;
}

/** Point-expression hints for the endpoint times. */
function endpointTimes(m: Map<string, string>): Map<string, string> {
  m.set("t0", "'t0' is for endpoint expressions; use 't' in point expressions");
  m.set("tf", "'tf' is for endpoint expressions; use 't' in point expressions");
  return m;
}

interface NamedEntry {
  name: string;
  kind: "constant" | "state" | "control" | "intermediate";
  path: Seg[];
}

class ProblemCompiler {
  private readonly errors: ProblemError[] = [];
  private readonly warnings: string[] = [];
  /** Values of the constants evaluated so far. */
  private readonly constants: Record<string, number> = Object.create(null);
  /** Names used by constant expressions (bounds, values) and by all other expressions. */
  private readonly constUsed = new Set<string>();
  private readonly usedNames = new Set<string>();
  /** Non-smooth-function warnings, one per expression. */
  private readonly nonSmoothAt: string[] = [];
  private readonly constraintNames = new Map<string, string>();
  private constScope: ExprScope = { names: new Set() };
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
  // The phases below run in this order (the order of the reported errors): names, constants,
  // variable bounds, horizon, expressions (intermediates, dynamics), end conditions, endpoint
  // and path constraints, objective, unused names, tags, guess, references; then, when nothing
  // failed, compilation.

  private build(p: ProblemFile): CompiledProblem | null {
    const d = this.declare(p);
    this.evaluateConstants(p, d);
    const stateInfo = this.variables(p.states, "states");
    const controlInfo = this.variables(p.controls ?? [], "controls");
    const horizon = this.horizonOf(p);
    const scopes = this.scopes(d);
    const inter = this.intermediatesOf(p, d);
    const dynRaw = this.dynamicsOf(p, d, scopes.point);
    const conditions = this.conditionsOf(p, d, stateInfo);
    const events = this.endpointConstraintsOf(p, scopes.endpoint);
    const path = this.pathConstraintsOf(p, d, scopes.point);
    const objective = this.objectiveOf(p, scopes);

    const sub = (n: MathNode | null, at: Seg[]): MathNode | null => {
      if (!n) return null;
      const s = substitute(n, inter.trees);
      if (treeDepth(s) > 4 * MAX_TREE_DEPTH) this.err(at, `expression is nested more than ${4 * MAX_TREE_DEPTH} levels deep after substituting intermediates`);
      return s;
    };
    const dynTrees = dynRaw.map((n, i) => sub(n, ["dynamics", d.stateNames[i]]));
    const pathTrees = path.raw.map((n, k) => sub(n, ["path", k, "expr"]));
    const runningTree = sub(objective.running, ["objective", "running"]);

    this.unusedNames(d, [...dynTrees, ...pathTrees, runningTree], dynTrees.every((t) => t !== null), conditions.constrained);
    this.checkTags(p, horizon);
    const guess = this.guessOf(p, d, stateInfo, controlInfo, conditions.ends, horizon);
    const reference = this.referenceOf(p, d, horizon, path.info);
    if (this.errors.length > 0) return null;

    // ---- compile (every tree is valid here)
    const consts = { ...this.constants };
    const pointInputs = d.pointInputs;
    const endpointInputs = ["t0", ...d.stateNames.map((n) => `initial(${n})`), "tf", ...d.stateNames.map((n) => `final(${n})`)];
    const compile = (nodes: MathNode[], inputs: string[]): PointFunction => compilePointFunction(nodes, inputs, consts);
    const endpointRows = [...conditions.rows, ...events];
    const tex = this.texOf(p, d, inter.raw, dynRaw, path.raw, events, objective);
    const dynNodes = dynTrees as MathNode[];
    const pathNodes = pathTrees as MathNode[];
    return {
      id: this.id,
      versionHash: problemVersionHash(this.files),
      title: p.title,
      description: p.description,
      tags: [...(p.tags ?? [])],
      nx: d.stateNames.length,
      nu: d.controlNames.length,
      states: stateInfo,
      controls: controlInfo,
      constants: consts,
      horizon,
      dynamics: compile(dynNodes, pointInputs),
      path: compile(pathNodes, pointInputs),
      pathInfo: path.info,
      runningCost: runningTree ? compile([runningTree], pointInputs) : null,
      terminalCost: objective.terminal ? compile([objective.terminal], endpointInputs) : null,
      endpoint: compile(endpointRows.map((r) => r.node), endpointInputs),
      endpointInfo: endpointRows.map((r) => r.info),
      sense: p.objective.sense,
      objectiveSign: p.objective.sense === "max" ? -1 : 1,
      guess,
      reference,
      warnings: [...this.warnings, ...new Set(this.nonSmoothAt)],
      symbolic: {
        pointInputs,
        dynamics: dynNodes,
        path: pathNodes,
        runningCost: runningTree,
        terminalCost: objective.terminal,
        tex,
        endpointInputs,
        endpoint: endpointRows.map((r) => r.node),
      },
      defaults: p.defaults ? { ...p.defaults } : undefined,
    };
  }

  /** Names: syntax is zod's; here reserved words and duplicates across all kinds. */
  private declare(p: ProblemFile): Declared {
    const constantsSpec = p.constants ?? {};
    const controls = p.controls ?? [];
    const intermediates = p.intermediates ?? [];
    const entries: NamedEntry[] = [
      ...Object.keys(constantsSpec).map((name): NamedEntry => ({ name, kind: "constant", path: ["constants", name] })),
      ...p.states.map((s, i): NamedEntry => ({ name: s.name, kind: "state", path: ["states", i, "name"] })),
      ...controls.map((s, i): NamedEntry => ({ name: s.name, kind: "control", path: ["controls", i, "name"] })),
      ...intermediates.map((s, i): NamedEntry => ({ name: s.name, kind: "intermediate", path: ["intermediates", i, "name"] })),
    ];
    const byName = new Map<string, NamedEntry>();
    for (const e of entries) {
      if (e.kind === "constant" && !NAME_PATTERN.test(e.name)) {
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
    const stateNames = p.states.map((s) => s.name);
    const controlNames = controls.map((s) => s.name);
    return {
      stateNames,
      controlNames,
      interNames: intermediates.map((s) => s.name),
      constNames: Object.keys(constantsSpec),
      stateSet: new Set(stateNames),
      pointInputs: ["t", ...stateNames, ...controlNames],
    };
  }

  /** Messages for declared names that may not appear in a constant expression. */
  private notConstant(d: Declared, allowed: string): Map<string, string> {
    const m = new Map<string, string>();
    for (const n of d.stateNames) m.set(n, `state '${n}' cannot be used here: ${allowed}`);
    for (const n of d.controlNames) m.set(n, `control '${n}' cannot be used here: ${allowed}`);
    for (const n of d.interNames) m.set(n, `intermediate '${n}' cannot be used here: ${allowed}`);
    for (const n of ["t", "t0", "tf"]) m.set(n, `'${n}' cannot be used here: ${allowed}`);
    return m;
  }

  /** Constants in order; each may use earlier constants. Sets this.constants and this.constScope. */
  private evaluateConstants(p: ProblemFile, d: Declared): void {
    const spec = p.constants ?? {};
    d.constNames.forEach((name, k) => {
      const s = spec[name];
      const value = typeof s === "object" ? s.value : s;
      const path: Seg[] = typeof s === "object" ? ["constants", name, "value"] : ["constants", name];
      const misplaced = this.notConstant(d, "a constant may use earlier constants only");
      for (const later of d.constNames.slice(k)) {
        misplaced.set(later, `constant '${later}' is defined later (constants may use earlier constants only)`);
      }
      const v = this.constantValue(value, path, { names: new Set(d.constNames.slice(0, k)), misplaced });
      if (v !== undefined) this.constants[name] = v;
    });
    this.constScope = { names: new Set(d.constNames), misplaced: this.notConstant(d, "bounds and values may use constants only") };
  }

  /** A bound or value: number, expression of constants, or null/omitted (→ `absent`). NaN when invalid. */
  private num(v: number | string | null | undefined, path: Seg[], absent: number): number {
    if (v === null || v === undefined) return absent;
    return this.constantValue(v, path, this.constScope) ?? NaN;
  }

  private variables(list: VariableSpec[], key: "states" | "controls"): VariableInfo[] {
    return list.map((s, i) => {
      const lower = this.num(s.lower, [key, i, "lower"], -Infinity);
      const upper = this.num(s.upper, [key, i, "upper"], Infinity);
      if (lower > upper) this.err([key, i], `contradictory bounds: lower ${lower} > upper ${upper}`);
      return { name: s.name, unit: s.unit ?? "", lower, upper, scale: s.scale ?? 1 };
    });
  }

  /** Fixed tf > t0, or free with t0 < lower ≤ upper and a guess inside (finalised in guessOf). */
  private horizonOf(p: ProblemFile): Horizon {
    const t0 = p.horizon.initialTime ?? 0;
    const ft = p.horizon.finalTime;
    if ("fixed" in ft) {
      const tf = this.num(ft.fixed, ["horizon", "finalTime", "fixed"], NaN);
      if (tf <= t0) this.err(["horizon", "finalTime", "fixed"], `final time ${tf} must be greater than initialTime ${t0}`);
      return { kind: "fixed", t0, tf };
    }
    const fp: Seg[] = ["horizon", "finalTime", "free"];
    const lower = this.num(ft.free.lower, [...fp, "lower"], NaN);
    const upper = this.num(ft.free.upper, [...fp, "upper"], NaN);
    // NaN marks a value whose error is reported already
    if (!Number.isNaN(lower) && !(lower > t0)) this.err([...fp, "lower"], `lower bound ${lower} of the final time must be greater than initialTime ${t0}`);
    if (lower > upper) this.err(fp, `contradictory bounds: lower ${lower} > upper ${upper}`);
    const guess = ft.free.guess === undefined ? 0.5 * (lower + upper) : this.num(ft.free.guess, [...fp, "guess"], NaN);
    if (ft.free.guess !== undefined && (guess < lower || guess > upper)) this.err([...fp, "guess"], `guess ${guess} is outside [${lower}, ${upper}]`);
    return { kind: "free", t0, lower, upper, guess };
  }

  /** Scopes of point expressions (t, x, u, constants, intermediates) and endpoint expressions. */
  private scopes(d: Declared): { point: ExprScope; endpoint: ExprScope } {
    const point: ExprScope = {
      names: new Set([...d.pointInputs, ...d.constNames, ...d.interNames]),
      misplaced: endpointTimes(new Map()),
    };
    const m = new Map<string, string>();
    for (const n of d.stateNames) m.set(n, `state '${n}' in an endpoint expression: write initial(${n}) or final(${n})`);
    for (const n of d.controlNames) m.set(n, `control '${n}' cannot be used in an endpoint expression (controls are not endpoint values)`);
    for (const n of d.interNames) m.set(n, `intermediate '${n}' cannot be used in an endpoint expression (it depends on t, states and controls)`);
    m.set("t", "'t' in an endpoint expression: write t0 or tf");
    const endpoint: ExprScope = { names: new Set(["t0", "tf", ...d.constNames]), misplaced: m, endpointStates: d.stateSet };
    return { point, endpoint };
  }

  /** Intermediates in dependency order: trees as written and with earlier intermediates substituted. */
  private intermediatesOf(p: ProblemFile, d: Declared): { raw: Map<string, MathNode>; trees: Map<string, MathNode> } {
    const raw = new Map<string, MathNode>();
    const trees = new Map<string, MathNode>();
    (p.intermediates ?? []).forEach((inter, k) => {
      const misplaced = endpointTimes(new Map());
      for (const later of d.interNames.slice(k)) {
        misplaced.set(later, later === inter.name
          ? `intermediate '${later}' cannot use itself`
          : `intermediate '${later}' is defined later: list intermediates in dependency order`);
      }
      const scope: ExprScope = { names: new Set([...d.pointInputs, ...d.constNames, ...d.interNames.slice(0, k)]), misplaced };
      const node = this.expression(inter.expr, ["intermediates", k, "expr"], scope, this.usedNames);
      if (node) {
        raw.set(inter.name, node);
        trees.set(inter.name, substitute(node, trees));
      }
    });
    return { raw, trees };
  }

  /** One dynamics entry per state (trees as written, in state order). */
  private dynamicsOf(p: ProblemFile, d: Declared, scope: ExprScope): (MathNode | null)[] {
    for (const key of Object.keys(p.dynamics)) {
      if (!d.stateSet.has(key)) {
        this.err(["dynamics", key], `'${key}' is not a state: dynamics has one entry per state`, { suggestion: nearestName(key, d.stateNames) });
      }
    }
    return d.stateNames.map((name) => {
      if (!Object.hasOwn(p.dynamics, name)) {
        this.err(["dynamics"], `missing entry for state '${name}' (one expression per state: d${name}/dt)`);
        return null;
      }
      return this.expression(p.dynamics[name], ["dynamics", name], scope, this.usedNames);
    });
  }

  /**
   * Initial / final conditions → endpoint rows x(t0)_i, x(tf)_i with their bounds: the initial
   * rows in state order, then the final rows in state order.
   */
  private conditionsOf(p: ProblemFile, d: Declared, stateInfo: VariableInfo[]): {
    rows: EndpointRow[];
    ends: { initial: (EndRange | undefined)[]; final: (EndRange | undefined)[] };
    constrained: Set<string>;
  } {
    const rows: EndpointRow[] = [];
    const ends = { initial: d.stateNames.map((): EndRange | undefined => undefined), final: d.stateNames.map((): EndRange | undefined => undefined) };
    const constrained = new Set<string>();
    for (const which of ["initial", "final"] as const) {
      const conds = p[which] ?? {};
      for (const key of Object.keys(conds)) {
        if (!d.stateSet.has(key)) this.err([which, key], `'${key}' is not a state`, { suggestion: nearestName(key, d.stateNames) });
      }
      d.stateNames.forEach((name, i) => {
        if (!Object.hasOwn(conds, name)) return;
        const c = conds[name];
        const path: Seg[] = [which, name];
        let lower: number;
        let upper: number;
        if (typeof c === "object" && c !== null) {
          lower = this.num(c.lower, [...path, "lower"], -Infinity);
          upper = this.num(c.upper, [...path, "upper"], Infinity);
          if (lower === -Infinity && upper === Infinity) this.err(path, "a range needs 'lower' and/or 'upper' (omit the entry for a free value)");
        } else {
          lower = upper = this.num(c, path, NaN);
        }
        if (lower > upper) this.err(path, `contradictory bounds: lower ${lower} > upper ${upper}`);
        const sb = stateInfo[i];
        if (sb.lower <= sb.upper && (upper < sb.lower || lower > sb.upper)) {
          const what = lower === upper ? `${which} value ${lower}` : `${which} range [${lower}, ${upper}]`;
          this.err(path, `${what} of '${name}' lies outside the state's bounds [${sb.lower}, ${sb.upper}]`);
        }
        ends[which][i] = { lower, upper };
        constrained.add(name);
        // the name matched NAME_PATTERN, so this is safe mathjs text
        rows.push({ node: parse(`${which}(${name})`), info: { name: `${which}(${name})`, lower, upper } });
      });
    }
    return { rows, ends, constrained };
  }

  /** Bounds of a constraint: at least one side, lower ≤ upper. */
  private boundsOf(c: { lower?: number | string | null; upper?: number | string | null }, path: Seg[], what: string) {
    const lower = this.num(c.lower, [...path, "lower"], -Infinity);
    const upper = this.num(c.upper, [...path, "upper"], Infinity);
    if (lower === -Infinity && upper === Infinity) this.err(path, `${what} needs 'lower' and/or 'upper' (equal for an equality)`);
    if (lower > upper) this.err(path, `contradictory bounds: lower ${lower} > upper ${upper}`);
    return { lower, upper };
  }

  /** Constraint names are unique across endpoint and path constraints. */
  private constraintName(given: string | undefined, fallback: string, path: Seg[]): string {
    const name = given ?? fallback;
    const prev = this.constraintNames.get(name);
    if (prev !== undefined) this.err([...path, "name"], `constraint name '${name}' is already used at ${prev}`);
    this.constraintNames.set(name, jsonPath(path));
    return name;
  }

  private endpointConstraintsOf(p: ProblemFile, scope: ExprScope): EndpointRow[] {
    const rows: EndpointRow[] = [];
    (p.endpointConstraints ?? []).forEach((c, k) => {
      const path: Seg[] = ["endpointConstraints", k];
      const used = new Set<string>();
      const node = this.expression(c.expr, [...path, "expr"], scope, used);
      used.forEach((u) => this.usedNames.add(u));
      const b = this.boundsOf(c, path, "an endpoint constraint");
      const name = this.constraintName(c.name, `endpoint${k}`, path);
      if (node && ![...used].some((u) => u === "t0" || u === "tf" || u.includes("("))) {
        this.err([...path, "expr"], "the expression depends on no endpoint value (initial(x), final(x), t0, tf)");
      }
      if (node) rows.push({ node, info: { name, ...b } });
    });
    return rows;
  }

  private pathConstraintsOf(p: ProblemFile, d: Declared, scope: ExprScope): { raw: (MathNode | null)[]; info: ConstraintInfo[] } {
    const raw: (MathNode | null)[] = [];
    const info: ConstraintInfo[] = [];
    (p.path ?? []).forEach((c, k) => {
      const path: Seg[] = ["path", k];
      const used = new Set<string>();
      const node = this.expression(c.expr, [...path, "expr"], scope, used);
      used.forEach((u) => this.usedNames.add(u));
      if (node && !d.pointInputs.some((n) => used.has(n)) && !d.interNames.some((n) => used.has(n))) {
        this.err([...path, "expr"], "the expression depends on no time, state or control");
      }
      const b = this.boundsOf(c, path, "a path constraint");
      raw.push(node);
      info.push({ name: this.constraintName(c.name, `path${k}`, path), ...b });
    });
    return { raw, info };
  }

  private objectiveOf(p: ProblemFile, scopes: { point: ExprScope; endpoint: ExprScope }): { terminal: MathNode | null; running: MathNode | null } {
    const obj = p.objective;
    if (obj.terminal === undefined && obj.running === undefined) {
      this.err(["objective"], "the objective needs a 'terminal' term, a 'running' term or both");
    }
    return {
      terminal: obj.terminal === undefined ? null : this.expression(obj.terminal, ["objective", "terminal"], scopes.endpoint, this.usedNames),
      running: obj.running === undefined ? null : this.expression(obj.running, ["objective", "running"], scopes.point, this.usedNames),
    };
  }

  /**
   * Unused constants and intermediates warn; an unused control is an error (DEVELOPERS.md,
   * Decisions); a state used nowhere (no expression, no end condition) warns.
   */
  private unusedNames(d: Declared, pointTrees: (MathNode | null)[], allDynamics: boolean, constrained: Set<string>): void {
    for (const n of d.constNames) {
      if (!this.usedNames.has(n) && !this.constUsed.has(n)) this.warn(["constants", n], `constant '${n}' is never used`);
    }
    d.interNames.forEach((n, k) => {
      if (!this.usedNames.has(n)) this.warn(["intermediates", k], `intermediate '${n}' is never used`);
    });
    const pointUsed = new Set<string>();
    for (const t of pointTrees) {
      t?.traverse((n) => {
        if (n.type === "SymbolNode") pointUsed.add((n as unknown as { name: string }).name);
      });
    }
    d.controlNames.forEach((n, i) => {
      if (allDynamics && !pointUsed.has(n)) {
        this.err(["controls", i], `control '${n}' is never used in the dynamics, path constraints or running cost`);
      }
    });
    d.stateNames.forEach((n, i) => {
      const anywhere = pointUsed.has(n) || this.usedNames.has(`initial(${n})`) || this.usedNames.has(`final(${n})`) || constrained.has(n);
      if (!anywhere) this.warn(["states", i], `state '${n}' is never used`);
    });
  }

  /** Tags are free-form; a near miss of a known tag and a horizon mismatch warn. */
  private checkTags(p: ProblemFile, horizon: Horizon): void {
    const tags = p.tags ?? [];
    tags.forEach((tag, k) => {
      const near = KNOWN_TAGS.includes(tag) ? undefined : nearestName(tag, KNOWN_TAGS);
      if (near) this.warn(["tags", k], `unknown tag '${tag}'; did you mean '${near}'?`);
    });
    if (tags.includes("free-final-time") && horizon.kind === "fixed") this.warn(["tags"], "tag 'free-final-time' but the final time is fixed");
    if (tags.includes("fixed-final-time") && horizon.kind === "free") this.warn(["tags"], "tag 'fixed-final-time' but the final time is free");
  }

  /**
   * The initial guess (rules in guess.ts). For a free final time the one final-time guess is, in
   * order of precedence: guess.finalTime, horizon.finalTime.free.guess, the last time of
   * guess.csv, the middle of the bounds; horizon.guess is set to it.
   */
  private guessOf(
    p: ProblemFile,
    d: Declared,
    stateInfo: VariableInfo[],
    controlInfo: VariableInfo[],
    ends: { initial: (EndRange | undefined)[]; final: (EndRange | undefined)[] },
    horizon: Horizon,
  ): InitialGuess {
    const spec = p.guess ?? { kind: "linear" as const };
    const nx = d.stateNames.length;
    const series: GuessSeries[] = stateInfo.map((s, i) => {
      const [a, b] = defaultStateEnds(ends.initial[i], ends.final[i], s);
      return spec.kind === "constant" ? { kind: "line", a, b: a } : { kind: "line", a, b };
    });
    for (const c of controlInfo) {
      const m = midOrFinite(c.lower, c.upper) ?? 0;
      series.push({ kind: "line", a: m, b: m });
    }
    const ft = p.horizon.finalTime;
    const horizonGuessGiven = "free" in ft && ft.free.guess !== undefined;
    let tf = horizon.kind === "fixed" ? horizon.tf : horizon.guess;
    let tfFrom: Seg[] = ["horizon", "finalTime", "free", "guess"];
    if (spec.kind === "trajectory") {
      const table = this.csvChecked(this.files.guessCsv, spec.file, ["guess", "file"], d.stateNames, d.controlNames, false);
      if (table) {
        const t = table.columns[0];
        const tau = t.map((x) => (x - t[0]) / (t[t.length - 1] - t[0]));
        table.header.forEach((h, k) => {
          const i = d.stateNames.indexOf(h);
          const j = d.controlNames.indexOf(h);
          if (k > 0 && i >= 0) series[i] = { kind: "table", tau, y: table.columns[k] };
          else if (k > 0 && j >= 0) series[nx + j] = { kind: "table", tau, y: table.columns[k] };
        });
        if (horizon.kind === "free" && !horizonGuessGiven) {
          tf = t[t.length - 1];
          tfFrom = ["guess", "file"];
        }
      }
    } else {
      for (const which of ["states", "controls"] as const) {
        const vals = spec[which] ?? {};
        const names = which === "states" ? d.stateNames : d.controlNames;
        for (const key of Object.keys(vals)) {
          const j = names.indexOf(key);
          if (j < 0) {
            this.err(["guess", which, key], `'${key}' is not a ${which === "states" ? "state" : "control"}`, { suggestion: nearestName(key, names) });
            continue;
          }
          const v = vals[key];
          series[(which === "states" ? 0 : nx) + j] = typeof v === "number" ? { kind: "line", a: v, b: v } : { kind: "line", a: v[0], b: v[1] };
        }
      }
    }
    if (spec.finalTime !== undefined) {
      if (horizon.kind === "fixed") this.warn(["guess", "finalTime"], "ignored: the final time is fixed");
      else {
        if (horizonGuessGiven && horizon.guess !== spec.finalTime) {
          this.warn(["guess", "finalTime"], `differs from horizon.finalTime.free.guess (${horizon.guess}); guess.finalTime is used`);
        }
        tf = spec.finalTime;
        tfFrom = ["guess", "finalTime"];
      }
    }
    if (horizon.kind === "free") {
      if (tfFrom[0] === "guess" && (tf < horizon.lower || tf > horizon.upper)) {
        this.err(tfFrom, `final-time guess ${tf} is outside the final-time bounds [${horizon.lower}, ${horizon.upper}]`);
      }
      horizon.guess = tf; // one final-time guess for everybody
    }
    if (spec.kind !== "trajectory" && this.files.guessCsv !== undefined) {
      this.warn(["guess"], "guess.csv is present but the guess is not of kind \"trajectory\"");
    }
    return makeGuess(series, tf);
  }

  private referenceOf(p: ProblemFile, d: Declared, horizon: Horizon, pathInfo: ConstraintInfo[]): ProblemReference {
    const reference: ProblemReference = {};
    const ref = p.reference ?? {};
    const value = (r: { value: number; tolerance: number; provenance: ProvenanceSpec }) => ({
      value: r.value,
      tolerance: r.tolerance,
      provenance: provenance(r.provenance),
    });
    if (ref.objective) reference.objective = value(ref.objective);
    if (ref.finalTime) {
      reference.finalTime = value(ref.finalTime);
      const at: Seg[] = ["reference", "finalTime", "value"];
      if (horizon.kind === "fixed" && Math.abs(ref.finalTime.value - horizon.tf) > ref.finalTime.tolerance) {
        this.err(at, `reference final time ${ref.finalTime.value} differs from the fixed final time ${horizon.tf}`);
      }
      if (horizon.kind === "free" && (ref.finalTime.value < horizon.lower || ref.finalTime.value > horizon.upper)) {
        this.err(at, `reference final time ${ref.finalTime.value} is outside the final-time bounds [${horizon.lower}, ${horizon.upper}]`);
      }
    }
    if (ref.switchingTimes) {
      const st = ref.switchingTimes;
      const hi = horizon.kind === "fixed" ? horizon.tf : horizon.upper;
      st.values.forEach((v, k) => {
        const at: Seg[] = ["reference", "switchingTimes", "values", k];
        if (v < horizon.t0 || v > hi) this.err(at, `switching time ${v} lies outside the horizon [${horizon.t0}, ${hi}]`);
        if (k > 0 && !(v > st.values[k - 1])) this.err(at, "switching times must increase");
      });
      reference.switchingTimes = { values: [...st.values], tolerance: st.tolerance, provenance: provenance(st.provenance) };
    }
    if (ref.arcs) {
      const pathNames = pathInfo.map((c) => c.name);
      ref.arcs.forEach((arc, k) => {
        const m = /^boundary:(.*)$/.exec(arc);
        if (m && !pathNames.includes(m[1]) && !d.stateNames.includes(m[1])) {
          this.err(["reference", "arcs", k], `'${m[1]}' is not a path constraint or state`, {
            suggestion: nearestName(m[1], [...pathNames, ...d.stateNames]),
          });
        }
      });
      reference.arcs = [...ref.arcs];
    }
    if (ref.trajectory) {
      const at: Seg[] = ["reference", "trajectory", "file"];
      const table = this.csvChecked(this.files.referenceCsv, ref.trajectory.file, at, d.stateNames, d.controlNames, true);
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
    return reference;
  }

  /** TeX of every expression as written (intermediates by name), keyed by JSON path. */
  private texOf(
    p: ProblemFile,
    d: Declared,
    interRaw: Map<string, MathNode>,
    dynRaw: (MathNode | null)[],
    pathRaw: (MathNode | null)[],
    events: EndpointRow[],
    objective: { terminal: MathNode | null; running: MathNode | null },
  ): Record<string, string> {
    const tex: Record<string, string> = {};
    const put = (key: string, n: MathNode | null | undefined) => {
      if (!n) return;
      try {
        tex[key] = toTex(n);
      } catch {
        tex[key] = "";
      }
    };
    for (const it of p.intermediates ?? []) put(`intermediates.${it.name}`, interRaw.get(it.name));
    d.stateNames.forEach((n, i) => put(`dynamics.${n}`, dynRaw[i]));
    pathRaw.forEach((n, k) => put(`path[${k}].expr`, n));
    // called only when nothing failed, so events[k] is endpointConstraints[k]
    events.forEach((r, k) => put(`endpointConstraints[${k}].expr`, r.node));
    put("objective.terminal", objective.terminal);
    put("objective.running", objective.running);
    return tex;
  }

  /** Validates one expression; returns its tree or null (errors recorded). */
  private expression(value: string | number, path: Seg[], scope: ExprScope, used: Set<string>): MathNode | null {
    const text = typeof value === "number" ? numberText(value) : value;
    const r = parseExpression(text, scope);
    for (const issue of r.issues) this.err(path, issue.message, { column: issue.column, suggestion: issue.suggestion });
    r.used.forEach((u) => used.add(u));
    for (const fn of r.nonSmooth) {
      this.nonSmoothAt.push(formatProblemError({ file: this.file, path: jsonPath(path), message: `${fn} is not smooth: derivatives jump where its arguments meet or cross zero` }));
    }
    return r.node;
  }

  /** Value of a number or an expression of constants (undefined when invalid). */
  private constantValue(value: number | string, path: Seg[], scope: ExprScope): number | undefined {
    if (typeof value === "number") return value;
    const r = parseExpression(value, scope);
    for (const issue of r.issues) this.err(path, issue.message, { column: issue.column, suggestion: issue.suggestion });
    if (!r.node) return undefined;
    r.used.forEach((u) => this.constUsed.add(u));
    // a constant whose own value failed has been reported already: no second error here
    if ([...r.used].some((u) => !Object.hasOwn(this.constants, u))) return undefined;
    const dag = new Dag();
    const n = toDag(dag, r.node, inputResolver(dag, [], this.constants));
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
