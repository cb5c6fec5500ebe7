/**
 * Code generation from the expression DAG: one JavaScript function each for the values, the
 * sparse Jacobian and the weighted sparse Hessian of a vector function f: ℝ^nIn → ℝ^nOut.
 *
 *   eval(z, out):    out[i] = f_i(z)                                  (out: nOut)
 *   jac(z, out):     out[k] = ∂f_{jacRows[k]}/∂z_{jacCols[k]}          (out: jacRows.length)
 *   hess(z, w, out): out[k] = Σ_i w_i ∂²f_i/∂z_r ∂z_c, r = hessRows[k] ≥ c = hessCols[k]
 *
 * Sparsity is structural and symbolic: an entry exists when its derivative does not fold to the
 * constant 0. Common subexpressions are shared through the DAG's hash-consing; each generated
 * function computes exactly the nodes its outputs need, in ascending id order (a topological
 * order), into local constants, and allocates nothing.
 *
 * Safety: the generated source is built ONLY from node kinds, numeric literals produced by
 * String(number) of finite numbers, input/output array indices and a fixed vocabulary
 * (const, function, return, Math function names). No name or text from a problem file ever
 * reaches it; a character-level check enforces this before `new Function` runs.
 */
import { Dag, isBinaryFn, isUnaryFn } from "./dag";
import type { PointFunction } from "../problem/types";

export interface DerivativePlan {
  nIn: number;
  outputs: number[];
  jacRows: Int32Array;
  jacCols: Int32Array;
  /** DAG node of every Jacobian entry. */
  jacNodes: number[];
  hessRows: Int32Array;
  hessCols: Int32Array;
  /** Per Hessian entry: the (output index, DAG node) terms of Σ_i w_i H_i. */
  hessTerms: { i: number; node: number }[][];
}

/** Symbolic first and second derivatives and their sparsity (lower triangle for the Hessian). */
export function planDerivatives(dag: Dag, outputs: readonly number[], nIn: number): DerivativePlan {
  const jr: number[] = [];
  const jc: number[] = [];
  const jn: number[] = [];
  const hess = new Map<number, { i: number; node: number }[]>(); // key r * nIn + c
  outputs.forEach((f, i) => {
    for (const j of dag.deps[f]) {
      if (j >= nIn) throw new Error(`planDerivatives: input index ${j} ≥ nIn = ${nIn}`);
      const g = dag.derivative(f, j);
      if (dag.isConstValue(g, 0)) continue;
      jr.push(i);
      jc.push(j);
      jn.push(g);
      for (const k of dag.deps[g]) {
        if (k > j) break; // deps are sorted: lower triangle only (row j ≥ column k)
        const h = dag.derivative(g, k);
        if (dag.isConstValue(h, 0)) continue;
        const key = j * nIn + k;
        let terms = hess.get(key);
        if (!terms) hess.set(key, (terms = []));
        terms.push({ i, node: h });
      }
    }
  });
  const keys = [...hess.keys()].sort((x, y) => x - y);
  return {
    nIn,
    outputs: [...outputs],
    jacRows: Int32Array.from(jr),
    jacCols: Int32Array.from(jc),
    jacNodes: jn,
    hessRows: Int32Array.from(keys, (k) => Math.floor(k / nIn)),
    hessCols: Int32Array.from(keys, (k) => k % nIn),
    hessTerms: keys.map((k) => hess.get(k)!),
  };
}

/** A finite number as JavaScript source; non-finite values as arithmetic that yields them. */
export function numberLiteral(v: number): string {
  if (Number.isNaN(v)) return "(0/0)";
  if (v === Infinity) return "(1/0)";
  if (v === -Infinity) return "(-1/0)";
  if (Object.is(v, -0)) return "(-0)";
  const s = String(v);
  return v < 0 ? `(${s})` : s;
}

/** Everything the generated source may contain (checked before compilation). */
const SAFE_SOURCE = /^[A-Za-z0-9_\s.,;:=+\-*/()[\]{}]*$/;
const SAFE_WORDS = new Set([
  "const", "function", "return", "M", "z", "w", "out", "e", "j", "h", "E", "J", "H", "zo", "oo", "Infinity",
  "exp", "log", "sqrt", "sin", "cos", "tan", "atan", "sinh", "cosh", "tanh", "abs", "sign", "atan2", "min", "max", "pow",
]);

function checkSource(src: string): void {
  if (!SAFE_SOURCE.test(src)) throw new Error("codegen: generated source contains an unexpected character");
  for (const word of src.match(/[A-Za-z_][A-Za-z0-9_]*/g) ?? []) {
    if (SAFE_WORDS.has(word) || /^v\d+$/.test(word)) continue;
    // exponents of numeric literals (1e-7) tokenise as words starting with "e"
    if (/^e\d*$/.test(word)) continue;
    throw new Error(`codegen: generated source contains an unexpected word '${word.slice(0, 20)}'`);
  }
}

class Emitter {
  private readonly lines: string[] = [];
  private readonly done = new Set<number>();
  constructor(private readonly dag: Dag) {}

  /** Operand text of node n (a literal for constants, else its local). */
  ref(n: number): string {
    return this.dag.isConst(n) ? numberLiteral(this.dag.value[n]) : `v${n}`;
  }

  /** Emits the locals every node in `roots` needs (iterative, ascending id order). */
  need(roots: Iterable<number>): void {
    const dag = this.dag;
    const want = new Set<number>();
    const stack: number[] = [];
    for (const r of roots) if (!this.done.has(r)) stack.push(r);
    while (stack.length > 0) {
      const n = stack.pop()!;
      if (want.has(n) || this.done.has(n) || dag.isConst(n)) continue;
      want.add(n);
      if (dag.a[n] >= 0) stack.push(dag.a[n]);
      if (dag.b[n] >= 0) stack.push(dag.b[n]);
    }
    for (const n of [...want].sort((x, y) => x - y)) {
      this.lines.push(`const v${n}=${this.expr(n)};`);
      this.done.add(n);
    }
  }

  private expr(n: number): string {
    const dag = this.dag;
    const op = dag.op[n];
    const a = this.ref(dag.a[n]);
    const b = dag.b[n] >= 0 ? this.ref(dag.b[n]) : "";
    switch (op) {
      case "var":
        return `z[${dag.value[n]}]`;
      case "+":
      case "-":
      case "*":
      case "/":
        return `${a}${op}${b}`;
      case "neg":
        return `-${a}`;
      case "^": {
        const e = dag.b[n];
        if (dag.isConst(e)) {
          const c = dag.value[e];
          if (c === 2) return `${a}*${a}`;
          if (c === 3) return `${a}*${a}*${a}`;
          if (c === -1) return `1/${a}`;
          if (c === -2) return `1/(${a}*${a})`;
          if (c === 0.5) return `M.sqrt(${a})`;
          if (c === -0.5) return `1/M.sqrt(${a})`;
        }
        return `M.pow(${a},${b})`;
      }
      default:
        if (isUnaryFn(op)) return `M.${op}(${a})`;
        if (isBinaryFn(op)) return `M.${op}(${a},${b})`;
        throw new Error(`codegen: unexpected node kind ${String(op)}`);
    }
  }

  line(s: string): void {
    this.lines.push(s);
  }
  text(): string {
    return this.lines.join("\n");
  }
}

export interface GeneratedSource {
  eval: string;
  jac: string;
  hess: string;
}

export function generateSource(dag: Dag, plan: DerivativePlan): GeneratedSource {
  const ev = new Emitter(dag);
  ev.need(plan.outputs);
  plan.outputs.forEach((n, i) => ev.line(`out[${i}]=${ev.ref(n)};`));

  const jac = new Emitter(dag);
  jac.need(plan.jacNodes);
  plan.jacNodes.forEach((n, k) => jac.line(`out[${k}]=${jac.ref(n)};`));

  const hess = new Emitter(dag);
  hess.need(plan.hessTerms.flatMap((ts) => ts.map((t) => t.node)));
  plan.hessTerms.forEach((terms, k) => {
    const parts = terms.map(({ i, node }) => {
      if (dag.isConstValue(node, 1)) return `w[${i}]`;
      return `w[${i}]*${hess.ref(node)}`;
    });
    hess.line(`out[${k}]=${parts.join("+")};`);
  });
  return { eval: ev.text(), jac: jac.text(), hess: hess.text() };
}

export type CompiledPointFunction = PointFunction & {
  /** The generated JavaScript (for inspection and the safety tests). */
  readonly source: GeneratedSource;
};

/**
 * The same statements reading the inputs at z[zo + i] and writing the outputs at out[oo + k]: the
 * variants a transcription calls on its whole value arrays, one site at a time, without a
 * subarray view per site. Only input reads z[i] and output writes out[k]= are generated in that
 * form (generateSource), so the rewrite is exact.
 */
function atOffsets(src: string): string {
  return src.replace(/\bz\[(\d+)\]/g, "z[zo+$1]").replace(/\bout\[(\d+)\]=/g, "out[oo+$1]=");
}

/** Compiles DAG outputs into a PointFunction with nIn inputs. */
export function buildPointFunction(dag: Dag, outputs: readonly number[], nIn: number): CompiledPointFunction {
  const plan = planDerivatives(dag, outputs, nIn);
  const source = generateSource(dag, plan);
  const body =
    `return {e:function(z,out){\n${source.eval}\n},\n` +
    `j:function(z,out){\n${source.jac}\n},\n` +
    `h:function(z,w,out){\n${source.hess}\n},\n` +
    `E:function(z,zo,out,oo){\n${atOffsets(source.eval)}\n},\n` +
    `J:function(z,zo,out,oo){\n${atOffsets(source.jac)}\n},\n` +
    `H:function(z,zo,w,out,oo){\n${atOffsets(source.hess)}\n}};`;
  checkSource(body);
  // eslint-disable-next-line @typescript-eslint/no-implied-eval -- source is generated from the DAG only (see above)
  const factory = new Function("M", body) as (m: Math) => {
    e: (z: Float64Array, out: Float64Array) => void;
    j: (z: Float64Array, out: Float64Array) => void;
    h: (z: Float64Array, w: Float64Array, out: Float64Array) => void;
    E: (z: Float64Array, zo: number, out: Float64Array, oo: number) => void;
    J: (z: Float64Array, zo: number, out: Float64Array, oo: number) => void;
    H: (z: Float64Array, zo: number, w: Float64Array, out: Float64Array, oo: number) => void;
  };
  const fns = factory(Math);
  return {
    nIn,
    nOut: outputs.length,
    eval: fns.e,
    jacRows: plan.jacRows,
    jacCols: plan.jacCols,
    jac: fns.j,
    hessRows: plan.hessRows,
    hessCols: plan.hessCols,
    hess: fns.h,
    evalAt: fns.E,
    jacAt: fns.J,
    hessAt: fns.H,
    source,
  };
}
