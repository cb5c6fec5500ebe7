/**
 * Deliberately broken problem folders (tests/fixtures/broken-problems/<case>/) and the exact
 * list of errors each must produce (expected.txt, one formatted error per line), all at once.
 */
import { readdirSync, readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import { formatProblemError } from "~/engine/problem/errors";

const ROOT = "tests/fixtures/broken-problems";
const cases = readdirSync(ROOT).sort();

describe("broken problem files", () => {
  it("there are fixtures", () => {
    expect(cases.length).toBeGreaterThanOrEqual(15);
  });
  for (const name of cases) {
    it(name, () => {
      const r = loadProblem(`${ROOT}/${name}`);
      expect(r.ok).toBe(false);
      if (r.ok) return;
      const expected = readFileSync(`${ROOT}/${name}/expected.txt`, "utf8").trimEnd().split("\n");
      expect(r.errors.map(formatProblemError)).toEqual(expected);
      for (const e of r.errors) expect(e.file.startsWith(`${ROOT}/${name}/`)).toBe(true);
    });
  }
});
