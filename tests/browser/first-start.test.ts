/**
 * The first start on an empty database, as a new user does it: `npm start` (scripts/start.mjs,
 * after the build) must answer on the sign-in page within 40 s, and the overview must show the
 * background demo seeding's progress ("Preparing demo data: n of N cases") until the demo data
 * are in. The demo seeding runs a two-case suite here (ARCWATCH_DEMO_SUITE) instead of the quick
 * suite, so that the test waits for minutes at most on a loaded machine.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot } from "../helpers/browser";
import { ensureBuild, freePort, ROOT } from "../helpers/server";

const run = chromiumAvailable();
/** The bound for the first answer after the build (seconds). */
const FIRST_ANSWER_S = 40;

describe.runIf(run)("first start on an empty database", () => {
  let child: ChildProcess;
  let dir: string;
  let url = "";
  let output = "";
  let firstAnswerSeconds = Infinity;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;

  beforeAll(async () => {
    await ensureBuild(); // "after the build": the timing below is the start itself
    dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-first-start-"));
    const suite = path.join(dir, "first-start.json");
    fs.writeFileSync(
      suite,
      JSON.stringify({
        format: "arcwatch-suite/1",
        name: "first-start",
        // Long enough (about half a minute on a quiet 2-core machine) that the overview is open
        // while it runs: two cases finished in 4 s, before a person could sign in.
        description: "Twelve cases for the first-start browser test.",
        problems: ["pika-rover-dash", "wren-wheel-spin-down"],
        schemes: ["trapezoidal", "hermite-simpson"],
        meshes: [{ intervals: 40 }, { intervals: 80 }, { intervals: 160 }],
        repeats: 25,
        warmup: 1,
        timeBudgetSeconds: 120,
        jobs: 1,
        clock: "cpu",
      }),
    );
    const port = await freePort();
    url = `http://127.0.0.1:${port}`;
    const started = performance.now();
    child = spawn(process.execPath, [path.join(ROOT, "scripts/start.mjs")], {
      cwd: ROOT,
      detached: true, // its own process group: the server and its background children stop together
      env: {
        ...process.env,
        HOST: "127.0.0.1",
        PORT: String(port),
        ARCWATCH_DB: path.join(dir, "arcwatch.db"),
        SESSION_SECRET: "first-start-test-secret-4b1d9e7a0c2f",
        ARCWATCH_DEMO_SEED: "1",
        ARCWATCH_DEMO_SUITE: suite,
        ARCWATCH_JOB_WORKER: "0",
      },
      stdio: ["ignore", "pipe", "pipe"],
    });
    child.stdout!.on("data", (d) => (output += d));
    child.stderr!.on("data", (d) => (output += d));
    for (;;) {
      if (child.exitCode !== null) throw new Error(`npm start exited (${child.exitCode}):\n${output}`);
      try {
        if ((await fetch(`${url}/signin`)).status === 200) break;
      } catch {
        /* not listening yet */
      }
      if (performance.now() - started > 180_000) throw new Error(`no answer within 180 s:\n${output}`);
      await new Promise((r) => setTimeout(r, 200));
    }
    firstAnswerSeconds = (performance.now() - started) / 1000;
    console.log(`[first start] sign-in page answered ${firstAnswerSeconds.toFixed(1)} s after npm start (after the build)`);
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
  }, 240_000);

  afterAll(async () => {
    await closeBrowser?.();
    if (child?.pid && child.exitCode === null) {
      try {
        process.kill(-child.pid, "SIGTERM");
      } catch {
        /* gone */
      }
      await new Promise((r) => setTimeout(r, 1000));
    }
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
  });

  it(`answers on the sign-in page within ${FIRST_ANSWER_S} s, before the demo data are seeded`, () => {
    expect(firstAnswerSeconds).toBeLessThan(FIRST_ANSWER_S);
    expect(output).toMatch(/seeding the demo results in the background/);
  });

  it("the overview shows the demo seeding's progress until the demo data are in", { timeout: 600_000 }, async () => {
    await page.goto(`${url}/signin`);
    await hydrated(page);
    await page.fill("input[name=email]", "viewer@arcwatch.test");
    await page.fill("input[name=password]", "viewer-demo-pass");
    await Promise.all([page.waitForURL(`${url}/`), page.click("button[type=submit]")]);
    await hydrated(page);
    // while it runs: the card and its numbers (it updates itself; no reload here)
    const card = page.locator("[data-testid=demo-progress]");
    await card.waitFor({ timeout: 30_000 });
    const seen = (await card.textContent()) ?? "";
    expect(seen).toMatch(/^Preparing demo data: (starting the quick suite|\d+ of 12 cases|12 of 12 cases measured, writing the demo history)/);
    await screenshot(page, "first-start-demo-progress");
    const texts = new Set<string>([seen]);
    const deadline = Date.now() + 540_000;
    while ((await card.count()) > 0) {
      texts.add(((await card.textContent().catch(() => "")) ?? "").split("cases")[0]!);
      if (Date.now() > deadline) throw new Error(`demo seeding did not finish; saw ${[...texts].join(" | ")}\n${output.slice(-3000)}`);
      await page.waitForTimeout(500);
    }
    // ready: the card is gone by itself and the demo history is on the pages
    expect(await page.locator("[data-testid=demo-progress]").count()).toBe(0);
    const demoRuns = await page.evaluate(async () => ((await (await fetch("/api/runs?demo=only")).json()) as { total: number }).total);
    expect(demoRuns).toBe(12);
    const realRuns = await page.evaluate(async () => ((await (await fetch("/api/runs?demo=exclude")).json()) as { total: number }).total);
    expect(realRuns).toBe(1);
  });
});
