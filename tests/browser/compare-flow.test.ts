/**
 * In Debian's chromium against the built app: two suites of our own measure two library problems
 * at this checkout (one on a single mesh, one on two meshes, with different repeat settings).
 * The engineer opens the comparison for one problem, types a tolerance, picks the other problem
 * and presses Show: the URL, the menu, the cheapest-setting table and the points all name the
 * second problem. The timings come from one suite at a time (switchable), and a single-mesh
 * suite says why no order can be fitted and offers the suite with several meshes.
 */
import fs from "node:fs";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { runBenchJson } from "../helpers/bench-cli";
import { chromiumAvailable, hydrated, launchBrowser, screenshot, signInAs } from "../helpers/browser";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";

const PROBLEMS = ["tern-orbit-raise", "kestrel-2-ascent"];
const suite = (name: string, meshes: { intervals: number }[], repeats: number) => ({ format: "arcwatch-suite/1", name, problems: PROBLEMS, schemes: ["trapezoidal"], meshes, repeats, warmup: 0, timeBudgetSeconds: 60, jobs: 1 });

const run = chromiumAvailable();

describe.runIf(run)("comparing two problems one after the other", () => {
  let server: RunningServer;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;

  beforeAll(async () => {
    server = await startTestServer();
    const coarse = path.join(server.dir, "cmp-coarse.json");
    const meshes = path.join(server.dir, "cmp-meshes.json");
    fs.writeFileSync(coarse, JSON.stringify(suite("cmp-coarse", [{ intervals: 8 }], 1)));
    fs.writeFileSync(meshes, JSON.stringify(suite("cmp-meshes", [{ intervals: 8 }, { intervals: 16 }], 2)));
    // The single-mesh suite runs last: it is the newest run, but not the default source for the page.
    for (const f of [meshes, coarse]) {
      const r = await runBenchJson<{ counts: { solved: number } }>(ROOT, f, server.dbFile);
      expect(r.code, r.stderr).toBe(0);
    }
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
    await signInAs(page, server.url, "engineer");
  }, 900_000); // build, server start and two small bench runs; minutes on a loaded shared machine

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
  });

  it("tern, then tolerance 1e-6 and kestrel: everything says kestrel", { timeout: 90_000 }, async () => {
    await page.goto(`${server.url}/compare?problem=tern-orbit-raise`);
    await hydrated(page);
    expect(await page.getAttribute("[data-cheapest-for=a] tbody tr", "data-cheapest")).toBe("tern-orbit-raise");
    // Default timing source: the suite with the most cases of the selection (two meshes).
    expect(await page.getAttribute("[data-sources-for=a] [data-source-shown=yes]", "data-source")).toBe("cmp-meshes:r2:w0");
    expect(await page.locator("[data-sources-for=a] [data-source]").count()).toBe(2);

    await page.fill("[data-testid=tolerance]", "1e-6");
    await page.selectOption("[data-testid=compare-problem]", "kestrel-2-ascent");
    await Promise.all([page.waitForURL(/problem=kestrel-2-ascent/), page.click("[data-testid=compare-show]")]);
    await page.waitForSelector("[data-cheapest-for=a] h2:text-matches('meeting 1e-6 at')");
    await page.waitForFunction(() => !document.querySelector("[data-testid=compare-loading]"));
    const url = new URL(page.url());
    expect(url.searchParams.get("problem")).toBe("kestrel-2-ascent");
    expect(url.searchParams.get("tol")).toBe("1e-6");
    expect(await page.inputValue("[data-testid=compare-problem]")).toBe("kestrel-2-ascent");
    const rows = await page.locator("[data-cheapest-for=a] tbody tr").evaluateAll((trs) => trs.map((tr) => tr.getAttribute("data-cheapest")));
    expect(rows).toEqual(["kestrel-2-ascent"]);
    const pointProblems = await page.locator("[data-testid=points-table] tbody tr td:first-child").allTextContents();
    expect(pointProblems.length).toBe(2);
    expect(new Set(pointProblems)).toEqual(new Set(["kestrel-2-ascent"]));
    expect(await page.textContent("[data-testid=convergence]")).not.toContain("tern");
    await screenshot(page, "compare-second-problem");

    // The other source, chosen from the menu: one mesh per scheme, so no order and an offer.
    await Promise.all([page.waitForURL(/suite=cmp-coarse/), page.selectOption("[data-testid=timing-source]", "cmp-coarse:r1:w0")]);
    await page.waitForSelector("[data-testid=no-order]");
    expect(await page.getAttribute("[data-testid=no-order] a[data-run-suite]", "href")).toBe("/run-suite?suite=cmp-meshes");
    expect(await page.textContent("[data-order-scheme=trapezoidal]")).toContain("one mesh");
    // Every point names its run, and that run belongs to the source shown.
    const pointRuns = await page.locator("[data-testid=points-table] tbody tr td:last-child a").allTextContents();
    const shownRuns = await page.locator("[data-sources-for=a] [data-source-shown=yes] a").allTextContents();
    expect(pointRuns.length).toBe(1);
    for (const r of pointRuns) expect(shownRuns).toContain(r);
    await screenshot(page, "compare-one-mesh");
  });
});
