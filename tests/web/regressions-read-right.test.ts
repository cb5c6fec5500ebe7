/**
 * Regressions that read right (issue 15, item 6), each point against the code the pages use:
 * the overview counts the problem library (folders, counted here from the file system), not a
 * table; demo findings carry their demo flag and the list's filter separates them; a finished
 * job says what its run found (counted here from the rows inserted); the Suite-health card
 * explains its colours and its cap; a queued job with an unknown suite or problem is refused with
 * the field, and "Run it now" must use its problem's own suite.
 */
import fs from "node:fs";
import path from "node:path";
import { renderToString } from "react-dom/server";
import { createElement } from "react";
import { MemoryRouter } from "react-router";
import { describe, expect, it } from "vitest";
import { useTempDatabase } from "../helpers/temp-db";

useTempDatabase("read-right");
const ROOT = path.resolve(import.meta.dirname, "..", "..");

const { getDb } = await import("~/db/client.server");
const { overviewCounts } = await import("~/models/overview.server");
const { listRegressions } = await import("~/models/regressions.server");
const { enqueueJob, finishJob, jobView } = await import("~/models/jobs.server");
const { OverviewPanels } = await import("~/components/charts/OverviewState");
const { checkBenchJob } = await import("~/services/job-check.server");
const { problemSuiteName } = await import("~/runs/suite-changes");

const db = getDb();
const sq = db.$client;
sq.prepare("insert into suites (name, content_hash, definition_json) values ('quick', 'h', '{}')").run();
const suiteId = (sq.prepare("select id from suites").get() as { id: number }).id;
sq.prepare("insert into problems (id, title) values ('pika-rover-dash', 'Pika')").run();
function run(id: string, demo: boolean, jobId: number | null = null) {
  sq.prepare("insert into runs (id, suite_id, commit_hash, branch, dirty, machine_json, machine_key, started_at, status, is_demo, job_id) values (?, ?, ?, 'main', 0, '{}', 'm', ?, 'complete', ?, ?)").run(id, suiteId, id.padEnd(40, "0").slice(0, 40), Date.now(), demo ? 1 : 0, jobId);
}
function kase(runId: string, key: string, status: string) {
  sq.prepare("insert into case_results (run_id, problem_id, problem_version_hash, case_key, scheme, intervals, status) values (?, 'pika-rover-dash', 'v', ?, 'euler', 10, ?)").run(runId, key, status);
}
function finding(runId: string, direction: "regression" | "improvement") {
  sq.prepare("insert into regressions (run_id, case_key, kind, direction, metric, before, after, ratio) values (?, 'pika-rover-dash/euler/10', 'speed', ?, 'median_seconds', 1, 2, 2)").run(runId, direction);
}

describe("regressions that read right", () => {
  it("the overview's Reference problems is the library's folder count, not the problems table", () => {
    const folders = fs.readdirSync(path.join(ROOT, "problems")).filter((d) => fs.existsSync(path.join(ROOT, "problems", d, "problem.json")));
    expect(folders.length).toBe(12);
    expect((sq.prepare("select count(*) n from problems").get() as { n: number }).n).toBe(1);
    expect(overviewCounts(db).problems).toBe(folders.length);
  });

  it("demo findings carry the demo flag; the filter shows them alone or hides them", () => {
    run("aaaaaaaa", true);
    run("bbbbbbbb", false);
    finding("aaaaaaaa", "regression");
    finding("bbbbbbbb", "regression");
    const all = listRegressions(db, { demo: "all" } as never);
    expect(all.map((r) => r.isDemo).sort()).toEqual([false, true]);
    expect(listRegressions(db, { demo: "only" } as never).map((r) => r.runId)).toEqual(["aaaaaaaa"]);
    expect(listRegressions(db, { demo: "hide" } as never).map((r) => r.runId)).toEqual(["bbbbbbbb"]);
  });

  it("a finished job says what its run found", () => {
    const job = enqueueJob(db, { kind: "bench", payload: { suite: "quick" } }, null);
    run("cccccccc", false, job.id);
    kase("cccccccc", "pika-rover-dash/euler/10", "optimal");
    kase("cccccccc", "pika-rover-dash/euler/20", "optimal");
    kase("cccccccc", "pika-rover-dash/trapezoidal/10", "infeasible");
    finding("cccccccc", "regression");
    finding("cccccccc", "improvement");
    finding("cccccccc", "improvement");
    expect(jobView(db, job.id)!.found).toBeNull(); // still queued: nothing to say yet
    finishJob(db, job.id, "done", null);
    expect(jobView(db, job.id)!.found).toEqual({ cases: 3, solved: 2, regressions: 1, improvements: 2 });
  });

  it("the Suite-health card says what its bars, colours and cap mean", () => {
    const html = renderToString(
      createElement(MemoryRouter, null, createElement(OverviewPanels, { state: { branches: [], openByKind: [], healthBranch: "main", inProgress: [], health: [{ runId: "r1", commitHash: "c".repeat(40), startedAt: 0, cases: 4, solved: 3, regressions: 1 }] } })),
    );
    const legend = /data-testid="health-legend"[^>]*>([\s\S]*?)<\/p>/.exec(html)?.[1]?.replace(/<[^>]+>/g, "") ?? "";
    expect(legend).toMatch(/One bar per run, oldest on the left\. Height and colour: share of cases solved/);
    expect(legend).toMatch(/all.*half.*none/);
    expect(legend).toMatch(/cap: the run found a regression/);
  });

  it("a job with an unknown suite or problem is refused with the field; Run it now uses its problem's suite", async () => {
    expect(await checkBenchJob({ suite: "no-such-suite" }, ROOT)).toMatchObject({ ok: false, field: "suite", message: expect.stringMatching(/has no suite "no-such-suite" \(it has: full, quick\)/) });
    expect(await checkBenchJob({ suite: problemSuiteName("no-such-problem"), problem: "no-such-problem" }, ROOT)).toMatchObject({ ok: false, field: "problem" });
    expect(await checkBenchJob({ suite: "quick", problem: "pika-rover-dash" }, ROOT)).toMatchObject({ ok: false, field: "suite", message: expect.stringMatching(/uses the suite "problem-pika-rover-dash"/) });
    expect(await checkBenchJob({ suite: problemSuiteName("pika-rover-dash"), problem: "pika-rover-dash" }, ROOT)).toMatchObject({ ok: true, payload: { commit: expect.stringMatching(/^[0-9a-f]{40}$/) } });
  });
});
