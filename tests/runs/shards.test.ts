/**
 * Shard plans: for n = 1 … 8 the shards of the full suite cover every case exactly once and
 * their expected times differ by at most the largest single case (the list-scheduling bound in
 * app/runs/shards.ts); the same holds for random case weights; a frozen plan stays put while the
 * history grows; `--shard k/n` is parsed strictly.
 */
import path from "node:path";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { useTempDatabase } from "../helpers/temp-db";
import { expandCases, loadSuite, suitePath } from "~/runs/suite";
import { ProblemLibrary } from "~/engine/problem/library";
import { meshPoints, parseShard, planShards, type PlanCase, type ShardPlan } from "~/runs/shards";

useTempDatabase("shards");
const ROOT = path.resolve(import.meta.dirname, "..", "..");
const full = loadSuite(suitePath("full", ROOT));
const fullCases: PlanCase[] = expandCases(full.definition, new ProblemLibrary([path.join(ROOT, "problems")]));

function checkPlan(plan: ShardPlan, cases: PlanCase[], n: number) {
  expect(plan.shards).toHaveLength(n);
  const all = plan.shards.flat();
  expect(all).toHaveLength(cases.length);
  expect(new Set(all)).toEqual(new Set(cases.map((c) => c.key)));
  const largest = Math.max(...cases.map((c) => plan.expected[c.key]!));
  // Loads recomputed from the assignment, not taken from the planner.
  const loads = plan.shards.map((keys) => keys.reduce((s, k) => s + plan.expected[k]!, 0));
  expect(Math.max(...loads) - Math.min(...loads)).toBeLessThanOrEqual(largest * (1 + 1e-12));
}

describe("shard plan of the full suite", () => {
  it("has the cases the suite expands to (12 problems × (4 schemes × 2 meshes + LGR × 2))", () => {
    expect(fullCases).toHaveLength(12 * 10);
  });

  for (let n = 1; n <= 8; n++) {
    it(`n = ${n}: every case exactly once, expected times within the largest case (mesh sizes)`, () => {
      checkPlan(planShards(fullCases, n), fullCases, n);
    });
    it(`n = ${n}: the same with history for a third of the cases (seconds)`, () => {
      const history = new Map(fullCases.filter((_, i) => i % 3 === 0).map((c, i) => [c.key, 0.05 + ((i * 37) % 11) * 0.2]));
      const plan = planShards(fullCases, n, history);
      expect(plan.unit).toBe("s");
      checkPlan(plan, fullCases, n);
    });
  }

  it("keeps each shard's cases in suite order and is the same however the cases are listed", () => {
    const a = planShards(fullCases, 5);
    const b = planShards([...fullCases].reverse(), 5);
    for (let i = 0; i < 5; i++) expect(new Set(b.shards[i])).toEqual(new Set(a.shards[i]));
    const order = new Map(fullCases.map((c, i) => [c.key, i]));
    for (const keys of a.shards) expect(keys.map((k) => order.get(k)!)).toEqual([...keys.map((k) => order.get(k)!)].sort((x, y) => x - y));
  });

  it("weighs mesh size as collocation points (LGR 16 × degree 5 = 80, Hermite–Simpson 50 × 2 = 100)", () => {
    expect(meshPoints({ key: "a", scheme: "lgr", intervals: 16, degree: 5 })).toBe(80);
    expect(meshPoints({ key: "b", scheme: "hermite-simpson", intervals: 50 })).toBe(100);
    expect(meshPoints({ key: "c", scheme: "rk4-shooting", intervals: 25 })).toBe(100);
    expect(meshPoints({ key: "d", scheme: "euler", intervals: 25 })).toBe(25);
  });
});

describe("shard plan, random weights", () => {
  it("covers exactly once and stays within the largest case for any weights and n ≤ 8", () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0.001, max: 100, noNaN: true }), { minLength: 1, maxLength: 60 }), fc.integer({ min: 1, max: 8 }), (weights, n) => {
        const cases: PlanCase[] = weights.map((_, i) => ({ key: `p${i}/euler/10`, scheme: "euler", intervals: 10 }));
        const plan = planShards(cases, n, new Map(cases.map((c, i) => [c.key, weights[i]!])));
        checkPlan(plan, cases, n);
      }),
      { numRuns: 300 },
    );
  });

  it("refuses a suite that lists one case twice", () => {
    const c = { key: "x/euler/10", scheme: "euler", intervals: 10 };
    expect(() => planShards([c, c], 2)).toThrow("case x/euler/10 appears twice in the suite");
  });
});

describe("--shard k/n", () => {
  it("parses k/n and refuses anything else with the expected form", () => {
    expect(parseShard("3/8")).toEqual({ index: 3, count: 8 });
    for (const bad of ["0/4", "5/4", "3", "a/b", "1/0", "1/300", "-1/4"]) expect(() => parseShard(bad), bad).toThrow(/--shard must be k\/n/);
  });
});

describe("frozen plans", () => {
  it("reuses the first plan for a suite version and class even after history arrives", async () => {
    const { getDb } = await import("~/db/client.server");
    const { shardPlanFor } = await import("~/models/shard-plans.server");
    const { runs, suites, caseResults, problems } = await import("~/db/schema");
    const db = getDb();
    const req = { suiteContentHash: full.contentHash, cases: fullCases, machineClass: "ci-large", count: 4, solvesPerCase: 11 };
    const first = shardPlanFor(db, req);
    expect(first.reused).toBe(false);
    expect(first.unit).toBe("points");
    // History that would reorder everything if the plan were recomputed.
    const suiteId = db.insert(suites).values({ name: "full", contentHash: full.contentHash, definitionJson: full.definition }).returning().get().id;
    db.insert(runs).values({ id: "r1", suiteId, commitHash: "c".repeat(40), machineJson: {}, machineKey: "k", machineClass: "ci-large", startedAt: new Date(), status: "complete" }).run();
    for (const [i, c] of fullCases.entries()) {
      db.insert(problems).values({ id: c.key.split("/")[0]!, title: "p" }).onConflictDoNothing().run();
      db.insert(caseResults).values({ runId: "r1", problemId: c.key.split("/")[0]!, problemVersionHash: "v", caseKey: c.key, scheme: c.scheme, intervals: c.intervals, status: "optimal", medianSeconds: ((i * 7919) % 97) / 10 + 0.01 }).run();
    }
    const again = shardPlanFor(db, req);
    expect(again.reused).toBe(true);
    expect(again.shards).toEqual(first.shards);
    // Another shard count (or a changed suite) is planned afresh, now from the history in seconds.
    const fresh = shardPlanFor(db, { ...req, count: 3 });
    expect(fresh.reused).toBe(false);
    expect(fresh.unit).toBe("s");
    expect(Object.values(fresh.basis).every((b) => b === "history")).toBe(true);
    checkPlan(fresh, fullCases, 3);
  });
});
