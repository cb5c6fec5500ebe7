/**
 * One recording path: the same two runs stored once by the command line's path (runSuite, which
 * records and detects in this process) and once by upload (their payloads posted to the ingestion
 * model, as POST /api/runs does) give identical regression rows. The pair covers the case where
 * the two paths used to disagree: an arc structure that returns to the problem's reference arcs
 * (pika-rover-dash: "upper|lower", problems/pika-rover-dash/problem.json) is an improvement, which
 * needs the reference arcs, and a speed regression.
 */
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { regressions, runs } from "~/db/schema";
import type { Db } from "~/db/client.server";
import { buildRunPayload } from "~/models/recording.server";
import { ingestRun } from "~/models/runs.server";
import { runSuite } from "../../bench/runner/run-suite";
import { REPO, SIM_EXECUTOR, tempDb, tempDir, writeSuite } from "./helpers";

const KEY_EULER = "pika-rover-dash/euler/6";
const KEY_LGR = "pika-rover-dash/lgr/6x4";

function regressionRows(db: Db) {
  return db
    .select({ caseKey: regressions.caseKey, kind: regressions.kind, direction: regressions.direction, metric: regressions.metric, before: regressions.before, after: regressions.after, ratio: regressions.ratio, pValue: regressions.pValue, ciLow: regressions.ciLow, ciHigh: regressions.ciHigh, status: regressions.status, runId: regressions.runId })
    .from(regressions)
    .all()
    .sort((a, b) => `${a.caseKey}|${a.kind}|${a.metric}`.localeCompare(`${b.caseKey}|${b.kind}|${b.metric}`));
}

describe("the command line and an upload store and judge a run alike", () => {
  it("gives identical regressions for the same runs", async () => {
    const dir = tempDir("one-path");
    const cli = tempDb(dir, "cli.db");
    // One suite name, two files (the head's solver options differ, so its content hash does too;
    // the baseline is found by suite name).
    const suiteIn = (sub: string, work: number, lgrArcs: string) => {
      const folder = path.join(dir, sub);
      fs.mkdirSync(folder);
      return writeSuite(folder, {
        name: "one-path",
        problems: ["pika-rover-dash"],
        schemes: ["euler", "lgr"],
        meshes: [{ intervals: 6 }],
        repeats: 12,
        warmup: 1,
        solver: { kind: "module", module: SIM_EXECUTOR, options: { work, arcs: { [KEY_LGR]: lgrArcs } } },
      });
    };
    // Baseline on main: the LGR case reports a wrong arc structure.
    const base = await runSuite({ suite: suiteIn("base", 20_000, "upper|singular|lower"), db: cli, root: REPO, progress: null, alerts: false });
    cli.update(runs).set({ branch: "main", commitHash: "b".repeat(40) }).where(eq(runs.id, base.runId)).run();
    // The head: three times the work in every case, and the LGR case back at the reference arcs.
    const head = await runSuite({ suite: suiteIn("head", 60_000, "upper|lower"), db: cli, root: REPO, progress: null, alerts: false });
    expect(head.status).toBe("complete");
    expect(head.detection?.baselineRunId).toBe(base.runId);

    const fromCli = regressionRows(cli).filter((r) => r.runId === head.runId);
    // The structure change is judged against the reference arcs: an improvement.
    expect(fromCli.find((r) => r.caseKey === KEY_LGR && r.kind === "structure")).toMatchObject({ direction: "improvement" });

    // The same two runs by upload into a fresh server database.
    const server = tempDb(dir, "server.db");
    for (const runId of [base.runId, head.runId]) {
      const out = ingestRun(server, JSON.stringify(buildRunPayload(cli, runId)));
      expect(out).toMatchObject({ ok: true, created: true, runId });
    }
    expect(regressionRows(server)).toEqual(regressionRows(cli));
    expect(fromCli.some((r) => r.caseKey === KEY_EULER && r.kind === "speed" && r.direction === "regression")).toBe(true);
    for (const d of [cli, server]) d.$client.close();
  }, 120_000);
});
