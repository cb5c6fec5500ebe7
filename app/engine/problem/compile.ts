/**
 * Problem file → CompiledProblem: JSON syntax, structure (zod, schema.ts), semantic checks
 * (names, scopes, bounds, files), then compilation of every expression to PointFunctions with
 * exact sparse first and second derivatives (expr/compile.ts).
 *
 * All errors of a phase are collected and returned together: structural errors first (the
 * semantic checks need a well-formed file), otherwise every semantic and expression error.
 * This function never throws for any input text.
 *
 * Phases by file: compile-base.ts (shared state, reading problem.json, schema issues), this file
 * (names, constants, bounds, horizon, expressions, constraints, objective, compilation),
 * compile-data.ts (guess, references and their CSV files).
 *
 * Input layouts (types.ts): point functions z = [t, x_1..x_nx, u_1..u_nu];
 * endpoint functions e = [t0, x(t0)_1..nx, tf, x(tf)_1..nx].
 */
import type { MathNode } from "mathjs";
import { parse } from "../expr/math";
import type {
  CompiledProblem,
  ConstraintInfo,
  Horizon,
  PointFunction,
  VariableInfo,
} from "./types";
import { formatProblemError, jsonPath, type ProblemError } from "./errors";
import { NAME_PATTERN, ProblemFileSchema, type ProblemFile, type VariableSpec } from "./schema";
import type { EndRange } from "./guess";
import { parseExpression, treeDepth, FUNCTION_ARITY, MAX_TREE_DEPTH, type ExprScope } from "../expr/validate";
import { nearestName } from "../expr/suggest";
import { compilePointFunction, inputResolver, toDag } from "../expr/compile";
import { Dag } from "../expr/dag";
import { substitute } from "../expr/derive";
import { toTex } from "../expr/tex";
import { Sha256 } from "./sha256";
import type { Declared, Seg } from "./compile-base";
import { DataFileCompiler } from "./compile-data";

export type CompileResult = { ok: true; problem: CompiledProblem } | { ok: false; errors: ProblemError[] };

export interface ProblemSourceFiles {
  problemJson: string;
  referenceCsv?: string;
  guessCsv?: string;
}
export { MAX_PROBLEM_JSON_LENGTH } from "./compile-base";

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

class ProblemCompiler extends DataFileCompiler {
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
}

function numberText(v: number): string {
  return Number.isFinite(v) ? String(v) : "NaN";
}
