/**
 * Derivatives of known functions against hand-derived formulas (standard calculus; each
 * formula is written beside its case). Tolerance: 1e-12 relative (both sides are exact formulas
 * evaluated in double precision; only rounding differs).
 */
import { describe, expect, it } from "vitest";
import { evaluate, parse } from "mathjs";
import { compilePointFunction } from "~/engine/expr/compile";
import { differentiate, gradient, simplify, substitute } from "~/engine/expr/derive";
import { Dag } from "~/engine/expr/dag";

function close(a: number, b: number, rel = 1e-12) {
  expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * (1 + Math.abs(b)));
}

/** Dense gradient and lower-triangle Hessian of one compiled expression in inputs x, y. */
function derivs(text: string, x: number, y: number) {
  const f = compilePointFunction([parse(text)], ["x", "y"], { H: 7.5 });
  const z = Float64Array.of(x, y);
  const jv = new Float64Array(f.jacRows.length);
  f.jac(z, jv);
  const g = [0, 0];
  f.jacCols.forEach((c, k) => (g[c] = jv[k]));
  const hv = new Float64Array(f.hessRows.length);
  f.hess(z, Float64Array.of(1), hv);
  const H = [
    [0, 0],
    [0, 0],
  ];
  f.hessRows.forEach((r, k) => (H[r][f.hessCols[k]] = hv[k]));
  const hessPattern = Array.from(f.hessRows, (r, k) => `${r}${f.hessCols[k]}`);
  return { g, H, hessPattern, jacPattern: Array.from(f.jacCols) };
}

describe("hand-derived derivatives", () => {
  const x = 1.3;
  const y = -0.7;

  it("x^3 sin y: ∂x = 3x² sin y, ∂y = x³ cos y, ∂xx = 6x sin y, ∂yx = 3x² cos y, ∂yy = −x³ sin y", () => {
    const d = derivs("x^3*sin(y)", x, y);
    close(d.g[0], 3 * x * x * Math.sin(y));
    close(d.g[1], x ** 3 * Math.cos(y));
    close(d.H[0][0], 6 * x * Math.sin(y));
    close(d.H[1][0], 3 * x * x * Math.cos(y));
    close(d.H[1][1], -(x ** 3) * Math.sin(y));
  });

  it("drag law y² exp(−x/H): ∂x = −y² e/H, ∂y = 2y e, ∂xx = y² e/H², ∂yx = −2y e/H, ∂yy = 2e", () => {
    const H = 7.5;
    const e = Math.exp(-x / H);
    const d = derivs("y^2*exp(-x/H)", x, y);
    close(d.g[0], (-y * y * e) / H);
    close(d.g[1], 2 * y * e);
    close(d.H[0][0], (y * y * e) / (H * H));
    close(d.H[1][0], (-2 * y * e) / H);
    close(d.H[1][1], 2 * e);
  });

  it("atan2(y, x): ∂x = −y/(x²+y²), ∂y = x/(x²+y²); ∂xx = 2xy/(x²+y²)², ∂yy = −2xy/(x²+y²)², ∂yx = (y²−x²)/(x²+y²)²", () => {
    const r2 = x * x + y * y;
    const d = derivs("atan2(y, x)", x, y);
    close(d.g[0], -y / r2);
    close(d.g[1], x / r2);
    close(d.H[0][0], (2 * x * y) / (r2 * r2));
    close(d.H[1][1], (-2 * x * y) / (r2 * r2));
    close(d.H[1][0], (y * y - x * x) / (r2 * r2));
  });

  it("x^y: ∂x = y x^(y−1), ∂y = x^y ln x, ∂xx = y(y−1)x^(y−2), ∂yx = x^(y−1)(1 + y ln x), ∂yy = x^y ln²x", () => {
    const d = derivs("x^y", x, y);
    close(d.g[0], y * x ** (y - 1));
    close(d.g[1], x ** y * Math.log(x));
    close(d.H[0][0], y * (y - 1) * x ** (y - 2));
    close(d.H[1][0], x ** (y - 1) * (1 + y * Math.log(x)));
    close(d.H[1][1], x ** y * Math.log(x) ** 2);
  });

  it("elementary functions of x: first and second derivatives", () => {
    const cases: [string, number, number][] = [
      // [f, f', f'']
      ["sqrt(x)", 0.5 / Math.sqrt(x), -0.25 * x ** -1.5],
      ["log(x)", 1 / x, -1 / (x * x)],
      ["exp(x)", Math.exp(x), Math.exp(x)],
      ["tan(x)", 1 + Math.tan(x) ** 2, 2 * Math.tan(x) * (1 + Math.tan(x) ** 2)],
      ["atan(x)", 1 / (1 + x * x), (-2 * x) / (1 + x * x) ** 2],
      ["sinh(x)", Math.cosh(x), Math.sinh(x)],
      ["cosh(x)", Math.sinh(x), Math.cosh(x)],
      ["tanh(x)", 1 - Math.tanh(x) ** 2, -2 * Math.tanh(x) * (1 - Math.tanh(x) ** 2)],
      ["cos(x)", -Math.sin(x), -Math.cos(x)],
      ["1/x", -1 / (x * x), 2 / x ** 3],
      ["x^(-2)", -2 / x ** 3, 6 / x ** 4],
      ["x^0.5", 0.5 / Math.sqrt(x), -0.25 * x ** -1.5],
    ];
    for (const [f, d1, d2] of cases) {
      const d = derivs(f, x, y);
      close(d.g[0], d1);
      close(d.H[0][0], d2);
    }
  });

  it("non-smooth functions away from their kinks, and the mean of both sides at a tie", () => {
    expect(derivs("abs(x)", -2, 0).g[0]).toBe(-1);
    expect(derivs("abs(x)", 2, 0).g[0]).toBe(1);
    expect(derivs("min(x, y)", 1, 2).g).toEqual([1, 0]);
    expect(derivs("min(x, y)", 3, 2).g).toEqual([0, 1]);
    expect(derivs("max(x, y)", 1, 2).g).toEqual([0, 1]);
    expect(derivs("max(x, y)", 1, 1).g).toEqual([0.5, 0.5]);
    expect(derivs("abs(x)", 2, 0).hessPattern).toEqual([]);
  });

  it("sparsity follows the symbolic derivatives exactly", () => {
    expect(derivs("x*y", x, y).hessPattern).toEqual(["10"]); // ∂²/∂x² = ∂²/∂y² = 0
    expect(derivs("x + 3*y", x, y).hessPattern).toEqual([]);
    expect(derivs("x^2 + y", x, y).hessPattern).toEqual(["00"]);
    expect(derivs("sin(x)", x, y).jacPattern).toEqual([0]);
    expect(derivs("x - x + y", x, y).jacPattern).toEqual([1]); // x − x folds to 0
  });
});

describe("derive.ts helpers on mathjs trees", () => {
  const scope = { x: 0.9, y: -1.4, c: 2.5 };
  it("differentiate matches the hand-derived derivative", () => {
    // d/dx [c x^3 sin(y) + exp(x y)] = 3 c x² sin y + y exp(x y)
    const d = differentiate(parse("c*x^3*sin(y) + exp(x*y)"), "x");
    const ref = 3 * scope.c * scope.x ** 2 * Math.sin(scope.y) + scope.y * Math.exp(scope.x * scope.y);
    close(evaluate(d.toString(), scope) as number, ref);
    // constants stay symbolic: d/dc = x^3 sin y
    const dc = differentiate(parse("c*x^3*sin(y) + exp(x*y)"), "c");
    close(evaluate(dc.toString(), scope) as number, scope.x ** 3 * Math.sin(scope.y));
    expect(differentiate(parse("sin(y)"), "x").toString()).toBe("0");
  });

  it("gradient and endpoint symbols", () => {
    const g = gradient(parse("final(h)^2 - initial(h)*tf"), ["final(h)", "initial(h)", "tf"]);
    const sc = { h: 0, tf: 3 };
    // ∂/∂final(h) = 2 final(h) (shown symbolically), ∂/∂initial(h) = −tf, ∂/∂tf = −initial(h)
    expect(g[0].toString()).toBe("2 * final(h)");
    close(evaluate(g[1].toString(), sc) as number, -3);
    expect(g[2].toString()).toBe("-initial(h)");
  });

  it("simplify folds constants and identities without changing the value", () => {
    const s = simplify(parse("0*x + 1*y + 2*3 + (x - x)"));
    expect(s.toString()).toBe("6 + y");
    close(evaluate(s.toString(), scope) as number, 6 + scope.y);
  });

  it("substitute wraps replacements in parentheses", () => {
    const s = substitute(parse("D/m"), new Map([["D", parse("a + b")]]));
    expect(s.toString()).toBe("(a + b) / m");
  });

  it("hash-consing shares common subexpressions and the code computes them once", () => {
    const dag = new Dag();
    const xv = dag.variable(0);
    expect(dag.call1("sin", xv)).toBe(dag.call1("sin", xv));
    expect(dag.add(xv, dag.konst(1))).toBe(dag.add(dag.konst(1), xv));
    const f = compilePointFunction([parse("sin(x)*cos(x) + sin(x)")], ["x"], {});
    expect(f.source.eval.match(/M\.sin\(/g)).toHaveLength(1);
    // d/dx = cos² − sin² + cos: cos(x) once in the Jacobian code
    expect(f.source.jac.match(/M\.cos\(/g)).toHaveLength(1);
  });
});
