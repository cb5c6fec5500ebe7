/**
 * Pooled evidence (app/runs/pooled.ts, app/engine/stats/hierarchical-bootstrap.ts) and one
 * regression across consecutive commits of a branch (app/models/detection.server.ts).
 */
import { describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { regressionEvents, regressionMembers, regressions, regressionSightings } from "~/db/schema";
import { pooledShift } from "~/engine/stats/hierarchical-bootstrap";
import { createPrng } from "~/engine/stats/prng";
import { normalQuantile } from "~/engine/stats/normal-quantile";
import { detectRegressions } from "~/models/detection.server";
import { ensureSuite, finishRun, insertCase, insertRun } from "~/models/recording.server";
import { triageRegression } from "~/models/regressions.server";
import { pooledFindings, schemeSuspects } from "~/runs/pooled";
import { caseRecordFromOutcome } from "~/runs/record";
import type { CaseSnapshot } from "~/runs/rules";
import { DEFAULT_THRESHOLDS, loadSuite } from "~/runs/suite";
import { tempDb, tempDir, writeSuite } from "./helpers";

/** Log-normal timing samples with median m and log-spread s (seeded). */
function times(seed: number, n: number, m: number, s = 0.05): number[] {
  const rng = createPrng(seed);
  return Array.from({ length: n }, () => m * Math.exp(s * normalQuantile(Math.min(Math.max(rng.next(), 1e-9), 1 - 1e-9))));
}

const SCHEMES = ["euler", "trapezoidal", "hermite-simpson", "lgr", "rk4-shooting"];
const PROBLEMS = ["p1", "p2", "p3", "p4", "p5"];

/** A 5 × 5 suite run; `slow(scheme)` scales that scheme's timings. */
function suiteRun(seed: number, slow: (scheme: string) => number = () => 1, spread = 0.05): Map<string, CaseSnapshot> {
  const out = new Map<string, CaseSnapshot>();
  let k = 0;
  for (const p of PROBLEMS) {
    for (const s of SCHEMES) {
      const key = `${p}/${s}/20`;
      const m = 0.01 * (1 + PROBLEMS.indexOf(p)) * (1 + 0.3 * SCHEMES.indexOf(s));
      out.set(key, { id: k, caseKey: key, problemId: p, scheme: s, status: "optimal", iterations: 10, objectiveErrorRel: 1e-6, finalTimeError: null, stateError: 1e-5, controlError: 1e-4, medianSeconds: m, arcsJson: null, samples: times(seed * 1000 + k++, 10, m * slow(s), spread) });
    }
  }
  return out;
}

describe("pooled shift (two-stage bootstrap)", () => {
  it("estimates the geometric mean of the cases' median ratios", () => {
    // Case ratios of medians 1.2 and 1.5 (odd sample sizes: the medians are the middle values).
    const s = pooledShift([{ x: [1.2, 1.2, 1.2], y: [1, 1, 1] }, { x: [3, 3, 3], y: [2, 2, 2] }], { replicates: 200 });
    expect(s.ratio).toBeCloseTo(Math.sqrt(1.2 * 1.5), 12);
    expect(s.caseRatios).toEqual([1.2, 1.5]);
    // With no noise inside a case only the case draw varies: the interval spans the two ratios.
    expect(s.low).toBeCloseTo(1.2, 12);
    expect(s.high).toBeCloseTo(1.5, 12);
  });

  it("covers a zero shift at about its level on simulated unchanged groups", () => {
    let excluded = 0;
    const trials = 120;
    for (let i = 0; i < trials; i++) {
      const cases = Array.from({ length: 5 }, (_, c) => ({ x: times(10_000 + 10 * i + c, 10, 0.01 * (c + 1), 0.08), y: times(50_000 + 10 * i + c, 10, 0.01 * (c + 1), 0.08) }));
      const s = pooledShift(cases, { replicates: 400, confidence: 0.9, seed: i + 1 });
      if (s.low > 1 || s.high < 1) excluded++;
    }
    // A 90 % interval should exclude the true ratio in about 10 % of groups; the two-stage
    // bootstrap is known to be conservative (Ren et al. 2010), so allow 0–20 %.
    expect(excluded / trials).toBeLessThanOrEqual(0.2);
  });
});

describe("pooled findings", () => {
  // 500 replicates keep the test quick; the rule itself uses the suite's (default 2000).
  const t = { ...DEFAULT_THRESHOLDS, bootstrapReplicates: 500 };

  it("a 30 % slowdown of every Hermite–Simpson case is one group finding carrying its five cases", () => {
    const f = pooledFindings(suiteRun(2, (s) => (s === "hermite-simpson" ? 1.3 : 1)), suiteRun(1), t);
    expect(f).toHaveLength(1);
    expect(f[0]).toMatchObject({ caseKey: "scheme:hermite-simpson", scope: "scheme", direction: "regression", kind: "speed" });
    expect(f[0]!.ratio).toBeGreaterThan(1.2);
    expect(f[0]!.ratio).toBeLessThan(1.4);
    expect(f[0]!.ciLow).toBeGreaterThan(1);
    expect(f[0]!.members!.map((m) => m.caseKey).sort()).toEqual(PROBLEMS.map((p) => `${p}/hermite-simpson/20`).sort());
    expect(f[0]!.detail).toMatch(/^hermite-simpson, all 5 cases: ×1\.\d\d \[1\.\d\d, 1\.\d\d\]/);
  });

  it("a suite-wide slowdown is one suite finding, not five scheme findings and five problem findings", () => {
    const f = pooledFindings(suiteRun(3, () => 1.25), suiteRun(1), t);
    // Every scheme group is flagged on its own; the suite group is then explained by them.
    expect(f.every((x) => x.scope === "scheme")).toBe(true);
    expect(f).toHaveLength(5);
  });

  it("unchanged reruns raise nothing", () => {
    let alarms = 0;
    for (let k = 0; k < 8; k++) alarms += pooledFindings(suiteRun(100 + k), suiteRun(200 + k), t).length;
    expect(alarms).toBe(0);
  });
});

describe("one regression across consecutive commits of a branch", () => {
  it("folds the same finding on the next commit into the open regression, keeping its triage", async () => {
    const dir = tempDir("carry");
    const db = tempDb(dir);
    const suite = loadSuite(writeSuite(dir, { name: "carry", problems: ["pika-rover-dash"], schemes: ["lgr"], meshes: [{ intervals: 8 }] }));
    const suiteId = ensureSuite(db, { name: "carry", contentHash: suite.contentHash, definition: suite.definition, thresholds: suite.thresholds });
    let clock = Date.parse("2026-01-01T00:00:00Z");
    const add = (commitHash: string, branch: string, median: number, seed: number) => {
      const id = insertRun(db, { suiteId, commitHash, branch, dirty: false, commitSubject: commitHash, commitAuthor: "t", commitDate: null, machine: {}, machineKey: "k", calibrationSeconds: null, startedAt: new Date((clock += 60_000)) });
      insertCase(
        db,
        id,
        caseRecordFromOutcome({
          spec: { key: "pika-rover-dash/lgr/8x4", problemId: "pika-rover-dash", scheme: "lgr", intervals: 8, degree: 4 },
          status: "optimal",
          message: null,
          report: { problemId: "pika-rover-dash", versionHash: "v1", scheme: "lgr", intervals: 8, status: "optimal", objective: 1, finalTime: 1, iterations: 12, constraintViolation: 0, errors: { objectiveAbs: 1e-6, objectiveRel: 1e-6, finalTimeAbs: 0, stateMax: 1e-5, controlMax: 1e-4 } },
          samples: times(seed, 10, median, 0.03),
          wallSeconds: 1,
        }),
        null,
      );
      finishRun(db, id, "complete");
      return id;
    };
    add("m1", "main", 0.1, 1);
    const f1 = add("f1", "feature", 0.15, 2);
    const first = detectRegressions(db, f1, { thresholds: suite.thresholds });
    expect(first.newRegressions).toBe(1);
    const regId = first.inserted[0]!.id;
    // Someone triages it.
    const user = (await import("~/models/users.server")).createUser;
    const u = await user(db, { email: "e@arcwatch.test", name: "E", role: "engineer", password: "carry-over-pass-1" });
    expect(triageRegression(db, regId, u.id, { intent: "expected", reason: "known: new Hessian path" })).toMatchObject({ ok: true });
    // The next commit of the branch is just as slow: no new regression, one more sighting.
    const f2 = add("f2", "feature", 0.15, 3);
    const second = detectRegressions(db, f2, { thresholds: suite.thresholds });
    expect(second.newRegressions).toBe(0);
    expect(second.inserted).toEqual([]);
    expect(second.carried.map((c) => c.id)).toEqual([regId]);
    const row = db.select().from(regressions).where(eq(regressions.id, regId)).get()!;
    expect(row).toMatchObject({ status: "expected", reason: "known: new Hessian path" });
    const seen = db.select().from(regressionSightings).where(eq(regressionSightings.regressionId, regId)).orderBy(regressionSightings.id).all();
    expect(seen.map((s) => s.commitHash)).toEqual(["f1", "f2"]);
    expect(db.select().from(regressionEvents).where(and(eq(regressionEvents.regressionId, regId))).all().some((e) => /^Seen again by run .* at f2 on feature/.test(e.note ?? ""))).toBe(true);
    expect(db.select().from(regressions).all()).toHaveLength(1);
    expect(db.select().from(regressionMembers).all()).toEqual([]);
    db.$client.close();
  });
});

describe("screening for bench --confirm (schemeSuspects)", () => {
  it("names a scheme that moved past the pooled floor, against the baseline or against the run's other schemes", () => {
    const t = { ...DEFAULT_THRESHOLDS, pooledSpeedRatio: 1.05 };
    const base = suiteRun(1);
    // Lgr 8 % slower: below what a finding needs at this spread and size, past the screening floor.
    const lgr = schemeSuspects(suiteRun(2, (s) => (s === "lgr" ? 1.08 : 1)), base, t);
    expect(lgr.map((x) => x.scheme)).toEqual(["lgr"]);
    expect(lgr[0]!.members.map((m) => m.caseKey)).toEqual(PROBLEMS.map((p) => `${p}/lgr/20`));
    expect(lgr[0]!.ratio).toBeGreaterThan(1.05);
    // The whole run 10 % faster, lgr 8 % slower than it: hidden against the baseline, seen against the other schemes.
    const hidden = schemeSuspects(suiteRun(3, (s) => (s === "lgr" ? 0.9 * 1.08 : 0.9)), base, t);
    expect(hidden.map((x) => x.scheme)).toEqual(["lgr"]);
    expect(hidden[0]!.ratio).toBeLessThan(1);
    expect(hidden[0]!.relative!).toBeGreaterThan(1.05);
    // Unchanged: nothing past ×1.05 at a 5 % spread.
    expect(schemeSuspects(suiteRun(4), base, t)).toEqual([]);
  });

  it("detection returns the suspects of a stored run, not the schemes it already found slower", () => {
    const dir = tempDir("screen");
    const db = tempDb(dir);
    const suite = loadSuite(writeSuite(dir, { name: "screen", problems: ["pika-rover-dash"], schemes: ["lgr"], meshes: [{ intervals: 8 }, { intervals: 10 }, { intervals: 12 }] }));
    const suiteId = ensureSuite(db, { name: "screen", contentHash: suite.contentHash, definition: suite.definition, thresholds: suite.thresholds });
    let clock = Date.parse("2026-01-01T00:00:00Z");
    const add = (commitHash: string, factor: number, seed: number) => {
      const id = insertRun(db, { suiteId, commitHash, branch: "main", dirty: false, commitSubject: commitHash, commitAuthor: "t", commitDate: null, machine: {}, machineKey: "k", calibrationSeconds: null, startedAt: new Date((clock += 60_000)) });
      for (const n of [8, 10, 12]) {
        insertCase(
          db,
          id,
          caseRecordFromOutcome({
            spec: { key: `pika-rover-dash/lgr/${n}x4`, problemId: "pika-rover-dash", scheme: "lgr", intervals: n, degree: 4 },
            status: "optimal",
            message: null,
            report: { problemId: "pika-rover-dash", versionHash: "v1", scheme: "lgr", intervals: n, status: "optimal", objective: 1, finalTime: 1, iterations: 12, constraintViolation: 0, errors: { objectiveAbs: 1e-6, objectiveRel: 1e-6, finalTimeAbs: 0, stateMax: 1e-5, controlMax: 1e-4 } },
            samples: times(seed * 10 + n, 10, 0.01 * n * factor, 0.15),
            wallSeconds: 1,
          }),
          null,
        );
      }
      finishRun(db, id, "complete");
      return id;
    };
    add("s0", 1, 1);
    const t = { ...suite.thresholds, pooledSpeedRatio: 1.05 };
    // 12 % slower at a 15 % spread: no finding, a suspect.
    const mild = detectRegressions(db, add("s1", 1.12, 2), { thresholds: t, baseline: { commit: "s0" } });
    expect(mild.findings.filter((f) => f.kind === "speed")).toEqual([]);
    expect(mild.suspects!.map((x) => x.scheme)).toEqual(["lgr"]);
    // Twice as slow: a group finding, so not a suspect any more.
    const big = detectRegressions(db, add("s2", 2, 3), { thresholds: t, baseline: { commit: "s0" } });
    expect(big.findings.some((f) => f.caseKey === "scheme:lgr" && f.direction === "regression")).toBe(true);
    expect(big.suspects).toEqual([]);
    db.$client.close();
  });
});

