/**
 * In Debian's chromium against the built app: an engineer uploads a problem with a deliberate
 * error, sees the message at its field, fixes it, runs the trial solve, saves, finds it in the
 * library; the next run of a suite selecting its tag (the real runner, on the server's database)
 * solves it; then the comparison page shows the fitted orders and the cheapest setting for the
 * tolerance typed. Screenshots go to tests/screenshots/.
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot } from "../helpers/browser";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";
import { restToRestProblem } from "../helpers/rest-to-rest";

/** Our own double integrator (tests/helpers/rest-to-rest.ts): J* = 6. */
const PLOVER = restToRestProblem("Plover cart, rest-to-rest in one second", "Minimum-energy double integrator of the Plover test cart.", "plover-browser-tag");

function bench(suiteFile: string, db: string): Promise<{ code: number | null; json: { runId: string; commit: { commitHash: string }; counts: { solved: number } } }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--import", "tsx", "bench/run.ts", "--suite", suiteFile, "--db", db, "--json", "--no-alerts"], { cwd: ROOT, stdio: ["ignore", "pipe", "pipe"], env: { ...process.env, ARCWATCH_UPLOADED_PROBLEMS: "" } });
    let out = "";
    let err = "";
    child.stdout.on("data", (c) => (out += c));
    child.stderr.on("data", (c) => (err += c));
    child.on("error", reject);
    child.on("exit", (code) => {
      try {
        resolve({ code, json: JSON.parse(out) });
      } catch {
        reject(new Error(`bench output is not JSON (exit ${code}):\n${out}\n${err}`));
      }
    });
  });
}

const run = chromiumAvailable();

describe.runIf(run)("adding a problem and comparing schemes in the browser", () => {
  let server: RunningServer;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;
  let commit = "";

  beforeAll(async () => {
    server = await startTestServer();
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
    await page.goto(`${server.url}/signin`);
    await hydrated(page);
    await page.fill("input[name=email]", "engineer@arcwatch.test");
    await page.fill("input[name=password]", "engineer-demo-pass");
    await Promise.all([page.waitForURL(`${server.url}/`), page.click("button[type=submit]")]);
  }, 240_000);

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
  });

  it("upload with an error, fix, trial solve, save, library, next run", { timeout: 240_000 }, async () => {
    await page.goto(`${server.url}/problems/new`);
    await hydrated(page);
    await page.fill("#field-id", "plover-cart");
    const bad = JSON.stringify({ ...PLOVER, dynamics: { x: "v", v: "uu" } }, null, 2);
    await page.setInputFiles("input[name=problemFile]", { name: "problem.json", mimeType: "application/json", buffer: Buffer.from(bad) });
    await page.click("[data-testid=save-problem]");
    const err = page.locator("[data-field-error=problemJson]");
    await err.waitFor();
    expect(await err.textContent()).toMatch(/dynamics\.v, column 1: unknown name 'uu' — did you mean 'u'\?/);
    expect(await page.inputValue("#field-problemJson")).toBe(bad); // the uploaded text is kept
    expect(await page.inputValue("#field-id")).toBe("plover-cart");
    await screenshot(page, "part2-upload-error");

    await page.setInputFiles("input[name=problemFile]", []);
    await page.fill("#field-problemJson", JSON.stringify(PLOVER, null, 2));
    await page.click("[data-testid=trial-solve]");
    const trial = page.locator("[data-testid=trial-result]");
    await trial.waitFor({ timeout: 60_000 });
    expect(await trial.getAttribute("data-trial-status")).toBe("optimal");
    await page.waitForSelector("[data-testid=trajectory-chart] svg path");
    expect(await page.locator("[data-field-error]").count()).toBe(0);
    await screenshot(page, "part2-trial-solve");

    await Promise.all([page.waitForURL(/\/problems\/plover-cart\?saved=/), page.click("[data-testid=save-problem]")]);
    await page.waitForSelector("[data-testid=equations] .katex");
    expect(await page.textContent("[data-testid=references]")).toMatch(/analytic/);
    await screenshot(page, "part2-problem-page");

    await page.goto(`${server.url}/problems?tag=plover-browser-tag`);
    await page.waitForSelector("[data-problem-row=plover-cart]");
    expect(await page.locator("[data-problem-row]").count()).toBe(1);

    // The next run of a suite that selects the tag picks the problem up (uploaded folder beside the DB).
    const suiteFile = path.join(server.dir, "plover-suite.json");
    fs.writeFileSync(
      suiteFile,
      JSON.stringify({
        format: "arcwatch-suite/1",
        name: "plover-browser",
        problems: [{ tag: "plover-browser-tag" }],
        schemes: ["trapezoidal", "hermite-simpson"],
        meshes: [{ intervals: 8 }, { intervals: 16 }, { intervals: 32 }],
        repeats: 3,
        warmup: 1,
        timeBudgetSeconds: 60,
      }),
    );
    const r = await bench(suiteFile, server.dbFile);
    expect(r.json.counts.solved).toBe(6);
    commit = r.json.commit.commitHash;
    await page.goto(`${server.url}/runs/${r.json.runId}`);
    await hydrated(page);
    expect(await page.textContent("main")).toContain("plover-cart");
    await page.goto(`${server.url}/problems`);
    expect(await page.locator("[data-problem-row=plover-cart] [data-scheme-state=solved]").count()).toBe(2);
    await screenshot(page, "part2-library");
  });

  it("compares schemes on the problem: fitted orders and the cheapest setting", { timeout: 60_000 }, async () => {
    expect(commit).not.toBe("");
    await page.goto(`${server.url}/compare?problem=plover-cart&a=${commit}`);
    await hydrated(page);
    const fitted = Number(await page.getAttribute("[data-order-scheme=trapezoidal]", "data-fitted"));
    // The trapezoidal rule's quadrature error in ∫u² is O(h²): order 2 (Betts 2010, §4.7); tolerance ±0.3.
    expect(Math.abs(fitted - 2)).toBeLessThan(0.3);
    expect(await page.textContent("[data-order-scheme=trapezoidal]")).toMatch(/2$/);
    await page.fill("[data-testid=tolerance]", "1e-3");
    await page.waitForSelector("[data-cheapest-for=a] h2:text-matches('meeting 1e-3 at')");
    const row = page.locator("[data-cheapest-for=a] [data-cheapest=plover-cart]");
    const scheme = await row.getAttribute("data-cheapest-scheme");
    expect(["trapezoidal", "hermite-simpson"]).toContain(scheme);
    const errText = (await row.locator("td").nth(3).textContent())!;
    expect(Number(errText)).toBeLessThanOrEqual(1e-3);
    await page.fill("[data-testid=tolerance]", "1e-30");
    await page.waitForSelector("[data-cheapest-for=a] [data-cheapest=plover-cart][data-cheapest-scheme='']");
    await page.fill("[data-testid=tolerance]", "1e-3");
    await page.waitForSelector("[data-cheapest-for=a] h2:text-matches('meeting 1e-3 at')");
    await page.waitForSelector("[data-testid=convergence] svg circle");
    await page.waitForSelector("[data-testid=profile-time] svg path", { state: "attached" });
    await screenshot(page, "part2-compare");

    // The whole library at the same commit: fitted orders per problem, profiles over problems.
    await page.goto(`${server.url}/compare?a=${commit}`);
    await hydrated(page);
    expect(await page.textContent("[data-testid=orders-by-problem]")).toContain("plover-cart");
    expect(await page.locator("[data-testid=profile-accuracy] [data-profile-scheme]").count()).toBe(2);
    await screenshot(page, "part2-compare-library");
  });
});
