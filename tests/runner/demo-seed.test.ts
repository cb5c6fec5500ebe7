/**
 * The demo history tells one story: the planted accuracy regression changes the numbers it claims.
 * A real run of a four-case suite on pika-rover-dash, then the demo history (scripts/demo-seed.ts).
 * Checked against values from outside the code under test: the reference objective and trajectory
 * of problems/pika-rover-dash (analytic: t_f = 2√(D/umax), bang–bang with one switch), read here
 * from the files, and the stored trajectories themselves:
 * - the flagged case's objective differs from the baseline's, its stored objective error is
 *   |J − J_ref| of its stored objective, and it is 40 times the baseline's;
 * - its stored trajectory differs from the baseline's, and its stored state error is the largest
 *   scaled distance of that trajectory (linearly interpolated) from the reference's grid;
 * - the regression row's before/after are the two stored errors; every demo run is marked demo.
 */
import fs from "node:fs";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { caseResults, regressions, runs } from "~/db/schema";
import { ACCURACY_FACTOR, seedDemoResults } from "../../scripts/demo-seed";
import { REPO, tempDb, tempDir, writeSuite } from "./helpers";

const PROBLEM = JSON.parse(fs.readFileSync(path.join(REPO, "problems/pika-rover-dash/problem.json"), "utf8"));
const J_REF: number = PROBLEM.reference.objective.value;
const [HEADER, ...LINES] = fs.readFileSync(path.join(REPO, "problems/pika-rover-dash/reference.csv"), "utf8").trim().split("\n");
const COLS = HEADER!.split(",");
const REF = Object.fromEntries(COLS.map((c, j) => [c, LINES.map((l) => Number(l.split(",")[j]))])) as Record<string, number[]>;

function lerp(xs: number[], ys: number[], x: number): number {
  if (x <= xs[0]!) return ys[0]!;
  if (x >= xs[xs.length - 1]!) return ys[ys.length - 1]!;
  let i = 1;
  while (xs[i]! < x) i++;
  const w = (x - xs[i - 1]!) / (xs[i]! - xs[i - 1]!);
  return ys[i - 1]! + w * (ys[i]! - ys[i - 1]!);
}

/** max over the reference grid and states of |x(t) − x_ref| / scale, t mapped onto the solution's horizon. */
function stateDistance(tr: { t: number[]; states: Record<string, number[]> }): number {
  const rt = REF.t!;
  const T = tr.t[tr.t.length - 1]! - tr.t[0]!;
  let m = 0;
  for (const s of PROBLEM.states as { name: string; scale: number }[]) {
    for (let k = 0; k < rt.length; k++) {
      const t = tr.t[0]! + ((rt[k]! - rt[0]!) / (rt[rt.length - 1]! - rt[0]!)) * T;
      m = Math.max(m, Math.abs(lerp(tr.t, tr.states[s.name]!, t) - REF[s.name]![k]!) / s.scale);
    }
  }
  return m;
}

describe("demo history", () => {
  it("the planted accuracy regression changes objective, trajectory and errors together", { timeout: 300_000 }, async () => {
    const dir = tempDir("demo-seed");
    const db = tempDb(dir);
    const suite = writeSuite(dir, {
      name: "demo-test",
      problems: ["pika-rover-dash"],
      schemes: ["trapezoidal", "hermite-simpson", "euler", "rk4-shooting"],
      meshes: [{ intervals: 20 }],
      repeats: 3,
      warmup: 0,
      jobs: 1,
      clock: "cpu",
    });
    const out = await seedDemoResults(db, { root: REPO, suite, progress: null });
    expect(out.demoRunIds).toHaveLength(12);
    const demo = db.select().from(runs).where(eq(runs.isDemo, true)).all();
    expect(demo).toHaveLength(12);
    expect(demo.every((r) => r.commitSubject?.startsWith("Demo:") && (r.machineJson as { demo?: boolean }).demo === true)).toBe(true);

    const acc = db.select().from(regressions).where(and(eq(regressions.kind, "accuracy"), eq(regressions.direction, "regression"))).all();
    expect(acc.length).toBeGreaterThanOrEqual(1);
    const r = acc[0]!;
    const side = (runId: string) => db.select().from(caseResults).where(and(eq(caseResults.runId, runId), eq(caseResults.caseKey, r.caseKey))).get()!;
    const before = side(r.baselineRunId!);
    const after = side(r.runId);

    // objective: different, its error is what it says, ×40
    expect(after.objective).not.toBe(before.objective);
    for (const c of [before, after]) {
      expect(c.objectiveErrorAbs).toBeCloseTo(Math.abs(c.objective! - J_REF), 12);
      expect(c.objectiveErrorRel).toBeCloseTo(Math.abs(c.objective! - J_REF) / Math.abs(J_REF), 12);
    }
    expect(after.objectiveErrorAbs! / before.objectiveErrorAbs!).toBeCloseTo(ACCURACY_FACTOR, 6);

    // trajectory: different, and the stored state error is its distance from the reference
    const tb = before.trajectoryJson as { t: number[]; states: Record<string, number[]> };
    const ta = after.trajectoryJson as { t: number[]; states: Record<string, number[]> };
    const moved = Math.max(...Object.keys(ta.states).flatMap((s) => ta.states[s]!.map((v, i) => Math.abs(v - tb.states[s]![i]!))));
    expect(moved).toBeGreaterThan(1e-6);
    expect(after.stateError!).toBeCloseTo(stateDistance(ta), 10);
    expect(before.stateError!).toBeCloseTo(stateDistance(tb), 10);
    expect(after.stateError! / before.stateError!).toBeGreaterThan(10);

    // the regression row reports the stored numbers of its metric
    const stored = (c: typeof before) => (r.metric === "state_error" ? c.stateError : r.metric === "objective_error_rel" ? c.objectiveErrorRel : c.controlError);
    expect(r.before).toBeCloseTo(stored(before)!, 12);
    expect(r.after).toBeCloseTo(stored(after)!, 12);
  });
});
