/**
 * In Debian's chromium against the built app: a case page shows the NLP iteration log as small
 * charts of its measures over the iterations (objective, primal and dual infeasibility, barrier
 * parameter, step sizes); the numbers sit behind a toggle, and the table's last column says in
 * words what happened (no one-letter notes). The case is recorded by the bench command line on a
 * one-case suite into the server's database.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import Database from "better-sqlite3";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { runBenchJson } from "../helpers/bench-cli";
import { chromiumAvailable, hydrated, launchBrowser, screenshot, signInAs } from "../helpers/browser";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";

describe.runIf(chromiumAvailable())("the iteration log of a case", () => {
  let server: RunningServer;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;
  let caseId = 0;
  let iterations = 0;

  let dir = "";
  beforeAll(async () => {
    server = await startTestServer();
    dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-iterlog-"));
    const suite = path.join(dir, "iterlog.json");
    fs.writeFileSync(suite, JSON.stringify({ format: "arcwatch-suite/1", name: "iterlog", problems: ["pika-rover-dash"], schemes: ["trapezoidal"], meshes: [{ intervals: 12 }], repeats: 3, warmup: 0, jobs: 1 }));
    const r = await runBenchJson<{ status: string }>(ROOT, suite, server.dbFile);
    expect(r.json.status, r.stderr).toBe("complete");
    const d = new Database(server.dbFile, { readonly: true });
    const row = d.prepare("select id, iterations from case_results order by id desc limit 1").get() as { id: number; iterations: number };
    d.close();
    caseId = row.id;
    iterations = row.iterations;
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
    await signInAs(page, server.url, "viewer");
  }, 300_000);

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
  });

  it("draws the measures over iterations and shows the table on demand", async () => {
    await page.goto(`${server.url}/cases/${caseId}`);
    await hydrated(page);
    await page.waitForSelector("[data-testid=iteration-chart] svg path.recharts-curve", { timeout: 20_000 });
    const charts = page.locator("[data-testid=iteration-chart]");
    expect(await charts.count()).toBe(5);
    const measures = await charts.evaluateAll((els) => els.map((e) => e.getAttribute("data-measure")));
    expect(measures).toEqual(["f", "infPr", "infDu", "mu", "alphaPr,alphaDu"]);
    // Every chart draws its line(s).
    for (let i = 0; i < 5; i++) expect(await charts.nth(i).locator("svg path.recharts-curve").count()).toBeGreaterThan(0);
    expect(await page.textContent("[data-testid=iteration-summary]")).toContain(`${iterations} iterations after the starting point`);
    // The table is behind the toggle.
    expect(await page.locator("[data-testid=iteration-log]").count()).toBe(0);
    const toggle = page.locator("[data-testid=iteration-table-toggle]");
    expect(await toggle.getAttribute("aria-expanded")).toBe("false");
    await toggle.click();
    await page.waitForSelector("[data-testid=iteration-log]");
    expect(await toggle.getAttribute("aria-expanded")).toBe("true");
    expect(await page.locator("[data-testid=iteration-log] tbody tr").count()).toBe(iterations + 1);
    const heads = await page.locator("[data-testid=iteration-log] thead th").allTextContents();
    expect(heads.at(-1)).toBe("What happened");
    const notes = await page.locator("[data-testid=iteration-log] tbody tr td:last-child").allTextContents();
    for (const n of notes) expect(n, `note "${n}"`).not.toMatch(/(^|\s)[A-Za-z](\s|;|$)/);
    await screenshot(page, "case-iteration-log");
    await toggle.click();
    expect(await page.locator("[data-testid=iteration-log]").count()).toBe(0);
  });
});
