/**
 * Refined (adaptive) cases in suites, recording and regression detection:
 *   - a suite mesh with `tolerances` expands to one case per tolerance (key suffix `@ε`);
 *   - the built-in engine runs it with solveAdaptive; the one recording path stores the estimate,
 *     the tolerance, passes, final points and whether ε was met; the case page model reads them back;
 *     the upload payload carries them and another database stores the same row;
 *   - the refinement rules flag "no longer met", more passes and more points, and their reverses.
 */
import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { caseResults } from "~/db/schema";
import { expandCases, DEFAULT_THRESHOLDS, type SuiteFile } from "~/runs/suite";
import { refinementFindings, compareCases, type CaseSnapshot } from "~/runs/rules";
import { buildRunPayload, storeRunPayload } from "~/models/recording.server";
import { getCaseMesh } from "~/models/mesh.server";
import { refinementCostForRuns } from "~/models/refinement-cost.server";
import { runPayloadSchema } from "~/runs/payload";
import { runSuite } from "../../bench/runner/run-suite";
import { REPO, tempDb, tempDir, writeSuite } from "../runner/helpers";

describe("suite meshes with tolerances", () => {
  it("expand to one adaptive case per tolerance", () => {
    const suite = { name: "x", problems: ["pika-rover-dash"], schemes: ["trapezoidal", "lgr"], meshes: [{ intervals: 10 }, { intervals: 5, tolerances: [1e-6, 1e-8] }], exclude: [] } as unknown as SuiteFile;
    const cases = expandCases(suite, { label: "test", tagsById: () => new Map([["pika-rover-dash", []]]) });
    expect(cases.map((c) => c.key)).toEqual([
      "pika-rover-dash/trapezoidal/10",
      "pika-rover-dash/trapezoidal/5@1e-6",
      "pika-rover-dash/trapezoidal/5@1e-8",
      "pika-rover-dash/lgr/10x4",
      "pika-rover-dash/lgr/5x4@1e-6",
      "pika-rover-dash/lgr/5x4@1e-8",
    ]);
    expect(cases[1]).toMatchObject({ intervals: 5, tolerance: 1e-6 });
  });
});

const snap = (over: Partial<CaseSnapshot>): CaseSnapshot => ({
  id: 1, caseKey: "p/trapezoidal/10@1e-6", problemId: "p", status: "optimal", iterations: 30, objectiveErrorRel: null, finalTimeError: null,
  stateError: null, controlError: null, medianSeconds: null, arcsJson: null, samples: [], meshTolerance: 1e-6, meshPasses: 3, meshPoints: 100, meshToleranceMet: true, ...over,
});

describe("refinement regression rules", () => {
  const t = DEFAULT_THRESHOLDS;
  it("tolerance no longer met is a regression, met again an improvement", () => {
    const f = refinementFindings("k", snap({ meshToleranceMet: false, meshPasses: 10 }), snap({}), t);
    expect(f).toHaveLength(1);
    expect(f[0]).toMatchObject({ kind: "robustness", direction: "regression", metric: "mesh_tolerance_met", before: 1, after: 0 });
    expect(refinementFindings("k", snap({}), snap({ meshToleranceMet: false }), t)[0]).toMatchObject({ direction: "improvement", metric: "mesh_tolerance_met" });
  });
  it("more passes, and points up by more than 25 % and at least 3, are regressions", () => {
    const f = refinementFindings("k", snap({ meshPasses: 4, meshPoints: 126 }), snap({}), t);
    expect(f.map((x) => [x.metric, x.direction])).toEqual([["mesh_passes", "regression"], ["mesh_points", "regression"]]);
    expect(refinementFindings("k", snap({ meshPoints: 125 }), snap({}), t)).toEqual([]);
    expect(refinementFindings("k", snap({ meshPasses: 2, meshPoints: 60 }), snap({}), t).map((x) => x.direction)).toEqual(["improvement", "improvement"]);
  });
  it("uniform cases are left alone; a case that stopped solving is the status rule's only", () => {
    expect(refinementFindings("k", snap({ meshTolerance: null, meshPasses: 9 }), snap({ meshTolerance: null }), t)).toEqual([]);
    const f = compareCases(new Map([["k", snap({ status: "iteration_limit", meshToleranceMet: false })]]), new Map([["k", snap({})]]), t);
    expect(f.map((x) => x.metric)).toEqual(["status"]);
  });
});

describe("a refined case through the runner, the recording path and the upload payload", () => {
  it("stores the estimate, tolerance, passes and points; reads and re-uploads them", async () => {
    const dir = tempDir("mesh-run");
    const db = tempDb(dir, "a.db");
    const suite = writeSuite(dir, { name: "refined", problems: ["pika-rover-dash"], schemes: ["trapezoidal"], meshes: [{ intervals: 15, tolerances: [1e-5] }, { intervals: 15 }], repeats: 1, warmup: 0 });
    const s = await runSuite({ suite, db, root: REPO, progress: null, alerts: false });
    const rows = db.select().from(caseResults).where(eq(caseResults.runId, s.runId)).all();
    const refined = rows.find((r) => r.caseKey === "pika-rover-dash/trapezoidal/15@1e-5")!;
    const uniform = rows.find((r) => r.caseKey === "pika-rover-dash/trapezoidal/15")!;
    expect(refined.status).toBe("optimal");
    expect(refined.meshTolerance).toBe(1e-5);
    expect(refined.meshToleranceMet).toBe(true);
    expect(refined.meshPasses).toBeGreaterThan(1);
    expect(refined.meshErrorMax!).toBeLessThanOrEqual(1e-5);
    // intervals stays the first mesh's (the key's); the final mesh has more points than its 16
    expect(refined.intervals).toBe(15);
    expect(refined.meshPoints!).toBeGreaterThan(16);
    // the uniform case keeps its estimate (above ε at 15 intervals: the switch is inside an interval) and its points
    expect(uniform.meshTolerance).toBeNull();
    expect(uniform.meshPoints).toBe(16);
    expect(uniform.meshErrorMax!).toBeGreaterThan(1e-5);

    const mesh = getCaseMesh(db, refined.id)!;
    expect(mesh.met).toBe(true);
    expect(mesh.passes!.length).toBe(refined.meshPasses);
    expect(mesh.error!.length + 1).toBe(mesh.t!.length);
    expect(Math.max(...mesh.error!)).toBeCloseTo(refined.meshErrorMax!, 15);
    expect(mesh.passes![mesh.passes!.length - 1]!.points).toBe(refined.meshPoints);

    const cost = refinementCostForRuns(db, [s.runId], null, ["trapezoidal"]);
    expect(cost).toEqual([expect.objectContaining({ scheme: "trapezoidal", tolerance: 1e-5, cases: 1, met: 1, medianPoints: refined.meshPoints, medianPasses: refined.meshPasses })]);

    const payload = JSON.parse(JSON.stringify(buildRunPayload(db, s.runId)));
    expect(runPayloadSchema.safeParse(payload).success).toBe(true);
    const b = tempDb(dir, "b.db");
    storeRunPayload(b, payload);
    const rb = b.select().from(caseResults).where(eq(caseResults.caseKey, refined.caseKey)).get()!;
    for (const k of ["meshErrorMax", "meshErrorJson", "meshTolerance", "meshPasses", "meshPoints", "meshToleranceMet", "refinementJson"] as const) expect(rb[k]).toEqual(refined[k]);
  });
});
