/** TeX of validated expressions: KaTeX must accept it for random expressions and names. */
import { describe, expect, it, vi } from "vitest";
import fc from "fast-check";
import katex from "katex";
import { parse } from "mathjs";
import { toTex } from "~/engine/expr/tex";
import { smoothExpression } from "./gen";

const NAMES = ["m", "v", "rho0", "lambda_h", "CdA", "x_max", "theta", "T", "m_dry_2", "Isp"];

describe("TeX rendering", () => {
  it("random expressions over varied names render with KaTeX", () => {
    fc.assert(
      fc.property(smoothExpression, fc.shuffledSubarray(NAMES, { minLength: 4, maxLength: 4 }), (text, names) => {
        const renamed = text.replace(/x([0-3])/g, (_, j) => names[Number(j)]);
        const tex = toTex(parse(renamed));
        expect(() => katex.renderToString(tex, { throwOnError: true }), `${renamed} → ${tex}`).not.toThrow();
      }),
      { numRuns: 400 },
    );
  });

  it("endpoint and non-smooth functions", () => {
    expect(toTex(parse("final(h) - initial(h)"))).toBe("h(t_{f})- h(t_{0})");
    for (const s of ["min(a, b, c)", "max(m, 2)", "abs(v)", "atan2(y, x)", "2h", "-x^2", "(a+b)^(c/d)", "tf - t0"]) {
      expect(() => katex.renderToString(toTex(parse(s)), { throwOnError: true }), s).not.toThrow();
    }
  });

  it("renders each node of nested calls once (linear in depth, not 2^depth)", () => {
    // A 53-deep exp(exp(…)) in a problem file, found by tests/expr/hostile.test.ts, kept mathjs'
    // default rendering busy for over half an hour: FunctionNode renders its arguments twice.
    const depth = 20;
    const tree = parse("exp(".repeat(depth) + "x" + ")".repeat(depth));
    const fnProto = Object.getPrototypeOf(parse("exp(x)")) as { _toTex: (o: object) => string };
    const spy = vi.spyOn(fnProto, "_toTex");
    const tex = toTex(tree);
    const calls = spy.mock.calls.length;
    spy.mockRestore();
    // the 20 function nodes, each rendered once
    expect(calls).toBe(depth);
    // and the text is the one-level rendering nested 20 times
    const one = toTex(parse("exp(x)"));
    const at = one.lastIndexOf(" x");
    const [open, close] = [one.slice(0, at), one.slice(at + 2)];
    expect(tex).toBe(open.repeat(depth) + " x" + close.repeat(depth));
    expect(() => katex.renderToString(tex, { throwOnError: true })).not.toThrow();
  });
});
