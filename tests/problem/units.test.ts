/** Small parts of the problem loader: SHA-256, JSON error positions, CSV parsing, TeX names, literals. */
import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { sha256Hex } from "~/engine/problem/sha256";
import { findJsonError } from "~/engine/problem/json-position";
import { interpolateLinear, parseTrajectoryCsv } from "~/engine/problem/csv";
import { formatProblemError, jsonPath, type ProblemError } from "~/engine/problem/errors";
import { nameToTex } from "~/engine/expr/tex";
import { numberLiteral } from "~/engine/expr/codegen";

describe("sha256", () => {
  it("FIPS 180-4 example digests", () => {
    // NIST "SHA-256 example" values for "abc" and the 448-bit message (recalled from memory, and
    // checked against node:crypto below)
    expect(sha256Hex("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    expect(sha256Hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq")).toBe(
      "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1",
    );
    expect(sha256Hex("")).toBe("e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  });
  it("agrees with node:crypto on random byte strings of every length class", () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), (bytes) => {
        expect(sha256Hex(bytes)).toBe(createHash("sha256").update(bytes).digest("hex"));
      }),
      { numRuns: 500 },
    );
  });
});

describe("JSON error positions", () => {
  it("line and column of the first error", () => {
    expect(findJsonError('{\n  "a": 1,\n}')).toEqual({ line: 3, column: 1, message: "trailing comma before '}'" });
    expect(findJsonError('{"a": tru}')).toEqual({ line: 1, column: 7, message: "unexpected 't'" });
    expect(findJsonError('{"a": 1} x')?.message).toMatch(/after the end/);
    expect(findJsonError("// c\n{}")?.message).toMatch(/comments are not allowed/);
    expect(findJsonError("[".repeat(300) + "]".repeat(300))?.message).toMatch(/nested more than 256/);
    expect(findJsonError('{"a": 1,\n "b": {"a": 2},\n "a": 3}')).toEqual({ line: 3, column: 2, message: "duplicate field 'a'" });
    expect(findJsonError('{"a": [1, 2.5e-3, -0, "x\\u00e9", true, false, null]}')).toBeNull();
  });
  it("agrees with JSON.parse on validity (documents without duplicate fields)", () => {
    fc.assert(
      fc.property(fc.oneof(fc.json(), fc.string({ maxLength: 40 })), (text) => {
        let valid = true;
        try {
          JSON.parse(text);
        } catch {
          valid = false;
        }
        const err = findJsonError(text);
        if (err?.message.startsWith("duplicate field")) return;
        expect(err === null).toBe(valid);
      }),
      { numRuns: 2000 },
    );
  });
});

describe("trajectory CSV", () => {
  it("parses header, values, comments and blank lines", () => {
    const errors: ProblemError[] = [];
    const t = parseTrajectoryCsv("# comment\nt, h ,v\n0,1,2\n\n0.5, 3,4\r\n", "f.csv", errors);
    expect(errors).toEqual([]);
    expect(t!.header).toEqual(["t", "h", "v"]);
    expect(t!.headerLine).toBe(2);
    expect(Array.from(t!.columns[1])).toEqual([1, 3]);
  });
  it("reports file, line and column", () => {
    const errors: ProblemError[] = [];
    parseTrajectoryCsv("x,h,h\n0,1\n1,a,2\n1,2,3\n", "f.csv", errors);
    expect(errors.map(formatProblemError)).toEqual([
      "f.csv: line 1, column 1: the first column must be 't', found 'x'",
      "f.csv: line 1, column 5: duplicate column 'h'",
      "f.csv: line 2: expected 3 values (as in the header), found 2",
      "f.csv: line 3, column 3: 'a' is not a finite number (column 'h')",
      "f.csv: line 4, column 1: times must increase strictly (1 after 1)",
    ]);
  });
  it("linear interpolation, held constant outside", () => {
    const t = Float64Array.of(0, 1, 3);
    const y = Float64Array.of(0, 10, 30);
    expect([-1, 0, 0.5, 2, 3, 9].map((s) => interpolateLinear(t, y, s))).toEqual([0, 0, 5, 20, 30, 30]);
  });
});

describe("formatting", () => {
  it("JSON paths and error lines", () => {
    expect(jsonPath(["path", 0, "expr"])).toBe("path[0].expr");
    expect(jsonPath(["dynamics", "a b"])).toBe('dynamics["a b"]');
    expect(formatProblemError({ file: "problems/x/problem.json", path: "dynamics.v", column: 4, message: "unknown name 'Tmx'", suggestion: "Tmax" })).toBe(
      "problems/x/problem.json: dynamics.v, column 4: unknown name 'Tmx'; did you mean 'Tmax'?",
    );
    expect(formatProblemError({ file: "f", path: "", message: "m" })).toBe("f: m");
  });
  it("TeX names", () => {
    expect(["v", "rho0", "lambda_h", "CdA", "t0", "tf", "Tmax", "x_max", "theta", "m_dry_2"].map(nameToTex)).toEqual([
      "v", "\\rho_{0}", "\\lambda_{h}", "\\mathrm{CdA}", "t_{0}", "t_{f}", "\\mathrm{Tmax}", "x_{\\mathrm{max}}", "\\theta", "m_{\\mathrm{dry},2}",
    ]);
  });
  it("number literals round-trip", () => {
    fc.assert(
      fc.property(fc.double(), (v) => {
        const lit = numberLiteral(v);
        expect(lit).toMatch(/^[0-9eE.+\-()/]+$/);
        expect(Object.is(Function(`return ${lit}`)(), v)).toBe(true);
      }),
      { numRuns: 2000 },
    );
  });
});
