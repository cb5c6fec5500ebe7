/**
 * The compare page says when an order cannot be read from the errors (issue 17; verdict rules in
 * app/engine/analysis/convergence-verdict.ts, tested on numbers in tests/schemes/convergence-verdict.test.ts).
 * Stored cases as a run records them (objective, relative objective error, the solver's message
 * with its duality gap) go through compareAt and the page's component:
 *
 * - explicit Euler on tern-orbit-raise, errors 1.07e-4 / 1.65e-4 / 1.09e-4 / 6.1e-5 at N = 30 … 240
 *   (bench/mesh-monotonicity.bench.ts, 2026-12-02), gaps ~2e-11: the page names N = 30
 *   pre-asymptotic and fits from N = 60 (slope 0.72, by hand: least squares through
 *   (ln 60, ln 1.65e-4), (ln 120, ln 1.09e-4), (ln 240, ln 6.1e-5)), not the 0.30 of all four;
 * - an LGR sequence whose finest error rises with a gap as large as the error (the barrier floor
 *   of issue 17 item 1) shows no order and says "not monotone" and "solver possible" (the gap is an upper bound on the solver's part).
 */
import { renderToString } from "react-dom/server";
import { createElement } from "react";
import { MemoryRouter } from "react-router";
import { describe, expect, it } from "vitest";
import { useTempDatabase } from "../helpers/temp-db";

useTempDatabase("verdict-page");
const { getDb } = await import("~/db/client.server");
const { compareAt } = await import("~/models/compare.server");
const { CompareViews } = await import("~/components/compare/CompareViews");

const db = getDb();
const sq = db.$client;
const COMMIT = "abcdef1".padEnd(40, "0");
sq.prepare("insert into suites (name, content_hash, definition_json) values ('mesh', 'h', '{}')").run();
const suiteId = (sq.prepare("select id from suites").get() as { id: number }).id;
sq.prepare("insert into problems (id, title) values ('tern-orbit-raise', 'Tern')").run();
sq.prepare("insert into runs (id, suite_id, commit_hash, branch, dirty, machine_json, machine_key, started_at, status) values ('r1', ?, ?, 'main', 0, '{}', 'm', ?, 'complete')").run(suiteId, COMMIT, Date.now());
const J = 1.3533253136295862; // tern-orbit-raise reference objective (problems/tern-orbit-raise/problem.json)
function kase(scheme: string, N: number, rel: number, gap: number) {
  const message = `optimal: scaled KKT error 1.00e-12 ≤ tol 1e-8, duality gap ${gap.toExponential(2)} ≤ 2.71e-11`;
  sq.prepare("insert into case_results (run_id, problem_id, problem_version_hash, case_key, scheme, intervals, status, objective, objective_error_rel, median_seconds, message) values ('r1', 'tern-orbit-raise', 'v', ?, ?, ?, 'optimal', ?, ?, 0.1, ?)")
    .run(`tern-orbit-raise/${scheme}/${N}`, scheme, N, J * (1 + rel), rel, message);
}
[[30, 1.07e-4], [60, 1.65e-4], [120, 1.09e-4], [240, 6.1e-5]].forEach(([N, e]) => kase("euler", N!, e!, 2e-11));
[[60, 8.4e-7], [120, 1.7e-6], [240, 3.3e-6]].forEach(([N, e]) => kase("lgr", N!, e!, e! * J));

describe("the compare page reads the error sequence before it prints an order", () => {
  const view = compareAt(db, COMMIT.slice(0, 7), { problem: "tern-orbit-raise", tol: 1e-4, metric: "objective", suite: null });
  const html = renderToString(createElement(MemoryRouter, null, createElement(CompareViews, { view, singleProblem: true, metricLabel: "objective error" })));

  it("Euler: N = 30 is pre-asymptotic, order from N = 60, the pattern the discretisation's", () => {
    const euler = view.convergence.find((c) => c.scheme === "euler")!;
    expect(euler.verdict!.kind).toBe("pre-asymptotic");
    expect(euler.fittedOrder!).toBeCloseTo(0.7178, 3);
    expect(euler.verdict!.solverShare!).toBeLessThan(1e-6);
    expect(html).toContain("pre-asymptotic below N = 60 (discretisation; solver share ≤ ");
    expect(html).toMatch(/data-order-scheme="euler" data-fitted="0\.71\d*" data-verdict="pre-asymptotic"/);
  });

  it("LGR with the error growing as the gap: no order, 'not monotone', the solver possible", () => {
    const lgr = view.convergence.find((c) => c.scheme === "lgr")!;
    expect(lgr.fittedOrder).toBeNull();
    expect(lgr.verdict!.cause).toBe("solver");
    expect(html).toMatch(/data-order-scheme="lgr" data-fitted="" data-verdict="not-monotone"/);
    // The gap bounds the solver's part from above: the note says the solver is possible, not proven.
    expect(html).toContain("not monotone: the error at N = 240 is not below N = 120 (solver possible; solver share 1e0, an upper bound on its part)");
  });

  it("the library table marks both", () => {
    const all = compareAt(db, COMMIT.slice(0, 7), { problem: null, tol: 1e-4, metric: "objective", suite: null });
    const page = renderToString(createElement(MemoryRouter, null, createElement(CompareViews, { view: all, singleProblem: false, metricLabel: "objective error" })));
    expect(page).toMatch(/data-verdict="pre-asymptotic"[^>]*>0\.72<span[^>]*>from N = <!-- -->60/);
    expect(page).toMatch(/data-verdict="not-monotone"[^>]*>not monotone<span[^>]*>solver possible</);
  });
});
