/**
 * A small expression DAG with hash-consing (structurally equal subexpressions are one node)
 * and constant folding at construction. It is the common representation behind symbolic
 * differentiation (derive.ts) and code generation (codegen.ts).
 *
 * Nodes are integers; children always have smaller ids than their parents, so ascending id
 * order is a topological order (used by the code generator).
 *
 * Operations: constants, input variables z_j, + − × ÷ ^, unary minus and the functions in
 * FUNCTION_ARITY. `sign` is internal: it appears in derivatives of abs/min/max.
 */

export type DagOp =
  | "const"
  | "var"
  | "+"
  | "-"
  | "*"
  | "/"
  | "neg"
  | "^"
  | UnaryFn
  | BinaryFn;

export type UnaryFn = "exp" | "log" | "sqrt" | "sin" | "cos" | "tan" | "atan" | "sinh" | "cosh" | "tanh" | "abs" | "sign";
export type BinaryFn = "atan2" | "min" | "max";

export const UNARY_FUNCTIONS: readonly UnaryFn[] = [
  "exp", "log", "sqrt", "sin", "cos", "tan", "atan", "sinh", "cosh", "tanh", "abs", "sign",
];
export const BINARY_FUNCTIONS: readonly BinaryFn[] = ["atan2", "min", "max"];

/** Numeric value of a unary function (used for constant folding; codegen emits Math.* calls). */
const UNARY_EVAL: Record<UnaryFn, (a: number) => number> = {
  exp: Math.exp, log: Math.log, sqrt: Math.sqrt, sin: Math.sin, cos: Math.cos, tan: Math.tan,
  atan: Math.atan, sinh: Math.sinh, cosh: Math.cosh, tanh: Math.tanh, abs: Math.abs, sign: Math.sign,
};
const BINARY_EVAL: Record<BinaryFn, (a: number, b: number) => number> = {
  atan2: Math.atan2, min: Math.min, max: Math.max,
};

export function isUnaryFn(s: string): s is UnaryFn {
  return (UNARY_FUNCTIONS as readonly string[]).includes(s);
}
export function isBinaryFn(s: string): s is BinaryFn {
  return (BINARY_FUNCTIONS as readonly string[]).includes(s);
}

const NO_CHILD = -1;

export class Dag {
  /** Operation of node k. */
  readonly op: DagOp[] = [];
  /** First / second child (-1 when absent). */
  readonly a: number[] = [];
  readonly b: number[] = [];
  /** Constant value (op "const") or input index (op "var"). */
  readonly value: number[] = [];
  /** Sorted input indices node k depends on. */
  readonly deps: Int32Array[] = [];
  private readonly table = new Map<string, number>();
  /** derivative memo: key node * nVarsMax + j. */
  private readonly dmemo = new Map<number, number>();
  readonly zero: number;
  readonly one: number;

  constructor() {
    this.zero = this.konst(0);
    this.one = this.konst(1);
  }

  get size(): number {
    return this.op.length;
  }

  isConst(n: number): boolean {
    return this.op[n] === "const";
  }
  isConstValue(n: number, v: number): boolean {
    return this.op[n] === "const" && this.value[n] === v;
  }

  private intern(op: DagOp, a: number, b: number, value: number, key: string): number {
    const hit = this.table.get(key);
    if (hit !== undefined) return hit;
    const id = this.op.length;
    this.op.push(op);
    this.a.push(a);
    this.b.push(b);
    this.value.push(value);
    let deps: Int32Array;
    if (op === "var") deps = Int32Array.of(value);
    else if (op === "const") deps = new Int32Array(0);
    else if (b === NO_CHILD) deps = this.deps[a];
    else deps = mergeSorted(this.deps[a], this.deps[b]);
    this.deps.push(deps);
    this.table.set(key, id);
    return id;
  }

  konst(v: number): number {
    const key = Object.is(v, -0) ? "c-0" : `c${v}`;
    return this.intern("const", NO_CHILD, NO_CHILD, v, key);
  }

  variable(j: number): number {
    if (!Number.isInteger(j) || j < 0) throw new Error(`Dag.variable: bad input index ${j}`);
    return this.intern("var", NO_CHILD, NO_CHILD, j, `v${j}`);
  }

  private node(op: DagOp, a: number, b: number = NO_CHILD): number {
    return this.intern(op, a, b, 0, `${op},${a},${b}`);
  }

  add(x: number, y: number): number {
    if (this.isConst(x) && this.isConst(y)) return this.konst(this.value[x] + this.value[y]);
    if (this.isConstValue(x, 0)) return y;
    if (this.isConstValue(y, 0)) return x;
    if (this.op[y] === "neg") return this.sub(x, this.a[y]);
    if (this.op[x] === "neg") return this.sub(y, this.a[x]);
    if (x === y) return this.mul(this.konst(2), x);
    // canonical order for commutativity: constants first, then by id
    if (this.isConst(y) || (!this.isConst(x) && y < x)) [x, y] = [y, x];
    return this.node("+", x, y);
  }

  sub(x: number, y: number): number {
    if (this.isConst(x) && this.isConst(y)) return this.konst(this.value[x] - this.value[y]);
    if (this.isConstValue(y, 0)) return x;
    if (this.isConstValue(x, 0)) return this.neg(y);
    if (x === y) return this.zero;
    if (this.op[y] === "neg") return this.add(x, this.a[y]);
    return this.node("-", x, y);
  }

  mul(x: number, y: number): number {
    if (this.isConst(x) && this.isConst(y)) return this.konst(this.value[x] * this.value[y]);
    if (this.isConst(y)) [x, y] = [y, x];
    if (this.isConst(x)) {
      const c = this.value[x];
      if (c === 0) return this.zero;
      if (c === 1) return y;
      if (c === -1) return this.neg(y);
      // c1 * (c2 * w) → (c1 c2) * w
      if (this.op[y] === "*" && this.isConst(this.a[y])) return this.mul(this.konst(c * this.value[this.a[y]]), this.b[y]);
      if (this.op[y] === "neg") return this.mul(this.konst(-c), this.a[y]);
      return this.node("*", x, y);
    }
    if (this.op[x] === "neg") return this.neg(this.mul(this.a[x], y));
    if (this.op[y] === "neg") return this.neg(this.mul(x, this.a[y]));
    if (y < x) [x, y] = [y, x];
    return this.node("*", x, y);
  }

  div(x: number, y: number): number {
    if (this.isConst(x) && this.isConst(y)) return this.konst(this.value[x] / this.value[y]);
    if (this.isConstValue(y, 1)) return x;
    if (this.isConstValue(y, -1)) return this.neg(x);
    if (this.isConstValue(x, 0) && !this.isConst(y)) return this.zero;
    if (x === y) return this.one;
    if (this.op[x] === "neg") return this.neg(this.div(this.a[x], y));
    return this.node("/", x, y);
  }

  neg(x: number): number {
    if (this.isConst(x)) return this.konst(-this.value[x]);
    if (this.op[x] === "neg") return this.a[x];
    if (this.op[x] === "-") return this.sub(this.b[x], this.a[x]);
    if (this.op[x] === "*" && this.isConst(this.a[x])) return this.mul(this.konst(-this.value[this.a[x]]), this.b[x]);
    return this.node("neg", x);
  }

  pow(x: number, y: number): number {
    if (this.isConst(x) && this.isConst(y)) return this.konst(Math.pow(this.value[x], this.value[y]));
    if (this.isConstValue(y, 1)) return x;
    if (this.isConstValue(y, 0)) return this.one;
    if (this.isConstValue(x, 1)) return this.one;
    return this.node("^", x, y);
  }

  call1(fn: UnaryFn, x: number): number {
    if (this.isConst(x)) return this.konst(UNARY_EVAL[fn](this.value[x]));
    if (fn === "sign" && this.op[x] === "sign") return x;
    return this.node(fn, x);
  }

  call2(fn: BinaryFn, x: number, y: number): number {
    if (this.isConst(x) && this.isConst(y)) return this.konst(BINARY_EVAL[fn](this.value[x], this.value[y]));
    if ((fn === "min" || fn === "max") && x === y) return x;
    return this.node(fn, x, y);
  }

  /**
   * ∂n/∂z_j, symbolically, memoised. Rules (standard calculus):
   *   (a±b)' = a'±b', (ab)' = a'b + ab', (a/b)' = (a' − (a/b) b')/b,
   *   (a^c)' = c a^(c−1) a' for constant c, (a^b)' = a^b (b' ln a + b a'/a) otherwise,
   *   exp' = exp, ln' = 1/a, √' = 1/(2√a), sin' = cos, cos' = −sin, tan' = 1 + tan²,
   *   atan' = 1/(1+a²), sinh' = cosh, cosh' = sinh, tanh' = 1 − tanh²,
   *   atan2(y,x)' = (x y' − y x')/(x² + y²),
   *   |a|' = sign(a) a', min(a,b)' = ((1+s) a' + (1−s) b')/2 with s = sign(b − a) (the mean of
   *   both one-sided derivatives at a tie), max likewise with s = sign(a − b), sign' = 0.
   */
  derivative(n: number, j: number): number {
    if (!hasDep(this.deps[n], j)) return this.zero;
    const key = n * 1048576 + j;
    const hit = this.dmemo.get(key);
    if (hit !== undefined) return hit;
    const r = this.derivativeUncached(n, j);
    this.dmemo.set(key, r);
    return r;
  }

  private derivativeUncached(n: number, j: number): number {
    const op = this.op[n];
    const a = this.a[n];
    const b = this.b[n];
    const d = (m: number) => this.derivative(m, j);
    switch (op) {
      case "const":
        return this.zero;
      case "var":
        return this.value[n] === j ? this.one : this.zero;
      case "+":
        return this.add(d(a), d(b));
      case "-":
        return this.sub(d(a), d(b));
      case "neg":
        return this.neg(d(a));
      case "*":
        return this.add(this.mul(d(a), b), this.mul(a, d(b)));
      case "/":
        return this.div(this.sub(d(a), this.mul(n, d(b))), b);
      case "^": {
        if (this.isConst(b)) {
          const c = this.value[b];
          const base = c === 2 ? a : this.pow(a, this.konst(c - 1));
          return this.mul(this.mul(this.konst(c), base), d(a));
        }
        return this.mul(n, this.add(this.mul(d(b), this.call1("log", a)), this.div(this.mul(b, d(a)), a)));
      }
      case "exp":
        return this.mul(n, d(a));
      case "log":
        return this.div(d(a), a);
      case "sqrt":
        return this.div(d(a), this.mul(this.konst(2), n));
      case "sin":
        return this.mul(this.call1("cos", a), d(a));
      case "cos":
        return this.neg(this.mul(this.call1("sin", a), d(a)));
      case "tan":
        return this.mul(this.add(this.one, this.mul(n, n)), d(a));
      case "atan":
        return this.div(d(a), this.add(this.one, this.mul(a, a)));
      case "sinh":
        return this.mul(this.call1("cosh", a), d(a));
      case "cosh":
        return this.mul(this.call1("sinh", a), d(a));
      case "tanh":
        return this.mul(this.sub(this.one, this.mul(n, n)), d(a));
      case "abs":
        return this.mul(this.call1("sign", a), d(a));
      case "sign":
        return this.zero;
      case "atan2": {
        // n = atan2(y = a, x = b)
        const num = this.sub(this.mul(b, d(a)), this.mul(a, d(b)));
        return this.div(num, this.add(this.mul(a, a), this.mul(b, b)));
      }
      case "min":
      case "max": {
        const s = op === "min" ? this.call1("sign", this.sub(b, a)) : this.call1("sign", this.sub(a, b));
        const half = this.konst(0.5);
        const wa = this.mul(half, this.add(this.one, s));
        const wb = this.mul(half, this.sub(this.one, s));
        return this.add(this.mul(wa, d(a)), this.mul(wb, d(b)));
      }
    }
  }

  /**
   * Values of the `roots` at z by interpreting every node up to the largest root (slow: a
   * reference interpreter, and for one-off values; hot paths use codegen.ts).
   */
  evaluate(roots: readonly number[], z: ArrayLike<number>): number[] {
    const memo = new Float64Array(this.size);
    const upto = roots.length === 0 ? -1 : Math.max(...roots);
    for (let k = 0; k <= upto; k++) {
      const op = this.op[k];
      const x = memo[this.a[k]];
      const y = memo[this.b[k]];
      let v: number;
      switch (op) {
        case "const": v = this.value[k]; break;
        case "var": v = z[this.value[k]]; break;
        case "+": v = x + y; break;
        case "-": v = x - y; break;
        case "*": v = x * y; break;
        case "/": v = x / y; break;
        case "neg": v = -x; break;
        case "^": v = Math.pow(x, y); break;
        default:
          v = isUnaryFn(op) ? UNARY_EVAL[op](x) : BINARY_EVAL[op as BinaryFn](x, y);
      }
      memo[k] = v;
    }
    return roots.map((r) => memo[r]);
  }
}

function hasDep(deps: Int32Array, j: number): boolean {
  let lo = 0;
  let hi = deps.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const v = deps[mid];
    if (v === j) return true;
    if (v < j) lo = mid + 1;
    else hi = mid - 1;
  }
  return false;
}

function mergeSorted(x: Int32Array, y: Int32Array): Int32Array {
  if (x.length === 0) return y;
  if (y.length === 0) return x;
  const out: number[] = [];
  let i = 0;
  let k = 0;
  while (i < x.length || k < y.length) {
    if (k >= y.length || (i < x.length && x[i] < y[k])) out.push(x[i++]);
    else if (i >= x.length || y[k] < x[i]) out.push(y[k++]);
    else {
      out.push(x[i]);
      i++;
      k++;
    }
  }
  return Int32Array.from(out);
}
