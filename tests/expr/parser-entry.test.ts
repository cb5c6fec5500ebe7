/**
 * The engine parses with an instance made from mathjs's number-only entry (app/engine/expr/math.ts);
 * the reference here is the package's default instance (`import { parse } from "mathjs"`), the
 * parser mathjs documents. Both must give the same tree — node types, names, operators, constant
 * values — for every expression of the problem library, the random smooth expressions of the
 * derivative tests, and the corner cases of the syntax the problem format allows (implicit
 * multiplication, unary minus, exponent notation, endpoint functions). The constants must be plain
 * numbers, never BigNumber or Fraction objects.
 */
import { describe, expect, it } from "vitest";
import fs from "node:fs";
import path from "node:path";
import fc from "fast-check";
import { parse as referenceParse, type MathNode } from "mathjs";
import { parse } from "~/engine/expr/math";
import { smoothExpression } from "./gen";

/** The tree as plain data: what the engine reads of a node (expr/compile.ts, validate.ts). */
function shape(n: MathNode): unknown {
  const node = n as MathNode & { fn?: unknown; op?: string; name?: string; value?: unknown; args?: MathNode[]; content?: MathNode; implicit?: boolean };
  switch (n.type) {
    case "ConstantNode":
      return { c: node.value, t: typeof node.value };
    case "SymbolNode":
      return { s: node.name };
    case "ParenthesisNode":
      return { p: shape(node.content!) };
    case "OperatorNode":
      return { op: node.op, fn: node.fn, implicit: !!node.implicit, args: node.args!.map(shape) };
    case "FunctionNode":
      return { f: (node.fn as MathNode & { name: string }).name, args: node.args!.map(shape) };
    default:
      return { other: n.type, text: n.toString() };
  }
}

/** Every expression string of a problem file (dynamics, intermediates, path, endpoint rows, objective, string bounds). */
function expressionsOf(file: string): string[] {
  const d = JSON.parse(fs.readFileSync(file, "utf8"));
  const out: string[] = [];
  for (const v of Object.values(d.dynamics ?? {})) if (typeof v === "string") out.push(v);
  for (const list of [d.intermediates, d.path, d.endpointConstraints]) {
    for (const item of list ?? []) {
      if (typeof item.expr === "string") out.push(item.expr);
      for (const b of [item.lower, item.upper]) if (typeof b === "string") out.push(b);
    }
  }
  for (const k of ["running", "terminal"]) if (typeof d.objective?.[k] === "string") out.push(d.objective[k]);
  return out;
}

const libraryDir = path.resolve(__dirname, "../../problems");
const libraryExpressions = fs
  .readdirSync(libraryDir)
  .filter((id) => fs.existsSync(path.join(libraryDir, id, "problem.json")))
  .flatMap((id) => expressionsOf(path.join(libraryDir, id, "problem.json")).map((e) => [id, e] as const));

describe("the engine's parser instance", () => {
  it("reads the library's expressions exactly as mathjs's default parser does", () => {
    expect(libraryExpressions.length).toBeGreaterThan(30);
    for (const [id, e] of libraryExpressions) expect(shape(parse(e)), `${id}: ${e}`).toEqual(shape(referenceParse(e)));
  });

  it("reads random smooth expressions exactly as mathjs's default parser does", () => {
    fc.assert(
      fc.property(smoothExpression, (e) => {
        expect(shape(parse(e))).toEqual(shape(referenceParse(e)));
      }),
      { numRuns: 300 },
    );
  });

  it("keeps implicit multiplication, unary minus, exponent notation and endpoint functions; constants are numbers", () => {
    for (const e of ["2h", "-x^2", "2 x y", "1e-3*v", "3.5e+2/m", "final(h) - initial(h)", "(a+b)^(c/d)", "tf - t0", "-(-3)", "x^-2", "atan2(y, x)", "min(a, b, c)"]) {
      expect(shape(parse(e)), e).toEqual(shape(referenceParse(e)));
    }
    const c = parse("0.1 + 1e-300 + 12345678901234567890") as MathNode & { args: Array<MathNode & { args?: MathNode[]; value?: unknown }> };
    const constants: unknown[] = [];
    const walk = (n: MathNode & { args?: MathNode[]; value?: unknown }) => {
      if (n.type === "ConstantNode") constants.push(n.value);
      for (const a of n.args ?? []) walk(a as MathNode & { args?: MathNode[]; value?: unknown });
    };
    walk(c);
    expect(constants).toEqual([0.1, 1e-300, 12345678901234567890]);
    for (const v of constants) expect(typeof v).toBe("number");
  });

  it("reports a syntax error with the same message and position", () => {
    for (const e of ["2*(x+", "x +* y", "sin(", "2 )"]) {
      let ours = "", theirs = "";
      try { parse(e); } catch (err) { ours = (err as Error).message; }
      try { referenceParse(e); } catch (err) { theirs = (err as Error).message; }
      expect(ours, e).not.toBe("");
      expect(ours, e).toBe(theirs);
    }
  });
});
