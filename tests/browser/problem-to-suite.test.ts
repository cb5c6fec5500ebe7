/**
 * An added problem reaches a suite, in Debian's chromium against the built app: an engineer saves a
 * new problem in the builder; its page says the full suite runs it (every problem of the library)
 * and quick does not; the engineer adds it to quick (a versioned change with who and when), then
 * presses "Run it now" and watches the job's progress until the run's cases (every scheme, two
 * meshes) appear on the page. The job worker runs a clone of this repository's HEAD (commit before
 * running). Screenshots go to tests/screenshots/.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot, signInAs } from "../helpers/browser";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";
import { restToRestProblem } from "../helpers/rest-to-rest";

/** Our own double integrator (tests/helpers/rest-to-rest.ts): J* = 6. */
const DOTTEREL = restToRestProblem("Dotterel sled, rest-to-rest in one second", "Minimum-energy double integrator of the Dotterel test sled.", "dotterel-test-tag");

const run = chromiumAvailable();

describe.runIf(run)("an added problem reaches a suite and runs from its page", () => {
  let server: RunningServer;
  let repo: string;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;

  beforeAll(async () => {
    repo = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-repo-"));
    execFileSync("git", ["clone", "--quiet", "--no-hardlinks", ROOT, repo]);
    server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "1", ARCWATCH_REPO: repo, ARCWATCH_WORKTREES: path.join(ROOT, ".arcwatch-worktrees", path.basename(repo)) } });
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
  }, 240_000);

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
    if (repo) fs.rmSync(repo, { recursive: true, force: true });
    fs.rmSync(path.join(ROOT, ".arcwatch-worktrees", path.basename(repo ?? "none")), { recursive: true, force: true });
  });

  it("save in the builder, add to quick, run it now, read the result", { timeout: 600_000 }, async () => {
    await signInAs(page, server.url, "engineer");
    await page.goto(`${server.url}/problems/new`);
    await hydrated(page);
    await page.fill("#field-id", "dotterel-sled");
    await page.fill("#field-problemJson", JSON.stringify(DOTTEREL, null, 2));
    await Promise.all([page.waitForURL(/\/problems\/dotterel-sled\?saved=/), page.click("[data-testid=save-problem]")]);
    await hydrated(page);

    // the saved notice names the suites that run it; each suite says why it does or does not
    expect(await page.textContent("main")).toMatch(/Suite\(s\) full run it from their next run on/);
    expect(await page.getAttribute("[data-testid=problem-suites] [data-suite=full]", "data-via")).toBe("all");
    expect(await page.textContent("[data-testid=problem-suites] [data-suite=full]")).toMatch(/Runs it.*every problem of the library/);
    expect(await page.getAttribute("[data-testid=problem-suites] [data-suite=quick]", "data-included")).toBe("no");

    // add it to quick: a change with who and when, shown at once
    await page.selectOption("[data-testid=add-suite-picker]", "quick");
    await page.fill("input[name=note]", "a smooth case for every commit");
    await Promise.all([page.waitForResponse((r) => r.request().method() === "POST"), page.click("[data-testid=add-to-suite]")]);
    await page.waitForSelector("[data-testid=problem-suites] [data-suite=quick][data-included=yes]");
    expect(await page.getAttribute("[data-testid=problem-suites] [data-suite=quick]", "data-via")).toBe("change");
    expect(await page.textContent("[data-testid=problem-suites] [data-suite=quick]")).toMatch(/added here by Demo Engineer on \d{4}-\d\d-\d\d.*\(version 1\)/);
    expect(await page.textContent("[data-testid=suite-history]")).toMatch(/Demo Engineer added it to quick \(version 1\): a smooth case for every commit/);
    await screenshot(page, "problem-added-to-suite");

    // run it now: progress while it runs, then the cases of every scheme on two meshes
    await page.click("[data-testid=run-now]");
    await page.waitForSelector("[data-testid=problem-check][data-status=queued], [data-testid=problem-check][data-status=running], [data-testid=problem-check][data-status=done]");
    await page.waitForSelector("[data-testid=problem-check][data-status=running] [role=progressbar]", { timeout: 60_000 }).catch(() => undefined);
    await page.waitForSelector("[data-testid=problem-check][data-status=done], [data-testid=problem-check][data-status=failed]", { timeout: 480_000 }); // a shared machine: minutes
    expect(await page.getAttribute("[data-testid=problem-check]", "data-status")).toBe("done");
    const rows = page.locator("[data-testid=check-cases] tbody tr");
    expect(await rows.count()).toBe(10);
    const keys = await rows.evaluateAll((trs) => trs.map((tr) => tr.getAttribute("data-case")).sort());
    expect(keys).toEqual(
      ["euler", "hermite-simpson", "rk4-shooting", "trapezoidal"].flatMap((s) => [10, 20].map((n) => `dotterel-sled/${s}/${n}`)).concat(["dotterel-sled/lgr/4x4", "dotterel-sled/lgr/8x4"]).sort(),
    );
    expect(await page.textContent("[data-testid=check-found]")).toMatch(/Solved 10 of 10 cases/);
    // Hermite–Simpson is exact for this problem's cubic x(t) and linear u(t): J = 6 to solver tolerance
    const hs = await page.textContent("[data-testid=check-cases] tr[data-case='dotterel-sled/hermite-simpson/10'] td:nth-child(4)");
    expect(Number(hs)).toBeLessThan(1e-6);
    await screenshot(page, "problem-run-now-result");
  });
});
