import { describe, expect, it } from "vitest";
import path from "node:path";
import fs from "node:fs";
import { canonicalJson, expandCases, loadSuite, suitePath } from "~/runs/suite";
import { ProblemLibrary } from "~/engine/problem/library";
import { REPO, tempDir, writeSuite } from "./helpers";

describe("suite files", () => {
  const dir = tempDir("suite");
  it("expands ids and tags × schemes × meshes, honours mesh.schemes and exclusions", () => {
    const file = writeSuite(dir, {
      name: "t1",
      problems: ["kestrel-2-ascent", { tag: "bang-bang" }],
      schemes: ["trapezoidal", "lgr"],
      meshes: [{ intervals: 10 }, { intervals: 6, degree: 3, schemes: ["lgr"] }],
      exclude: [{ scheme: "trapezoidal", intervals: 10, problem: "kestrel-2-ascent" }],
    });
    const s = loadSuite(file);
    const cases = expandCases(s.definition, new ProblemLibrary([path.join(REPO, "problems")]));
    const keys = cases.map((c) => c.key);
    expect(keys[0]).toBe("kestrel-2-ascent/lgr/10x4");
    expect(keys).toContain("kestrel-2-ascent/lgr/6x3");
    expect(keys).not.toContain("kestrel-2-ascent/trapezoidal/10");
    expect(keys.some((k) => k.endsWith("/trapezoidal/6"))).toBe(false);
    expect(new Set(keys).size).toBe(keys.length);
    // Every tagged problem carries the tag.
    for (const c of cases.slice(2)) {
      const j = JSON.parse(fs.readFileSync(path.join(REPO, "problems", c.problemId, "problem.json"), "utf8"));
      expect(j.tags).toContain("bang-bang");
    }
  });
  it("hash ignores key order; errors name the file and field", () => {
    expect(canonicalJson({ b: 1, a: [{ d: 2, c: 3 }] })).toBe('{"a":[{"c":3,"d":2}],"b":1}');
    const a = writeSuite(dir, { name: "h1", problems: ["kestrel-2-ascent"], schemes: ["euler"], meshes: [{ intervals: 5 }] });
    const h1 = loadSuite(a).contentHash;
    fs.writeFileSync(a, JSON.stringify({ meshes: [{ intervals: 5 }], schemes: ["euler"], problems: ["kestrel-2-ascent"], name: "h1", format: "arcwatch-suite/1" }));
    expect(loadSuite(a).contentHash).toBe(h1);
    const bad = writeSuite(dir, { name: "bad", problems: ["kestrel-2-ascent"], schemes: ["nope"], meshes: [{ intervals: 0 }] });
    expect(() => loadSuite(bad)).toThrow(/bad\.json: invalid suite[\s\S]*schemes\.0[\s\S]*meshes\.0\.intervals/);
    const unknown = writeSuite(dir, { name: "unk", problems: ["no-such-problem"], schemes: ["euler"], meshes: [{ intervals: 5 }] });
    expect(() => expandCases(loadSuite(unknown).definition, new ProblemLibrary([path.join(REPO, "problems")]))).toThrow(/problems\[0\] "no-such-problem"/);
  });
  it("the shipped suites are valid and resolve", () => {
    for (const name of ["quick", "full"]) {
      const s = loadSuite(suitePath(name, REPO));
      expect(expandCases(s.definition, new ProblemLibrary([path.join(REPO, "problems")])).length).toBeGreaterThan(0);
    }
  });
});
