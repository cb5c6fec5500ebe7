/**
 * The expression whitelist: parses user text with mathjs and accepts only
 *   numbers, declared names, + − * / ^, unary − and +, parentheses, and the functions
 *   exp log sqrt sin cos tan atan sinh cosh tanh abs (1 argument), atan2 (2), min max (≥ 2),
 *   plus initial(x) / final(x) in endpoint expressions.
 * Everything else (assignments, function definitions, strings, matrices, property access,
 * comparisons, unknown functions...) is refused with a message, a 1-based column and, for
 * names, the nearest valid name. All problems of one expression are collected.
 *
 * Bounds on hostile input: at most MAX_EXPRESSION_LENGTH characters, ASCII only, at most
 * MAX_BRACKET_NESTING nested brackets before parsing and MAX_TREE_DEPTH levels in the tree;
 * any exception from the parser (including stack exhaustion) becomes an issue.
 */
import type { MathNode } from "mathjs";
import { parse } from "./math";
import { foldLookalikes, nearestName } from "./suggest";

export const MAX_EXPRESSION_LENGTH = 4000;
export const MAX_BRACKET_NESTING = 64;
export const MAX_TREE_DEPTH = 200;

/** Whitelisted functions and their arity (min, max arguments). */
export const FUNCTION_ARITY: Readonly<Record<string, readonly [number, number]>> = {
  exp: [1, 1], log: [1, 1], sqrt: [1, 1], sin: [1, 1], cos: [1, 1], tan: [1, 1], atan: [1, 1],
  atan2: [2, 2], sinh: [1, 1], cosh: [1, 1], tanh: [1, 1], abs: [1, 1], min: [2, 16], max: [2, 16],
};
export const NON_SMOOTH_FUNCTIONS: readonly string[] = ["abs", "min", "max"];
export const ENDPOINT_FUNCTIONS: readonly string[] = ["initial", "final"];
/** Names with a fixed meaning in expressions. */
export const BUILTIN_CONSTANTS: readonly string[] = ["pi"];

export interface ExprIssue {
  column?: number;
  message: string;
  suggestion?: string;
}

export interface ExprScope {
  /** Names usable in this expression. */
  names: ReadonlySet<string>;
  /** Declared names that may not be used here, with the reason shown to the engineer. */
  misplaced?: ReadonlyMap<string, string>;
  /** When set, initial(x)/final(x) are allowed for these state names. */
  endpointStates?: ReadonlySet<string>;
}

export interface ParsedExpression {
  /** The validated tree, or null when there are issues. */
  node: MathNode | null;
  issues: ExprIssue[];
  /** Non-smooth functions used (abs, min, max). */
  nonSmooth: string[];
  /** Names used: plain symbols, and "initial(x)"/"final(x)". */
  used: Set<string>;
}

interface Token {
  text: string;
  column: number;
}

/** Identifier tokens in textual order, mathjs-style (a letter, _ or $ then letters, digits, _ $). */
function identifierTokens(text: string): Token[] {
  const out: Token[] = [];
  let i = 0;
  while (i < text.length) {
    const c = text[i];
    if (/[A-Za-z_$]/.test(c)) {
      const start = i;
      while (i < text.length && /[A-Za-z0-9_$]/.test(text[i])) i++;
      out.push({ text: text.slice(start, i), column: start + 1 });
    } else if (/[0-9.]/.test(c)) {
      while (i < text.length && /[0-9.]/.test(text[i])) i++;
      if (i < text.length && (text[i] === "e" || text[i] === "E") && /[0-9+-]/.test(text[i + 1] ?? "")) {
        i += 2;
        while (i < text.length && /[0-9]/.test(text[i])) i++;
      }
    } else i++;
  }
  return out;
}

/** Finds the column of the k-th occurrence of names and operator tokens, in traversal order. */
class Locator {
  private readonly idents: Token[];
  private readonly seen = new Map<string, number>();
  constructor(private readonly text: string) {
    this.idents = identifierTokens(text);
  }
  /** Column of the next occurrence of identifier `name`. */
  word(name: string): number | undefined {
    const k = this.seen.get(`w:${name}`) ?? 0;
    this.seen.set(`w:${name}`, k + 1);
    let count = 0;
    for (const t of this.idents) if (t.text === name && count++ === k) return t.column;
    return undefined;
  }
  /** Column of the next occurrence of raw text `tok`. */
  token(tok: string): number | undefined {
    const k = this.seen.get(`t:${tok}`) ?? 0;
    this.seen.set(`t:${tok}`, k + 1);
    let from = 0;
    for (let count = 0; ; count++) {
      const at = this.text.indexOf(tok, from);
      if (at < 0) return undefined;
      if (count === k) return at + 1;
      from = at + tok.length;
    }
  }
  /** Column of the first of several raw tokens. */
  first(...toks: string[]): number | undefined {
    let best: number | undefined;
    for (const t of toks) {
      const at = this.text.indexOf(t);
      if (at >= 0 && (best === undefined || at + 1 < best)) best = at + 1;
    }
    return best;
  }
}

const REFUSED_NODE: Record<string, { message: string; tokens: string[] }> = {
  AccessorNode: { message: "property access and indexing ('a.b', 'a[1]') are not allowed", tokens: [".", "["] },
  ArrayNode: { message: "matrices and vectors ('[...]') are not allowed", tokens: ["["] },
  AssignmentNode: { message: "assignments are not allowed: an expression only computes a value", tokens: ["="] },
  FunctionAssignmentNode: { message: "function definitions are not allowed: use an intermediate instead", tokens: ["="] },
  BlockNode: { message: "only one expression is allowed (found ';' or a line break)", tokens: [";", "\n"] },
  ConditionalNode: { message: "conditional expressions ('a ? b : c') are not allowed: use min, max or abs", tokens: ["?"] },
  ObjectNode: { message: "objects ('{...}') are not allowed", tokens: ["{"] },
  RangeNode: { message: "ranges ('a:b') are not allowed", tokens: [":"] },
  RelationalNode: {
    message: "comparisons are not allowed in expressions: put the bounds in the constraint's 'lower' / 'upper' fields",
    tokens: ["<", ">", "=="],
  },
  IndexNode: { message: "indexing is not allowed", tokens: ["["] },
};

const COMPARISON_OPS = new Set(["<", ">", "<=", ">=", "==", "!="]);
const ALLOWED_BINARY = new Set(["+", "-", "*", "/", "^"]);

/** Parses and validates one expression against `scope`. Never throws. */
export function parseExpression(text: string, scope: ExprScope): ParsedExpression {
  const result: ParsedExpression = { node: null, issues: [], nonSmooth: [], used: new Set() };
  const issues = result.issues;
  try {
    if (typeof text !== "string") {
      issues.push({ message: "an expression must be a string or a number" });
      return result;
    }
    if (text.trim() === "") {
      issues.push({ message: "empty expression" });
      return result;
    }
    if (text.length > MAX_EXPRESSION_LENGTH) {
      issues.push({ message: `expression is ${text.length} characters long; at most ${MAX_EXPRESSION_LENGTH} are allowed` });
      return result;
    }
    if (!checkCharacters(text, scope, issues)) return result;
    if (!checkNesting(text, issues)) return result;

    let root: MathNode;
    try {
      root = parse(text);
    } catch (err) {
      issues.push(parseIssue(err));
      return result;
    }
    const loc = new Locator(text);
    const nonSmooth = new Set<string>();
    let tooDeep = false;

    const walk = (node: MathNode, depth: number): void => {
      if (depth > MAX_TREE_DEPTH) {
        if (!tooDeep) issues.push({ message: `expression is nested more than ${MAX_TREE_DEPTH} levels deep` });
        tooDeep = true;
        return;
      }
      const d = depth + 1;
      switch (node.type) {
        case "ConstantNode": {
          const v = (node as unknown as { value: unknown }).value;
          if (typeof v === "number") {
            if (!Number.isFinite(v)) issues.push({ message: "number out of range" });
          } else if (typeof v === "string") {
            issues.push({ column: loc.first('"', "'"), message: "strings are not allowed: expressions are numeric" });
          } else {
            issues.push({ column: loc.word(String(v)), message: `'${String(v)}' is not allowed: expressions are numeric` });
          }
          return;
        }
        case "SymbolNode": {
          const name = (node as unknown as { name: string }).name;
          checkSymbol(name, loc.word(name));
          return;
        }
        case "ParenthesisNode":
          walk((node as unknown as { content: MathNode }).content, d);
          return;
        case "OperatorNode": {
          const { op, args } = node as unknown as { op: string; args: MathNode[] };
          const ok = (args.length === 2 && ALLOWED_BINARY.has(op)) || (args.length === 1 && (op === "-" || op === "+"));
          if (!ok) {
            const msg = COMPARISON_OPS.has(op)
              ? REFUSED_NODE.RelationalNode.message
              : `operator '${op}' is not allowed; use + - * / ^`;
            issues.push({ column: loc.token(op), message: msg });
            return;
          }
          for (const a of args) walk(a, d);
          return;
        }
        case "FunctionNode": {
          const { fn, args } = node as unknown as { fn: MathNode; args: MathNode[] };
          if (fn?.type !== "SymbolNode") {
            issues.push({ column: loc.first("("), message: "only named functions may be called" });
            return;
          }
          const name = (fn as unknown as { name: string }).name;
          const column = loc.word(name);
          if (ENDPOINT_FUNCTIONS.includes(name)) {
            checkEndpointCall(name, args, column);
            return;
          }
          const arity = Object.hasOwn(FUNCTION_ARITY, name) ? FUNCTION_ARITY[name] : undefined;
          if (!arity) {
            if (scope.names.has(name) || scope.misplaced?.has(name)) {
              issues.push({ column, message: `'${name}' is not a function; write ${name}*(...) for a product` });
            } else {
              issues.push({
                column,
                message: `unknown function '${name}'`,
                suggestion: nearestName(name, Object.keys(FUNCTION_ARITY)),
              });
            }
            return;
          }
          if (args.length < arity[0] || args.length > arity[1]) {
            const want = arity[0] === arity[1] ? `${arity[0]}` : `${arity[0]} to ${arity[1]}`;
            issues.push({ column, message: `${name} takes ${want} argument${arity[1] === 1 ? "" : "s"}, got ${args.length}` });
          }
          if (NON_SMOOTH_FUNCTIONS.includes(name)) nonSmooth.add(name);
          for (const a of args) walk(a, d);
          return;
        }
        default: {
          const refused = REFUSED_NODE[node.type];
          if (refused) issues.push({ column: loc.first(...refused.tokens), message: refused.message });
          else issues.push({ message: `'${node.type}' is not allowed in an expression` });
        }
      }
    };

    const checkSymbol = (name: string, column: number | undefined): void => {
      if (scope.names.has(name)) {
        result.used.add(name);
        return;
      }
      if (BUILTIN_CONSTANTS.includes(name)) return;
      const why = scope.misplaced?.get(name);
      if (why !== undefined) {
        issues.push({ column, message: why });
        return;
      }
      if (Object.hasOwn(FUNCTION_ARITY, name)) {
        issues.push({ column, message: `'${name}' is a function; write ${name}(...)` });
        return;
      }
      if (ENDPOINT_FUNCTIONS.includes(name)) {
        issues.push({ column, message: `'${name}' is a function; write ${name}(<state name>)` });
        return;
      }
      const hint = name === "e" || name === "E" ? " (Euler's number is written exp(1))" : "";
      issues.push({ column, message: `unknown name '${name}'${hint}`, suggestion: nearestName(name, scope.names) });
    };

    const checkEndpointCall = (name: string, args: MathNode[], column: number | undefined): void => {
      // keep the occurrence counters of the argument names in step with the text
      const countArgs = () => {
        for (const a of args) a.traverse((n) => {
          if (n.type === "SymbolNode") loc.word((n as unknown as { name: string }).name);
        });
      };
      if (!scope.endpointStates) {
        issues.push({ column, message: `${name}(...) may only be used in endpoint expressions (endpoint constraints, terminal objective)` });
        countArgs();
        return;
      }
      if (args.length !== 1 || args[0].type !== "SymbolNode") {
        countArgs();
        issues.push({ column, message: `${name}(...) takes one state name, e.g. ${name}(${[...scope.endpointStates][0] ?? "x"})` });
        return;
      }
      const arg = (args[0] as unknown as { name: string }).name;
      const argColumn = loc.word(arg);
      if (!scope.endpointStates.has(arg)) {
        issues.push({
          column: argColumn,
          message: `'${arg}' is not a state`,
          suggestion: nearestName(arg, scope.endpointStates),
        });
        return;
      }
      result.used.add(`${name}(${arg})`);
    };

    walk(root, 0);
    result.nonSmooth = [...nonSmooth];
    if (issues.length === 0) result.node = root;
    return result;
  } catch (err) {
    // Defensive: nothing above should throw; if it does (e.g. stack exhaustion), it is an issue.
    issues.push({ message: `expression could not be checked (${err instanceof RangeError ? "too complex" : "internal error"})` });
    result.node = null;
    return result;
  }
}

/** ASCII only: look-alike letters (Cyrillic х, Greek ν...) are caught here with their fix. */
function checkCharacters(text: string, scope: ExprScope, issues: ExprIssue[]): boolean {
  let ok = true;
  let reported = 0;
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    const printable = (code >= 0x20 && code < 0x7f) || code === 0x09;
    if (printable) continue;
    ok = false;
    if (reported++ >= 5) break;
    const cp = text.codePointAt(i) ?? code;
    const ch = String.fromCodePoint(cp);
    const hex = cp.toString(16).toUpperCase().padStart(4, "0");
    // the word around the character, folded to ASCII, as a suggestion
    let s = i;
    let e = i + ch.length;
    while (s > 0 && /[A-Za-z0-9_]/.test(text[s - 1])) s--;
    while (e < text.length && /[A-Za-z0-9_]/.test(text[e])) e++;
    const folded = foldLookalikes(text.slice(s, e));
    const suggestion = /^[A-Za-z0-9_]+$/.test(folded) && (scope.names.has(folded) || Object.hasOwn(FUNCTION_ARITY, folded)) ? folded : undefined;
    const what = code < 0x20 || code === 0x7f ? "control character" : "character";
    issues.push({
      column: i + 1,
      message: `${what} '${code < 0x20 ? "\\u" + hex : ch}' (U+${hex}) is not allowed: expressions use ASCII characters only`,
      suggestion,
    });
    if (ch.length === 2) i++;
  }
  return ok;
}

function checkNesting(text: string, issues: ExprIssue[]): boolean {
  let depth = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (c === "(" || c === "[" || c === "{") {
      depth++;
      if (depth > MAX_BRACKET_NESTING) {
        issues.push({ column: i + 1, message: `brackets are nested more than ${MAX_BRACKET_NESTING} levels deep` });
        return false;
      }
    } else if (c === ")" || c === "]" || c === "}") depth = Math.max(0, depth - 1);
  }
  return true;
}

function parseIssue(err: unknown): ExprIssue {
  if (err instanceof RangeError) return { message: "expression is too complex to parse" };
  const raw = err instanceof Error ? err.message : String(err);
  const charAt = (err as { char?: unknown }).char;
  const m = /\(char (\d+)\)/.exec(raw);
  const column = typeof charAt === "number" ? charAt : m ? Number(m[1]) : undefined;
  let message = raw.replace(/\s*\(char \d+\)/, "").trim();
  // mathjs quotes the rest of the input; keep messages short
  if (message.length > 120) message = message.slice(0, 117) + "...";
  return { column, message: `syntax error: ${message.charAt(0).toLowerCase()}${message.slice(1)}` };
}

/** Depth of a tree, iteratively (for limits after intermediates are substituted). */
export function treeDepth(root: MathNode): number {
  let max = 0;
  const stack: [MathNode, number][] = [[root, 1]];
  while (stack.length > 0) {
    const [n, d] = stack.pop()!;
    if (d > max) max = d;
    const kids = childrenOf(n);
    for (const k of kids) stack.push([k, d + 1]);
  }
  return max;
}

/** Children of the whitelisted node kinds. */
export function childrenOf(n: MathNode): MathNode[] {
  switch (n.type) {
    case "OperatorNode":
    case "FunctionNode":
      return (n as unknown as { args: MathNode[] }).args;
    case "ParenthesisNode":
      return [(n as unknown as { content: MathNode }).content];
    default:
      return [];
  }
}
