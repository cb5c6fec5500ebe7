/**
 * Symbolic derivative helpers on validated mathjs trees, for code outside the point-function
 * compiler (the shooting refinement differentiates the Hamiltonian H(t, x, λ, u) with these and
 * compiles the results with compilePointFunction).
 *
 * The tree goes through the expression DAG (dag.ts): every symbol (including constants, `pi`
 * and initial(x) / final(x)) is a variable there, so results stay symbolic in the constant names.
 * The rules are those of Dag.derivative; constant folding and the identities x+0, x·1, x·0, x−x,
 * x/1, x^1, x^0 are applied on the way (the "simplification").
 */
import type { MathNode } from "mathjs";
import { ConstantNode, FunctionNode, OperatorNode, ParenthesisNode, SymbolNode } from "./math";
import { Dag, isBinaryFn, isUnaryFn } from "./dag";
import { toDag } from "./compile";

type Ctor<T> = new (...args: never[]) => T;
const Constant = ConstantNode as unknown as new (v: number) => MathNode;
const Symbol_ = SymbolNode as unknown as new (name: string) => MathNode;
const Operator = OperatorNode as unknown as new (op: string, fn: string, args: MathNode[], implicit?: boolean) => MathNode;
const Function_ = FunctionNode as unknown as new (fn: MathNode | string, args: MathNode[]) => MathNode;
const Parenthesis = ParenthesisNode as unknown as Ctor<MathNode> & (new (content: MathNode) => MathNode);

/** A DAG over all symbols of the given trees; names[j] is the symbol of input j. */
export interface SymbolicDag {
  dag: Dag;
  names: string[];
  roots: number[];
}

/** Converts trees to one DAG, with one variable per distinct symbol (initial(x) counts as one). */
export function treesToDag(trees: readonly MathNode[], extraNames: readonly string[] = []): SymbolicDag {
  const dag = new Dag();
  const names: string[] = [];
  const index = new Map<string, number>();
  const declare = (n: string): number => {
    let j = index.get(n);
    if (j === undefined) {
      j = names.length;
      names.push(n);
      index.set(n, j);
    }
    return j;
  };
  for (const n of extraNames) declare(n);
  const memo = new Map<MathNode, number>();
  const roots = trees.map((t) => toDag(dag, t, (name) => dag.variable(declare(name)), memo));
  return { dag, names, roots };
}

/** Rebuilds a mathjs tree for DAG node n (shared subexpressions become shared subtrees). */
export function dagToMath(dag: Dag, n: number, names: readonly string[], memo = new Map<number, MathNode>()): MathNode {
  const hit = memo.get(n);
  if (hit) return hit;
  const rec = (m: number) => dagToMath(dag, m, names, memo);
  const op = dag.op[n];
  let out: MathNode;
  switch (op) {
    case "const": {
      const v = dag.value[n];
      out = v < 0 ? new Operator("-", "unaryMinus", [new Constant(-v)]) : new Constant(v);
      break;
    }
    case "var": {
      const name = names[dag.value[n]];
      const m = /^(initial|final)\(([A-Za-z][A-Za-z0-9_]*)\)$/.exec(name);
      out = m ? new Function_(new Symbol_(m[1]), [new Symbol_(m[2])]) : new Symbol_(name);
      break;
    }
    case "+": out = new Operator("+", "add", [rec(dag.a[n]), rec(dag.b[n])]); break;
    case "-": out = new Operator("-", "subtract", [rec(dag.a[n]), rec(dag.b[n])]); break;
    case "*": out = new Operator("*", "multiply", [rec(dag.a[n]), rec(dag.b[n])]); break;
    case "/": out = new Operator("/", "divide", [rec(dag.a[n]), rec(dag.b[n])]); break;
    case "^": out = new Operator("^", "pow", [rec(dag.a[n]), rec(dag.b[n])]); break;
    case "neg": out = new Operator("-", "unaryMinus", [rec(dag.a[n])]); break;
    default:
      if (isUnaryFn(op)) out = new Function_(new Symbol_(op), [rec(dag.a[n])]);
      else if (isBinaryFn(op)) out = new Function_(new Symbol_(op), [rec(dag.a[n]), rec(dag.b[n])]);
      else throw new Error(`dagToMath: unexpected node kind ${String(op)}`);
  }
  memo.set(n, out);
  return out;
}

/** ∂node/∂name as a new tree (0 when the tree does not contain `name`). */
export function differentiate(node: MathNode, name: string): MathNode {
  const { dag, names, roots } = treesToDag([node], [name]);
  return dagToMath(dag, dag.derivative(roots[0], 0), names);
}

/** The gradient [∂node/∂names_0, ...] as trees sharing subexpressions. */
export function gradient(node: MathNode, names: readonly string[]): MathNode[] {
  const sd = treesToDag([node], names);
  const memo = new Map<number, MathNode>();
  return names.map((_, j) => dagToMath(sd.dag, sd.dag.derivative(sd.roots[0], j), sd.names, memo));
}

/** Constant folding and the identities listed above; the value is unchanged. */
export function simplify(node: MathNode): MathNode {
  const { dag, names, roots } = treesToDag([node]);
  return dagToMath(dag, roots[0], names);
}

/**
 * Replaces symbols by trees (e.g. intermediates by their definitions), wrapping each
 * replacement in parentheses so that precedence and TeX stay right. Returns a new tree.
 */
export function substitute(node: MathNode, replacements: ReadonlyMap<string, MathNode>): MathNode {
  return node.transform((n) => {
    if (n.type === "SymbolNode") {
      const r = replacements.get((n as unknown as { name: string }).name);
      if (r) return new Parenthesis(r);
    }
    return n;
  });
}
