/**
 * Suites that reach added problems: `{ "all": true }` and tags resolve against the whole library
 * (checkout + uploaded folder) when a run starts; browser changes (suite_changes) are applied on top
 * of the file with a version per suite and change the content hash; membership says why; shard
 * plans still cover the effective case set and freeze per case set; "Run it now"'s suite is valid.
 */
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { ProblemLibrary } from "~/engine/problem/library";
import { loadSuiteWithChanges, recordSuiteChange, suitesOfProblem } from "~/models/suite-changes.server";
import { applySuiteChanges, problemCheckSuite, problemSuiteName, suiteMembership, type SuiteChange } from "~/runs/suite-changes";
import { expandCases, loadSuite, suitePath, suiteSchema } from "~/runs/suite";
import { shardPlanForSuite } from "../../bench/runner/shard-plan";
import { REPO, tempDb, tempDir, writeSuite } from "./helpers";

const checkoutIds = () => fs.readdirSync(path.join(REPO, "problems")).filter((d) => fs.existsSync(path.join(REPO, "problems", d, "problem.json"))).sort();

/** A copy of pika-rover-dash under a new id with one extra tag, in its own folder (an "uploaded" root). */
function uploadedCopy(root: string, id: string, extraTag: string): void {
  const dir = path.join(root, id);
  fs.mkdirSync(dir, { recursive: true });
  for (const f of fs.readdirSync(path.join(REPO, "problems", "pika-rover-dash"))) fs.copyFileSync(path.join(REPO, "problems", "pika-rover-dash", f), path.join(dir, f));
  const j = JSON.parse(fs.readFileSync(path.join(dir, "problem.json"), "utf8"));
  j.title = `Copy ${id}`;
  j.tags = [...j.tags, extraTag];
  fs.writeFileSync(path.join(dir, "problem.json"), JSON.stringify(j, null, 2));
}

const change = (version: number, action: "add" | "remove", problemId: string): SuiteChange => ({ version, action, problemId, by: "t", at: version, note: "" });

describe("suite selection reaches every problem of the library", () => {
  const dir = tempDir("suite-select");
  const uploaded = path.join(dir, "uploaded");
  uploadedCopy(uploaded, "zz-added-rover", "added-by-test");
  const library = new ProblemLibrary([path.join(REPO, "problems"), uploaded]);

  it('{ "all": true } is every folder of both roots (listed here from the file system)', () => {
    const s = loadSuite(writeSuite(dir, { name: "every", problems: [{ all: true }], schemes: ["euler"], meshes: [{ intervals: 5 }] }));
    const ids = [...new Set(expandCases(s.definition, library).map((c) => c.problemId))].sort();
    expect(ids).toEqual([...checkoutIds(), "zz-added-rover"].sort());
  });

  it("the shipped full suite selects every problem (the added one too); quick stays its hand-picked five", () => {
    const full = loadSuite(suitePath("full", REPO));
    expect(full.definition.problems).toEqual([{ all: true }]);
    const fullIds = new Set(expandCases(full.definition, library).map((c) => c.problemId));
    expect(fullIds.has("zz-added-rover")).toBe(true);
    expect(fullIds.size).toBe(checkoutIds().length + 1);
    const quick = loadSuite(suitePath("quick", REPO));
    expect(quick.definition.problems.every((p) => typeof p === "string")).toBe(true);
    expect(new Set(expandCases(quick.definition, library).map((c) => c.problemId)).has("zz-added-rover")).toBe(false);
  });

  it("a tag selects the added problem by its tag", () => {
    const s = loadSuite(writeSuite(dir, { name: "tagged", problems: [{ tag: "added-by-test" }], schemes: ["trapezoidal"], meshes: [{ intervals: 5 }] }));
    expect(expandCases(s.definition, library).map((c) => c.key)).toEqual(["zz-added-rover/trapezoidal/5"]);
  });

  it("membership says why: id, tag, all, change, excluded, removed, not selected", () => {
    const def = loadSuite(writeSuite(dir, { name: "why", problems: ["kestrel-2-ascent", { tag: "bang-bang" }], schemes: ["euler"], meshes: [{ intervals: 5 }], exclude: [{ problem: "tern-orbit-raise" }] })).definition;
    expect(suiteMembership(def, [], "kestrel-2-ascent", [])).toMatchObject({ included: true, via: "id" });
    expect(suiteMembership(def, [], "x", ["bang-bang"])).toMatchObject({ included: true, via: "tag", tag: "bang-bang" });
    expect(suiteMembership(def, [], "x", ["smooth"])).toMatchObject({ included: false, via: "not-selected" });
    expect(suiteMembership(def, [], "tern-orbit-raise", ["bang-bang"])).toMatchObject({ included: false, via: "excluded" });
    expect(suiteMembership(def, [change(1, "add", "x")], "x", [])).toMatchObject({ included: true, via: "change" });
    expect(suiteMembership(def, [change(1, "add", "x"), change(2, "remove", "x")], "x", [])).toMatchObject({ included: false, via: "removed" });
    expect(suiteMembership(def, [change(1, "remove", "kestrel-2-ascent")], "kestrel-2-ascent", [])).toMatchObject({ included: false, via: "removed" });
    expect(suiteMembership({ ...def, problems: [{ all: true }] }, [], "anything", [])).toMatchObject({ included: true, via: "all" });
  });

  it("changes apply in version order: add, remove, add again; the expanded cases follow", () => {
    const def = loadSuite(writeSuite(dir, { name: "order", problems: ["kestrel-2-ascent"], schemes: ["euler"], meshes: [{ intervals: 5 }] })).definition;
    const keys = (changes: SuiteChange[]) => expandCases(applySuiteChanges(def, changes), library).map((c) => c.key);
    expect(keys([change(1, "add", "zz-added-rover")])).toEqual(["kestrel-2-ascent/euler/5", "zz-added-rover/euler/5"]);
    expect(keys([change(2, "remove", "zz-added-rover"), change(1, "add", "zz-added-rover")])).toEqual(["kestrel-2-ascent/euler/5"]);
    expect(keys([change(1, "add", "zz-added-rover"), change(2, "remove", "zz-added-rover"), change(3, "add", "zz-added-rover")])).toEqual(["kestrel-2-ascent/euler/5", "zz-added-rover/euler/5"]);
    expect(keys([change(1, "remove", "kestrel-2-ascent")])).toEqual([]);
  });
});

describe("suite changes in the database", () => {
  const dir = tempDir("suite-db");
  const db = tempDb(dir);
  // the database's uploaded folder is `problems/` beside the database file (models/library.server.ts)
  uploadedCopy(path.join(dir, "problems"), "zz-db-rover", "db-test");
  const root = path.join(dir, "checkout");
  fs.mkdirSync(path.join(root, "bench", "suites"), { recursive: true });
  fs.symlinkSync(path.join(REPO, "problems"), path.join(root, "problems"));
  const file = writeSuite(path.join(root, "bench", "suites"), { name: "small", problems: ["pika-rover-dash"], schemes: ["trapezoidal", "euler"], meshes: [{ intervals: 6 }] });
  const user = { id: 0, name: "Test Engineer", email: "t@arcwatch.test" };

  it("versions per suite, who and when; the effective hash differs from the file's and is stable", () => {
    const before = loadSuiteWithChanges(db, file);
    expect(before.changes).toEqual([]);
    const c1 = recordSuiteChange(db, { suiteName: "small", action: "add", problemId: "zz-db-rover", user, note: "needs coverage" });
    const other = recordSuiteChange(db, { suiteName: "other", action: "add", problemId: "zz-db-rover", user });
    expect([c1.version, other.version]).toEqual([1, 1]);
    expect(c1).toMatchObject({ by: "Test Engineer", note: "needs coverage", action: "add" });
    expect(Math.abs(c1.at - Date.now())).toBeLessThan(60_000);
    const after = loadSuiteWithChanges(db, file);
    expect(after.definition.problems).toEqual(["pika-rover-dash", "zz-db-rover"]);
    expect(after.contentHash).not.toBe(before.contentHash);
    expect(loadSuiteWithChanges(db, file).contentHash).toBe(after.contentHash);
    // the file itself is untouched
    expect(JSON.parse(fs.readFileSync(file, "utf8")).problems).toEqual(["pika-rover-dash"]);
    const views = suitesOfProblem(db, root, "zz-db-rover", new ProblemLibrary([path.join(root, "problems"), path.join(dir, "problems")]));
    expect(views).toEqual([expect.objectContaining({ name: "small", version: 1, membership: expect.objectContaining({ included: true, via: "change" }) })]);
  });

  it("shard plans cover the effective case set and freeze per case set", () => {
    const first = shardPlanForSuite(db, file, 2, null, root);
    expect(first.plan.shards.flat().sort()).toEqual(["pika-rover-dash/euler/6", "pika-rover-dash/trapezoidal/6", "zz-db-rover/euler/6", "zz-db-rover/trapezoidal/6"]);
    expect(shardPlanForSuite(db, file, 2, null, root).plan.reused).toBe(true);
    recordSuiteChange(db, { suiteName: "small", action: "remove", problemId: "zz-db-rover", user });
    const after = shardPlanForSuite(db, file, 2, null, root);
    expect(after.plan.reused).toBe(false);
    expect(after.plan.shards.flat().sort()).toEqual(["pika-rover-dash/euler/6", "pika-rover-dash/trapezoidal/6"]);
  });
});

describe('"Run it now" suite', () => {
  it("is a valid suite of every scheme on two meshes of one problem", () => {
    const def = suiteSchema.parse(problemCheckSuite("pika-rover-dash"));
    expect(def.name).toBe(problemSuiteName("pika-rover-dash"));
    const cases = expandCases(def, new ProblemLibrary([path.join(REPO, "problems")]));
    expect(cases.map((c) => c.key).sort()).toEqual(
      ["euler", "trapezoidal", "hermite-simpson", "rk4-shooting"].flatMap((s) => [10, 20].map((n) => `pika-rover-dash/${s}/${n}`)).concat(["pika-rover-dash/lgr/4x4", "pika-rover-dash/lgr/8x4"]).sort(),
    );
    expect(problemSuiteName("Odd_Name.v2")).toMatch(/^[a-z0-9][a-z0-9-]*$/);
  });
});
