/**
 * Running a suite from the browser, end to end, in Debian's chromium: an engineer picks a branch
 * of a temporary repository (a clone of this one with a two-case suite committed on a branch),
 * starts it, watches the job's progress to the end, opens the run and a case, and sees the
 * trajectory chart drawn. A viewer sees the same pages without the start button, and a forged
 * start from a viewer gets 403. Screenshots go to tests/screenshots/.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot } from "../helpers/browser";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";

const DEMO = {
  viewer: { email: "viewer@arcwatch.test", password: "viewer-demo-pass" },
  engineer: { email: "engineer@arcwatch.test", password: "engineer-demo-pass" },
} as const;

const BRANCH = "feature/tiny-check";

/** A clone of this repository's HEAD with a two-case suite committed on BRANCH. */
function temporaryRepository(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-repo-"));
  const git = (...args: string[]) => execFileSync("git", args, { cwd: dir, encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
  execFileSync("git", ["clone", "--quiet", "--no-hardlinks", ROOT, dir]);
  git("checkout", "--quiet", "-b", BRANCH);
  const quick = JSON.parse(fs.readFileSync(path.join(dir, "bench/suites/quick.json"), "utf8")) as Record<string, unknown>;
  const tiny = { ...quick, name: "tiny", description: "Two cases for the browser test.", problems: ["pika-rover-dash"], schemes: ["trapezoidal", "hermite-simpson"], meshes: [{ intervals: 10 }], repeats: 3, warmup: 1 };
  fs.writeFileSync(path.join(dir, "bench/suites/tiny.json"), `${JSON.stringify(tiny, null, 2)}\n`);
  git("add", "bench/suites/tiny.json");
  git("-c", "user.name=Test", "-c", "user.email=test@arcwatch.test", "commit", "--quiet", "-m", "Two-case suite for the browser test");
  return dir;
}

const run = chromiumAvailable();

describe.runIf(run)("running a suite from the browser", () => {
  let server: RunningServer;
  let repo: string;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;
  let runUrl = "";

  beforeAll(async () => {
    repo = temporaryRepository();
    server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "1", ARCWATCH_REPO: repo, ARCWATCH_WORKTREES: path.join(ROOT, ".arcwatch-worktrees", path.basename(repo)) } });
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
  });

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
    if (repo) fs.rmSync(repo, { recursive: true, force: true });
    fs.rmSync(path.join(ROOT, ".arcwatch-worktrees", path.basename(repo ?? "none")), { recursive: true, force: true });
  });

  const url = (p: string) => `${server.url}${p}`;

  async function signInAs(role: keyof typeof DEMO) {
    await context.clearCookies();
    await page.goto(url("/signin"));
    await hydrated(page);
    await page.fill("input[name=email]", DEMO[role].email);
    await page.fill("input[name=password]", DEMO[role].password);
    await Promise.all([page.waitForURL(url("/")), page.click("button[type=submit]")]);
    await hydrated(page);
  }

  it("an engineer starts the suite on a branch, watches it finish, opens the run and a case", async () => {
    await signInAs("engineer");
    await page.goto(url(`/run-suite?ref=${encodeURIComponent(BRANCH)}`));
    await hydrated(page);
    await page.selectOption("[data-testid=suite-picker]", "tiny");
    await screenshot(page, "run-suite-engineer");
    await Promise.all([page.waitForURL(/job=\d+/), page.click("[data-testid=start-run]")]);
    await hydrated(page);
    // live progress through the fetcher poll, to the end
    await page.waitForSelector("[data-testid=job-panel][data-status=running], [data-testid=job-panel][data-status=done]", { timeout: 60_000 });
    await page.waitForSelector("[data-testid=job-panel][data-status=done]", { timeout: 240_000 }).catch(async (err) => {
      await screenshot(page, "run-suite-not-done").catch(() => undefined);
      const panel = await page.textContent("[data-testid=job-panel]").catch(() => "(page gone)");
      throw new Error(`${(err as Error).message}\njob panel: ${panel?.slice(0, 1500)}\nserver log (tail):\n${server.log().slice(-4000)}`);
    });
    expect(await page.textContent("[data-testid=job-progress]")).toContain("2/2 cases");
    expect(await page.textContent("[data-testid=job-log]")).toContain("bench/run.ts");
    await screenshot(page, "run-suite-done");
    await page.click("[data-testid=job-run-link]");
    await page.waitForSelector("[data-testid=run-matrix]", { timeout: 20_000 }).catch(async (err) => {
      await screenshot(page, "run-page-failed");
      throw new Error(`${(err as Error).message}\nURL ${page.url()}\n${(await page.textContent("main"))?.slice(0, 2000)}\n${server.log().slice(-3000)}`);
    });
    runUrl = page.url();
    expect(runUrl).toMatch(/\/runs\/[0-9a-f-]{36}$/);
    expect(await page.locator("[data-testid=matrix-cell]").count()).toBe(2);
    expect(await page.textContent("h1")).toContain("tiny");
    expect(await page.textContent("main")).toContain(BRANCH);
    await page.waitForSelector("[data-testid=flight-caution]");
    await screenshot(page, "run-page");
    await page.locator("[data-testid=matrix-cell]").first().click();
    await page.waitForSelector("[data-testid=case-status]", { timeout: 20_000 });
    expect(page.url()).toMatch(/\/cases\/\d+$/);
    // The first trajectory request starts a solver thread (it compiles the problem for the
    // reference): with eight busy processes on two cores that took more than 20 s here.
    await page.waitForSelector("[data-testid=trajectory-chart] svg path.recharts-curve", { timeout: 90_000 });
    // The iteration log: charts first, the numbers behind a toggle (tests/browser/iteration-log.test.ts).
    await page.waitForSelector("[data-testid=iteration-chart] svg path.recharts-curve", { timeout: 20_000 });
    await page.click("[data-testid=iteration-table-toggle]");
    expect(await page.locator("[data-testid=iteration-log] tbody tr").count()).toBeGreaterThan(2);
    await screenshot(page, "case-page");
    await page.goto(url("/runs"));
    await hydrated(page);
    expect(await page.locator("[data-testid=run-link]").count()).toBe(1);
    await screenshot(page, "runs-table");
  }, 300_000);

  it("an engineer cancels a running job, and the worker stops it", async () => {
    await page.goto(url(`/run-suite?ref=${encodeURIComponent(BRANCH)}`));
    await hydrated(page);
    await page.selectOption("[data-testid=suite-picker]", "tiny");
    await Promise.all([page.waitForURL(/job=\d+/), page.click("[data-testid=start-run]")]);
    await hydrated(page);
    await page.waitForSelector("[data-testid=job-panel][data-status=running]", { timeout: 60_000 });
    await page.click("[data-testid=job-cancel]");
    await page.waitForSelector("[data-testid=job-panel][data-status=cancelled]", { timeout: 30_000 });
    await screenshot(page, "run-suite-cancelled");
    const jobId = new URL(page.url()).searchParams.get("job");
    await expect
      .poll(async () => page.evaluate(async (id) => ((await (await fetch(`/api/jobs/${id}`)).json()) as { job: { finishedAt: number | null } }).job.finishedAt, jobId), { timeout: 30_000 })
      .not.toBeNull();
  }, 120_000);

  it("a viewer sees the pages without the start button, and a forged start gets 403", async () => {
    await signInAs("viewer");
    await page.goto(url(`/run-suite?ref=${encodeURIComponent(BRANCH)}`));
    await hydrated(page);
    expect(await page.locator("[data-testid=start-run]").count()).toBe(0);
    await page.waitForSelector("[data-testid=viewer-note]");
    await screenshot(page, "run-suite-viewer");
    const status = await page.evaluate(async (ref) => {
      const r = await fetch("/run-suite", { method: "POST", body: new URLSearchParams({ ref, suite: "tiny", commit: "" }) });
      return r.status;
    }, BRANCH);
    expect(status).toBe(403);
    const apiStatus = await page.evaluate(async () => (await fetch("/api/jobs", { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify({ kind: "bench", payload: { suite: "tiny" } }) })).status);
    expect(apiStatus).toBe(403);
    expect(runUrl).not.toBe("");
    await page.goto(runUrl);
    await hydrated(page);
    expect(await page.locator("[data-testid=matrix-cell]").count()).toBe(2);
    await page.goto(url("/history"));
    await hydrated(page);
    await page.waitForSelector("[data-testid=history-point]", { timeout: 20_000 });
    await page.hover("[data-testid=history-point]");
    await page.waitForSelector("[data-testid=history-tooltip]");
    expect(await page.textContent("[data-testid=history-tooltip]")).toContain("Two-case suite for the browser test");
    await screenshot(page, "history-viewer");
    await page.click("[data-testid=history-point]");
    await page.waitForSelector("[data-testid=run-matrix]", { timeout: 20_000 });
    expect(page.url()).toBe(runUrl);
    await page.goto(url("/settings"));
    await hydrated(page);
    await page.waitForSelector("[data-testid=thresholds-tiny]");
    expect(await page.locator("button:has-text('Propose')").count()).toBe(0);
    await screenshot(page, "settings-viewer");
  }, 120_000);
});
