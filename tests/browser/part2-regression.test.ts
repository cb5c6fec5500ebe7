/**
 * In Debian's chromium against the built app: a real slowed commit in a temporary git repository
 * (every solve done four times, so that a busy shared machine cannot hide it) is measured by the runner into the server's database; the engineer
 * opens the flagged regression, sees before/after, timing samples, trajectories and the commit
 * between baseline and flagged commit with its changed files and diff summary, marks it expected
 * with a reason and finds the change in the history with who made it. Screenshots go to
 * tests/screenshots/.
 */
import { execFileSync } from "node:child_process";
import { runBenchJson } from "../helpers/bench-cli";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot } from "../helpers/browser";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";

const COPY = ["app", "bench", "problems", "drizzle", "tsconfig.json", "package.json"];
const GIT_ENV = { ...process.env, GIT_AUTHOR_NAME: "Wren Halloran", GIT_AUTHOR_EMAIL: "wren@example.com", GIT_COMMITTER_NAME: "Wren Halloran", GIT_COMMITTER_EMAIL: "wren@example.com" };
const git = (cwd: string, ...args: string[]) => execFileSync("git", args, { cwd, encoding: "utf8", env: GIT_ENV }).trim();

const bench = (cwd: string, db: string) => runBenchJson<{ runId: string; findings: { kind: string; direction: string; caseKey: string }[] }>(cwd, "slowdown", db);

const run = chromiumAvailable();

describe.runIf(run)("inspecting and triaging a regression in the browser", () => {
  let server: RunningServer;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;
  let repo = "";
  let slowHash = "";

  beforeAll(async () => {
    repo = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-part2-repo-"));
    for (const p of COPY) fs.cpSync(path.join(ROOT, p), path.join(repo, p), { recursive: true });
    fs.symlinkSync(path.join(ROOT, "node_modules"), path.join(repo, "node_modules"), "dir");
    fs.writeFileSync(path.join(repo, ".gitignore"), "node_modules\n*.db*\n");
    fs.writeFileSync(
      path.join(repo, "bench/suites/slowdown.json"),
      JSON.stringify({
        format: "arcwatch-suite/1",
        name: "slowdown",
        description: "One case, timed often enough for a rank test to see a doubling.",
        problems: ["pika-rover-dash"],
        schemes: ["hermite-simpson"],
        meshes: [{ intervals: 12 }],
        repeats: 12,
        warmup: 2,
        timeBudgetSeconds: 60,
        jobs: 1,
        clock: "cpu",
      }),
    );
    git(repo, "init", "-q", "-b", "main");
    git(repo, "add", "-A");
    git(repo, "commit", "-q", "-m", "Baseline");
    server = await startTestServer({ env: { ARCWATCH_REPO: repo } });
    const first = await bench(repo, server.dbFile);
    expect(first.code).toBe(0);
    const solve = path.join(repo, "app/engine/solve.ts");
    const src = fs.readFileSync(solve, "utf8");
    fs.writeFileSync(
      solve,
      src.replace("export function solveProblem(", "function solveProblemOnce(") +
        "\nexport function solveProblem(...args: Parameters<typeof solveProblemOnce>): SolveReport {\n  for (let k = 0; k < 3; k++) solveProblemOnce(...args);\n  return solveProblemOnce(...args);\n}\n",
    );
    git(repo, "commit", "-q", "-am", "Solve every case four times");
    slowHash = git(repo, "rev-parse", "HEAD");
    const slow = await bench(repo, server.dbFile);
    expect(slow.json.findings.some((f) => f.kind === "speed" && f.direction === "regression")).toBe(true);

    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
    await page.goto(`${server.url}/signin`);
    await hydrated(page);
    await page.fill("input[name=email]", "engineer@arcwatch.test");
    await page.fill("input[name=password]", "engineer-demo-pass");
    await Promise.all([page.waitForURL(`${server.url}/`), page.click("button[type=submit]")]);
  }, 300_000);

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
    if (repo) fs.rmSync(repo, { recursive: true, force: true });
  });

  it("shows the evidence and the commit between, and keeps a history of the triage", { timeout: 90_000 }, async () => {
    await page.goto(`${server.url}/regressions?kind=speed&direction=regression`);
    await hydrated(page);
    const link = page.locator("[data-regression-row] a").first();
    expect(await link.textContent()).toBe("pika-rover-dash/hermite-simpson/12");
    await Promise.all([page.waitForURL(/\/regressions\/\d+$/), link.click()]);
    await hydrated(page);
    expect(Number(await page.textContent("[data-testid=ratio]"))).toBeGreaterThan(1.2);
    await page.waitForSelector("[data-testid=timing-samples] circle[data-series=after]");
    expect(await page.locator("[data-testid=timing-samples] circle[data-series=after]").count()).toBe(12);
    await page.waitForSelector("[data-testid=trajectories] .aw-series-reference path", { state: "attached" });
    expect(await page.locator("[data-testid=trajectories] [data-series=flagged]").count()).toBeGreaterThan(0);
    const commit = page.locator(`[data-commit='${slowHash}']`);
    expect(await commit.textContent()).toMatch(/Solve every case four times.*Wren Halloran.*M app\/engine\/solve\.ts/s);
    expect(await page.locator("[data-commit]").count()).toBe(1);
    await screenshot(page, "part2-regression");

    await Promise.all([page.waitForURL(new RegExp(`/commits/${slowHash}$`)), commit.locator("a").click()]);
    await page.waitForSelector("[data-testid=diff-summary]");
    expect(await page.textContent("[data-testid=diff-summary]")).toContain("app/engine/solve.ts");
    await page.goBack();
    await hydrated(page);

    await page.click("[data-testid=mark-expected]");
    await page.waitForSelector("[data-field-error=reason]");
    await page.fill("[data-testid=reason]", "Four times the work on purpose: checking the flag.");
    await page.click("[data-testid=mark-expected]");
    await page.waitForSelector("[data-testid=history] [data-event=expected]");
    expect(await page.textContent("[data-testid=regression-status]")).toBe("expected");
    expect(await page.textContent("[data-testid=history] [data-event=expected]")).toMatch(/Demo Engineer · open → expected\s*Marked expected: Four times the work on purpose/);
    await page.click("[data-testid=subscribe]");
    await page.waitForSelector("[data-testid=subscribe]:has-text('Stop e-mail')");
    await screenshot(page, "part2-regression-triaged");
  });
});
