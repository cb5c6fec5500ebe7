import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { regressionEvents, regressions } from "~/db/schema";
import { compareCases } from "~/runs/rules";
import { detectRegressions, findBaseline } from "~/models/detection.server";
import { ensureSuite, finishRun, insertCase, insertRun } from "~/models/recording.server";
import { caseRecordFromOutcome } from "~/runs/record";
import { DEFAULT_THRESHOLDS, loadSuite } from "~/runs/suite";
import { createPrng } from "~/engine/stats/prng";
import { normalQuantile } from "~/engine/stats/normal-quantile";
import type { CaseOutcome } from "~/runs/types";
import { tempDb, tempDir, writeSuite } from "./helpers";

/** Log-normal timing samples with median m and log-spread s (seeded). */
function times(seed: number, n: number, m: number, s = 0.05): number[] {
  const rng = createPrng(seed);
  return Array.from({ length: n }, () => m * Math.exp(s * normalQuantile(Math.min(Math.max(rng.next(), 1e-9), 1 - 1e-9))));
}

const row = (over: Partial<Parameters<typeof compareCases>[0] extends Map<string, infer R> ? R : never> = {}) => ({
  id: 1,
  caseKey: "p/lgr/8x4",
  problemId: "p",
  status: "optimal",
  iterations: 20,
  objectiveErrorRel: 1e-6,
  finalTimeError: 1e-5,
  stateError: 1e-4,
  controlError: 1e-3,
  medianSeconds: 0.1,
  arcsJson: null as unknown,
  samples: times(1, 10, 0.1),
  ...over,
});
const one = (r: ReturnType<typeof row>) => new Map([[r.caseKey, r]]);
const T = DEFAULT_THRESHOLDS;

describe("regression rules", () => {
  it("flags a 30 % slowdown with its evidence, and its mirror as an improvement", () => {
    const base = row({ samples: times(1, 10, 0.1) });
    const slow = row({ samples: times(2, 10, 0.13) });
    const f = compareCases(one(slow), one(base), T);
    expect(f).toHaveLength(1);
    expect(f[0]).toMatchObject({ kind: "speed", direction: "regression", metric: "median_seconds" });
    expect(f[0].ratio).toBeGreaterThan(1.2);
    expect(f[0].pValue).toBeLessThan(0.01);
    expect(f[0].ciLow).toBeGreaterThan(1);
    const fast = compareCases(one(base), one(slow), T);
    expect(fast[0]).toMatchObject({ kind: "speed", direction: "improvement" });
  });

  it("does not flag the same distribution, and flags a 30 % slowdown on raw times", () => {
    let alarms = 0;
    for (let s = 0; s < 200; s++) {
      const f = compareCases(one(row({ samples: times(1000 + s, 10, 0.1, 0.08) })), one(row({ samples: times(5000 + s, 10, 0.1, 0.08) })), T);
      if (f.length) alarms++;
    }
    // Both a 10 % median ratio and significance are needed; measured 0 of 200 here.
    expect(alarms).toBeLessThanOrEqual(2);
    // Times are compared raw (no calibration factor: measured to add noise, DEVELOPERS.md, Decisions).
    expect(compareCases(one(row({ samples: times(3, 10, 0.13) })), one(row({ samples: times(4, 10, 0.1) })), T)).toHaveLength(1);
  });

  it("accuracy: growth by more than the factor above the floor; floor suppresses noise-level errors", () => {
    const f = compareCases(one(row({ stateError: 5e-4 })), one(row({ stateError: 1e-4 })), T);
    expect(f).toHaveLength(1);
    expect(f[0]).toMatchObject({ kind: "accuracy", direction: "regression", metric: "state_error", before: 1e-4, after: 5e-4 });
    expect(f[0].ratio).toBeCloseTo(5, 12);
    expect(compareCases(one(row({ stateError: 1.5e-4 })), one(row({ stateError: 1e-4 })), T)).toEqual([]);
    expect(compareCases(one(row({ objectiveErrorRel: 5e-10 })), one(row({ objectiveErrorRel: 1e-12 })), T)).toEqual([]);
    expect(compareCases(one(row({ controlError: 1e-4 })), one(row({ controlError: 1e-3 })), T)[0]).toMatchObject({ direction: "improvement" });
  });

  it("robustness: solved → failed, iterations up by more than the share", () => {
    expect(compareCases(one(row({ status: "max_iterations" })), one(row()), T)).toMatchObject([{ kind: "robustness", direction: "regression", metric: "status" }]);
    expect(compareCases(one(row()), one(row({ status: "timeout" })), T)).toMatchObject([{ kind: "robustness", direction: "improvement" }]);
    expect(compareCases(one(row({ iterations: 26 })), one(row()), T)).toMatchObject([{ kind: "robustness", metric: "iterations", before: 20, after: 26 }]);
    expect(compareCases(one(row({ iterations: 24 })), one(row()), T)).toEqual([]);
  });

  it("structure: a changed arc signature; back to the reference is an improvement", () => {
    const ref = new Map([["p", "upper|singular|lower"]]);
    const good = row({ arcsJson: { signature: "upper|singular|lower" } });
    const bad = row({ arcsJson: { signature: "upper|lower" } });
    expect(compareCases(one(bad), one(good), T, ref)).toMatchObject([{ kind: "structure", direction: "regression" }]);
    expect(compareCases(one(good), one(bad), T, ref)).toMatchObject([{ kind: "structure", direction: "improvement" }]);
  });
});

describe("baselines, drift and de-duplication in the database", () => {
  const dir = tempDir("detect");
  const db = tempDb(dir);
  const suite = loadSuite(writeSuite(dir, { name: "hist", problems: ["pika-rover-dash"], schemes: ["lgr"], meshes: [{ intervals: 8 }] }));
  const suiteId = ensureSuite(db, { name: suite.definition.name, contentHash: suite.contentHash, definition: suite.definition, thresholds: suite.thresholds });
  const machine = { cpuModel: "test", cores: 2, memoryGb: 1, platform: "linux", release: "x", arch: "x64", node: "20.0.0" };
  let clock = Date.parse("2026-01-01T00:00:00Z");
  const addRun = (commitHash: string, median: number, branch = "main", seed = 1) => {
    const id = insertRun(db, {
      suiteId,
      commitHash,
      branch,
      dirty: false,
      commitSubject: `commit ${commitHash}`,
      commitAuthor: "t",
      commitDate: new Date(clock),
      machine: { ...machine, calibration: { before: 0.01, after: 0.01 } },
      machineKey: "k1",
      calibrationSeconds: 0.01,
      startedAt: new Date((clock += 60_000)),
    });
    const outcome: CaseOutcome = {
      spec: { key: "pika-rover-dash/lgr/8x4", problemId: "pika-rover-dash", scheme: "lgr", intervals: 8, degree: 4 },
      status: "optimal",
      message: null,
      report: { problemId: "pika-rover-dash", versionHash: "v1", scheme: "lgr", intervals: 8, status: "optimal", objective: 1, finalTime: 1, iterations: 12, constraintViolation: 0, errors: { objectiveAbs: 1e-6, objectiveRel: 1e-6, finalTimeAbs: 0, stateMax: 1e-5, controlMax: 1e-4 } },
      samples: times(seed, 8, median, 0.03),
      wallSeconds: 1,
    };
    insertCase(db, id, caseRecordFromOutcome(outcome), null);
    finishRun(db, id, "complete");
    return id;
  };

  it("finds the latest complete main run of the suite on the machine, or the named commit", () => {
    const r1 = addRun("c1", 0.1);
    const r2 = addRun("c2", 0.1, "feature");
    expect(findBaseline(db, { runId: r2, suiteName: "hist", machineKey: "k1" })?.id).toBe(r1);
    expect(findBaseline(db, { runId: r2, suiteName: "hist", machineKey: "other" })).toBeNull();
    expect(findBaseline(db, { runId: "x", suiteName: "hist", machineKey: "k1", commit: "c2" })?.id).toBe(r2);
    expect(findBaseline(db, { runId: "x", suiteName: "hist", machineKey: "k1", branch: "feature" })?.id).toBe(r2);
  });

  it("a slow creep of 4 % per commit is caught as drift once, not by the pairwise rule", () => {
    const ids: string[] = [];
    let m = 0.1;
    for (let k = 0; k < 6; k++) ids.push(addRun(`flat${k}`, 0.1, "main", 100 + k));
    const drifts: number[] = [];
    const found: { detail: string }[] = [];
    for (let k = 0; k < 6; k++) {
      m *= 1.04;
      const id = addRun(`creep${k}`, m, "main", 200 + k);
      ids.push(id);
      const d = detectRegressions(db, id, { thresholds: suite.thresholds });
      expect(d.findings.filter((f) => f.kind === "speed")).toEqual([]);
      drifts.push(d.inserted.filter((i) => i.finding.kind === "drift").length);
      found.push(...d.inserted.filter((i) => i.finding.kind === "drift").map((i) => i.finding));
    }
    // Exactly one drift row over the creep, none afterwards.
    expect(drifts.reduce((a, b) => a + b, 0)).toBe(1);
    const rows = db.select().from(regressions).where(eq(regressions.kind, "drift")).all();
    expect(rows).toHaveLength(1);
    expect(rows[0].ratio).toBeGreaterThan(1.1);
    // Its baseline is its own: the last run before the change point (its A/B compares that commit),
    // a run of the flat stretch or of the creep before the step, never the flagged run itself.
    // The last segment holds K ≥ 2 runs (PELT's shortest segment), so the pairwise baseline, the
    // run just before, is a run of the segment itself.
    const k = Number(/change point (\d+) run\(s\) ago/.exec(found[0]!.detail)![1]);
    expect(k).toBeGreaterThanOrEqual(2);
    expect(rows[0].baselineRunId).toBe(ids[ids.indexOf(rows[0].runId) - k]);
  });

  it("a rerun of the same commit does not re-insert a known regression", () => {
    const base = addRun("d0", 0.1, "main", 300);
    const bad1 = addRun("d1", 0.15, "feature", 301);
    const first = detectRegressions(db, bad1, { thresholds: suite.thresholds, baseline: { commit: "d0" } });
    expect(first.newRegressions).toBe(1);
    const bad2 = addRun("d1", 0.15, "feature", 302);
    const second = detectRegressions(db, bad2, { thresholds: suite.thresholds, baseline: { commit: "d0" } });
    expect(second.findings.some((f) => f.kind === "speed")).toBe(true);
    expect(second.newRegressions).toBe(0);
    expect(base).toBeTruthy();
    // The evidence is kept in words as the regression's first event.
    const id = first.inserted[0].id;
    const ev = db.select().from(regressionEvents).where(eq(regressionEvents.regressionId, id)).all();
    expect(ev).toHaveLength(1);
    expect(ev[0].note).toMatch(/^Found by run .* at d1: median .* Mann–Whitney p = /);
    // A later commit back at the old speed resolves it.
    const good = addRun("d2", 0.1, "feature", 303);
    const third = detectRegressions(db, good, { thresholds: suite.thresholds, baseline: { commit: "d1" } });
    expect(third.findings.some((f) => f.kind === "speed" && f.direction === "improvement")).toBe(true);
    expect(third.fixed).toContain(id);
    const row = db.select().from(regressions).where(eq(regressions.id, id)).get()!;
    expect(row.status).toBe("fixed");
    expect(row.fixingCommit).toBe("d2");
  });
});
