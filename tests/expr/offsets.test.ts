/**
 * The offset variants of a compiled point function (evalAt, jacAt, hessAt: inputs read at
 * z[zo + i], outputs written at out[oo + k]) give exactly the values of eval, jac and hess on
 * arrays of their own, and touch nothing outside their slice. The reference is the function's own
 * plain form, whose values tests/expr/known-derivatives.test.ts checks against mathjs.
 */
import { describe, expect, it } from "vitest";
import { parse } from "mathjs";
import { compilePointFunction } from "~/engine/expr/compile";

describe("compiled point functions at offsets", () => {
  const f = compilePointFunction(
    [parse("x*sin(y) + exp(0.3*u)*y^2"), parse("atan2(y, x + 3) - u^3/(1 + x^2)"), parse("sqrt(1 + x^2 + y^2)*cos(u)")],
    ["x", "y", "u"],
    {},
  );
  const zLocal = Float64Array.from([0.7, -1.3, 0.4]);
  const w = Float64Array.from([0.5, -2, 1.25]);

  it("has the offset variants", () => {
    expect(typeof f.evalAt).toBe("function");
    expect(typeof f.jacAt).toBe("function");
    expect(typeof f.hessAt).toBe("function");
  });

  it("reads and writes at the offsets, bit for bit the plain values, nothing else touched", () => {
    const zo = 5, oo = 3;
    const Z = new Float64Array(12).fill(NaN);
    Z.set(zLocal, zo);
    for (const [plain, at, len] of [
      [(o: Float64Array) => f.eval(zLocal, o), (O: Float64Array) => f.evalAt!(Z, zo, O, oo), f.nOut],
      [(o: Float64Array) => f.jac(zLocal, o), (O: Float64Array) => f.jacAt!(Z, zo, O, oo), f.jacRows.length],
      [(o: Float64Array) => f.hess(zLocal, w, o), (O: Float64Array) => f.hessAt!(Z, zo, w, O, oo), f.hessRows.length],
    ] as const) {
      const ref = new Float64Array(len);
      plain(ref);
      const big = new Float64Array(len + 2 * oo).fill(-7);
      at(big);
      expect(Array.from(big.subarray(oo, oo + len))).toEqual(Array.from(ref));
      expect(Array.from(big.subarray(0, oo)).every((v) => v === -7)).toBe(true);
      expect(Array.from(big.subarray(oo + len)).every((v) => v === -7)).toBe(true);
      expect(ref.every(Number.isFinite)).toBe(true);
    }
  });
});
