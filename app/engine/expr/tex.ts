/**
 * TeX rendering of validated expressions for the web pages (rendered there with KaTeX).
 * Uses mathjs' toTex with a handler for names:
 *   rho0 → \rho_{0},  lambda_h → \lambda_{h},  CdA → \mathrm{CdA},  v → v,
 *   t0 → t_{0},  tf → t_{f},  initial(h) → h(t_{0}),  final(h) → h(t_{f}),  pi → \pi.
 */
import type { MathNode } from "mathjs";

const GREEK = new Set([
  "alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "iota", "kappa", "lambda", "mu", "nu", "xi",
  "pi", "rho", "sigma", "tau", "upsilon", "phi", "chi", "psi", "omega",
  "Gamma", "Delta", "Theta", "Lambda", "Xi", "Pi", "Sigma", "Upsilon", "Phi", "Psi", "Omega",
]);

function base(s: string): string {
  if (GREEK.has(s)) return `\\${s}`;
  if (s.length === 1) return s;
  return `\\mathrm{${s}}`;
}

/** TeX for a declared name (ASCII letters, digits, '_'). */
export function nameToTex(name: string): string {
  if (name === "t0") return "t_{0}";
  if (name === "tf") return "t_{f}";
  const us = name.indexOf("_");
  if (us > 0 && us < name.length - 1) {
    const sub = name.slice(us + 1).replace(/_/g, ",");
    return `${base(name.slice(0, us))}_{${/^[A-Za-z0-9,]+$/.test(sub) ? sub.split(",").map((p) => (p.length > 1 && !/^\d+$/.test(p) ? base(p) : p)).join(",") : sub}}`;
  }
  const m = /^([A-Za-z]+?)(\d+)$/.exec(name);
  if (m) return `${base(m[1])}_{${m[2]}}`;
  return base(name.replace(/_/g, "\\_"));
}

/** TeX of a validated tree. */
export function toTex(node: MathNode): string {
  return texWithHandler(node).trim();
}

/**
 * mathjs renders a function node's arguments more than once (FunctionNode's template expansion), so
 * its default TeX costs 2^depth for nested calls: a 53-deep exp(exp(…)) in a problem file, found by
 * tests/expr/hostile.test.ts, kept a worker busy for over half an hour. The handler therefore
 * renders every node once per call, memoised by node (and options object): the default rendering of a
 * node (`_toTex`) is computed once, and every later request for the same node returns that string.
 */
function texWithHandler(node: MathNode): string {
  const memo = new Map<MathNode, { options: object; tex: string }>();
  return node.toTex({
    parenthesis: "auto",
    implicit: "show",
    handler: (n: MathNode, options: object) => {
      const seen = memo.get(n);
      if (seen !== undefined && seen.options === options) return seen.tex;
      const tex = ownTex(n, options) ?? (n as unknown as { _toTex(o: object): string })._toTex(options);
      memo.set(n, { options, tex });
      return tex;
    },
  } as never);
}

/** Arcwatch's own TeX for names, endpoint values, min/max and atan2; undefined: mathjs' rendering. */
function ownTex(n: MathNode, options: object): string | undefined {
  // a leading space keeps "\cdot" + "m_{2}" from fusing into the control word "\cdotm"
  if (n.type === "SymbolNode") return ` ${nameToTex((n as unknown as { name: string }).name)}`;
  if (n.type === "FunctionNode") {
    const { fn, args } = n as unknown as { fn: { name: string }; args: MathNode[] };
    if ((fn.name === "initial" || fn.name === "final") && args.length === 1 && args[0].type === "SymbolNode") {
      const x = nameToTex((args[0] as unknown as { name: string }).name);
      return ` ${x}(t_{${fn.name === "initial" ? "0" : "f"}})`;
    }
    if (fn.name === "min" || fn.name === "max") {
      return `\\${fn.name}\\left(${args.map((a) => a.toTex(options)).join(",")}\\right)`;
    }
    if (fn.name === "atan2") {
      return `\\operatorname{atan2}\\left(${args.map((a) => a.toTex(options)).join(",")}\\right)`;
    }
  }
  return undefined;
}
