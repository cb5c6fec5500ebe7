/**
 * Compiles validated mathjs trees into a PointFunction (values, sparse Jacobian, sparse weighted
 * Hessian) through the expression DAG (dag.ts) and the code generator (codegen.ts).
 *
 * Accepted trees (the compiler's own whitelist; user text is validated earlier by validate.ts):
 *   ConstantNode (finite number), SymbolNode (an input name, a constant or `pi`),
 *   ParenthesisNode, OperatorNode + − * / ^ and unary − +, FunctionNode of
 *   exp log sqrt sin cos tan atan sinh cosh tanh abs sign (1 argument), atan2 (2), min max (≥ 2),
 *   and initial(x) / final(x), which stand for the input named "initial(x)" / "final(x)".
 * Anything else throws an Error: reaching it is a programming error, not a user error.
 */
import type { MathNode } from "mathjs";
import { Dag, isBinaryFn, isUnaryFn } from "./dag";
import { buildPointFunction, type CompiledPointFunction } from "./codegen";

/** Name → DAG node resolution used while converting trees. */
export interface SymbolResolver {
  (name: string): number | undefined;
}

/**
 * Converts a mathjs tree to a DAG node. `resolve` maps a symbol (or "initial(x)"/"final(x)") to a
 * node; an unresolved symbol throws.
 */
export function toDag(dag: Dag, node: MathNode, resolve: SymbolResolver, memo = new Map<MathNode, number>()): number {
  const hit = memo.get(node);
  if (hit !== undefined) return hit;
  const r = convert(dag, node, resolve, memo);
  memo.set(node, r);
  return r;
}

function convert(dag: Dag, node: MathNode, resolve: SymbolResolver, memo: Map<MathNode, number>): number {
  const rec = (m: MathNode) => toDag(dag, m, resolve, memo);
  switch (node.type) {
    case "ConstantNode": {
      const v = (node as unknown as { value: unknown }).value;
      if (typeof v !== "number") throw new Error(`compile: constant of type ${typeof v} is not a number`);
      return dag.konst(v);
    }
    case "SymbolNode": {
      const name = (node as unknown as { name: string }).name;
      const r = resolve(name);
      if (r === undefined) throw new Error(`compile: unknown name '${name}'`);
      return r;
    }
    case "ParenthesisNode":
      return rec((node as unknown as { content: MathNode }).content);
    case "OperatorNode": {
      const { op, args } = node as unknown as { op: string; args: MathNode[] };
      if (args.length === 1) {
        if (op === "-") return dag.neg(rec(args[0]));
        if (op === "+") return rec(args[0]);
      } else if (args.length === 2) {
        const x = rec(args[0]);
        const y = rec(args[1]);
        switch (op) {
          case "+": return dag.add(x, y);
          case "-": return dag.sub(x, y);
          case "*": return dag.mul(x, y);
          case "/": return dag.div(x, y);
          case "^": return dag.pow(x, y);
        }
      }
      throw new Error(`compile: operator '${op}' with ${args.length} operands is not supported`);
    }
    case "FunctionNode": {
      const { fn, args } = node as unknown as { fn: { name?: string }; args: MathNode[] };
      const name = fn?.name ?? "";
      if ((name === "initial" || name === "final") && args.length === 1 && args[0].type === "SymbolNode") {
        const key = `${name}(${(args[0] as unknown as { name: string }).name})`;
        const r = resolve(key);
        if (r === undefined) throw new Error(`compile: unknown name '${key}'`);
        return r;
      }
      if (isUnaryFn(name) && args.length === 1) return dag.call1(name, rec(args[0]));
      if (name === "atan2" && args.length === 2) return dag.call2("atan2", rec(args[0]), rec(args[1]));
      if ((name === "min" || name === "max") && args.length >= 2) {
        let acc = rec(args[0]);
        for (let k = 1; k < args.length; k++) acc = dag.call2(name, acc, rec(args[k]));
        return acc;
      }
      if (isBinaryFn(name)) throw new Error(`compile: ${name} takes 2 arguments, got ${args.length}`);
      throw new Error(`compile: function '${name}' with ${args.length} arguments is not supported`);
    }
    default:
      throw new Error(`compile: node type ${node.type} is not supported`);
  }
}

/**
 * A resolver for the inputs `inputNames` (z_j ↔ inputNames[j]), the numeric constants and `pi`.
 * Inputs take precedence over constants.
 */
export function inputResolver(dag: Dag, inputNames: readonly string[], constants: Record<string, number>): SymbolResolver {
  const index = new Map<string, number>();
  inputNames.forEach((n, j) => index.set(n, j));
  return (name) => {
    const j = index.get(name);
    if (j !== undefined) return dag.variable(j);
    if (Object.hasOwn(constants, name)) return dag.konst(constants[name]);
    if (name === "pi") return dag.konst(Math.PI);
    return undefined;
  };
}

/**
 * Compiles the vector function z ↦ [nodes_0(z), ..., nodes_{m-1}(z)] with z_j named inputNames[j];
 * constant names are replaced by their values. Throws on trees outside the whitelist.
 */
export function compilePointFunction(
  nodes: MathNode[],
  inputNames: string[],
  constants: Record<string, number>,
): CompiledPointFunction {
  const dag = new Dag();
  const resolve = inputResolver(dag, inputNames, constants);
  const memo = new Map<MathNode, number>();
  const outputs = nodes.map((n) => toDag(dag, n, resolve, memo));
  return buildPointFunction(dag, outputs, inputNames.length);
}
