/** The whitelist's messages, columns (1-based) and suggestions for specific inputs. */
import { describe, expect, it } from "vitest";
import { parseExpression } from "~/engine/expr/validate";
import { nearestName, osaDistance } from "~/engine/expr/suggest";

const scope = {
  names: new Set(["T", "Tmax", "m", "v", "h", "g0"]),
  misplaced: new Map([["tf", "'tf' is for endpoint expressions; use 't' in point expressions"]]),
};
const issues = (s: string, sc: Parameters<typeof parseExpression>[1] = scope) => parseExpression(s, sc).issues;

describe("expression whitelist", () => {
  it("accepts the allowed grammar", () => {
    for (const s of ["(T - 0.5*v^2)/m - g0", "-v", "+v", "2h", "exp(-h/1e4)", "atan2(v, h)", "min(v, h, 3)", "pi*h", "sqrt(abs(v))", "0x10*h"]) {
      expect(issues(s), s).toEqual([]);
    }
    expect(parseExpression("abs(v) + max(v, 1)", scope).nonSmooth.sort()).toEqual(["abs", "max"]);
  });

  it("unknown names: column of each occurrence and the nearest name", () => {
    expect(issues("(T - Tmx)/m")).toEqual([{ column: 6, message: "unknown name 'Tmx'", suggestion: "Tmax" }]);
    expect(issues("Tmax + Tmx*Tmx").map((i) => i.column)).toEqual([8, 12]);
    expect(issues("2Tmx")[0].column).toBe(2);
    expect(issues("zzz")).toEqual([{ column: 1, message: "unknown name 'zzz'", suggestion: undefined }]);
    expect(issues("tf + v")).toEqual([{ column: 1, message: "'tf' is for endpoint expressions; use 't' in point expressions" }]);
  });

  it("unknown functions, wrong arity, names used as functions", () => {
    expect(issues("v + expp(h)")).toEqual([{ column: 5, message: "unknown function 'expp'", suggestion: "exp" }]);
    expect(issues("atan2(v)")).toEqual([{ column: 1, message: "atan2 takes 2 arguments, got 1" }]);
    expect(issues("min(v)")[0].message).toBe("min takes 2 to 16 arguments, got 1");
    expect(issues("v*h(2)")[0]).toEqual({ column: 3, message: "'h' is not a function; write h*(...) for a product" });
    expect(issues("exp + 1")[0].message).toBe("'exp' is a function; write exp(...)");
    expect(issues("sign(v)")[0].message).toBe("unknown function 'sign'");
  });

  it("refuses everything outside the whitelist", () => {
    const cases: [string, RegExp, number | undefined][] = [
      ["a.b", /property access/, 2],
      ["[1,2]", /matrices and vectors/, 1],
      ["v = 1", /assignments/, 3],
      ["f(x)=x", /function definitions/, 5],
      ["v; h", /only one expression/, 2],
      ["v ? h : m", /conditional/, 3],
      ["{a: 1}", /objects/, 1],
      ["1:3", /ranges/, 2],
      ["v < h", /comparisons are not allowed/, 3],
      ["v < h < m", /comparisons are not allowed/, 3],
      ["v % h", /operator '%'/, 3],
      ["v!", /operator '!'/, 2],
      ["'abc'", /strings are not allowed/, 1],
      ["true", /'true' is not allowed/, 1],
      ["1e999", /number out of range/, undefined],
      ["import(\"fs\")", /unknown function 'import'/, 1],
      ["constructor", /unknown name 'constructor'/, 1],
      ["__proto__", /unknown name '__proto__'/, 1],
      ["initial(h)", /only be used in endpoint expressions/, 1],
      ["exp(v", /syntax error/, 6],
      ["", /empty expression/, undefined],
    ];
    for (const [s, re, col] of cases) {
      const r = parseExpression(s, scope);
      expect(r.node, s).toBeNull();
      expect(r.issues[0].message, s).toMatch(re);
      expect(r.issues[0].column, s).toBe(col);
    }
  });

  it("Unicode look-alikes are refused at their column with the ASCII name suggested", () => {
    // Cyrillic х (U+0445) in "vх"... and Greek Τ (U+03A4) in "Τmax"
    expect(issues("2*Τmax")).toEqual([
      { column: 3, message: "character 'Τ' (U+03A4) is not allowed: expressions use ASCII characters only", suggestion: "Tmax" },
    ]);
    expect(issues("h + \u200b")[0].message).toMatch(/U\+200B/);
  });

  it("endpoint expressions: initial()/final() of states only", () => {
    const ep = { names: new Set(["t0", "tf", "g0"]), endpointStates: new Set(["h", "v"]), misplaced: new Map([["h", "state 'h' in an endpoint expression: write initial(h) or final(h)"]]) };
    expect(issues("final(h) - initial(h) + tf", ep)).toEqual([]);
    expect(parseExpression("final(h) - initial(v)", ep).used).toEqual(new Set(["final(h)", "initial(v)"]));
    expect(issues("final(hh)", ep)).toEqual([{ column: 7, message: "'hh' is not a state", suggestion: "h" }]);
    expect(issues("final(h + 1)", ep)[0].message).toMatch(/takes one state name/);
    expect(issues("final(h) - h", ep)).toEqual([{ column: 12, message: "state 'h' in an endpoint expression: write initial(h) or final(h)" }]);
  });

  it("bounded input: length, nesting, depth", () => {
    expect(issues("v+".repeat(2500) + "v")[0].message).toMatch(/at most 4000/);
    expect(issues("(".repeat(65) + "v" + ")".repeat(65))[0].message).toMatch(/nested more than 64/);
    expect(issues("v+".repeat(300) + "v")[0].message).toMatch(/nested more than 200 levels/);
  });
});

describe("nearest-name suggestions", () => {
  it("optimal string alignment distance", () => {
    // hand-counted: one deletion; one transposition; kitten→sitting needs 3 edits
    expect(osaDistance("Tmx", "Tmax")).toBe(1);
    expect(osaDistance("Tmxa", "Tmax")).toBe(1);
    expect(osaDistance("kitten", "sitting")).toBe(3);
    expect(osaDistance("", "abc")).toBe(3);
  });
  it("suggests within max(1, len/3) edits, case-insensitive first", () => {
    expect(nearestName("tmax", ["Tmax", "m"])).toBe("Tmax");
    expect(nearestName("velocity", ["v", "h"])).toBeUndefined();
    expect(nearestName("rho", ["rho0", "H"])).toBe("rho0");
  });
});
