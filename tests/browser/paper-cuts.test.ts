/**
 * Small things that break trust, one check each, against the built server in Debian's chromium:
 * a posted comment leaves the box empty; an action taken with an API token names the token beside
 * the person; trial intervals over the limit are refused at the field; a cancelled job reads as
 * cancelled on its run page; the run-suite job list follows the job's live status; the
 * overview's "Runs in progress" refreshes itself.
 */
import { eq } from "drizzle-orm";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot } from "../helpers/browser";
import { startTestServer, type RunningServer } from "../helpers/server";
import { openDatabase, type Db } from "~/db/client.server";
import { jobs, regressions, runs, suites, users } from "~/db/schema";
import { CANCELLED_MESSAGE, finishJob } from "~/models/jobs.server";
import { createApiToken } from "~/services/tokens.server";

const run = chromiumAvailable();

describe.runIf(run)("paper cuts", () => {
  let server: RunningServer;
  let db: Db;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;
  let regressionId = 0;
  let viewerToken = "";
  let engineerToken = "";
  let suiteId = 0;

  const url = (p: string) => `${server.url}${p}`;

  function insertRun(status: "running" | "interrupted" | "complete", jobId: number | null = null): string {
    const id = crypto.randomUUID();
    db.insert(runs).values({ id, suiteId, commitHash: "e".repeat(40), branch: "main", commitSubject: "Paper cuts", machineJson: {}, machineKey: "test-machine", startedAt: new Date(), status, jobId }).run();
    return id;
  }

  async function signIn(email: string, password: string) {
    await context.clearCookies();
    await page.goto(url("/signin"));
    await hydrated(page);
    await page.fill("input[name=email]", email);
    await page.fill("input[name=password]", password);
    await Promise.all([page.waitForURL(url("/")), page.click("button[type=submit]")]);
    await hydrated(page);
  }

  beforeAll(async () => {
    server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "0" } });
    db = openDatabase(server.dbFile);
    const admin = db.select().from(users).where(eq(users.email, "admin@arcwatch.test")).get()!;
    viewerToken = createApiToken(db, { name: "nightly reader", role: "viewer", createdById: admin.id }).token;
    engineerToken = createApiToken(db, { name: "ci trial", role: "engineer", createdById: admin.id }).token;
    suiteId = db.insert(suites).values({ name: "quick", contentHash: "p".repeat(64), definitionJson: {} }).returning({ id: suites.id }).get().id;
    const base = insertRun("complete");
    const flagged = insertRun("complete");
    regressionId = db.insert(regressions).values({ runId: flagged, baselineRunId: base, caseKey: "pika-rover-dash/trapezoidal/20", kind: "speed", direction: "regression", metric: "median_seconds", before: 0.01, after: 0.02, ratio: 2, pValue: 0.001 }).returning({ id: regressions.id }).get().id;
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
  }, 300_000);

  afterAll(async () => {
    await closeBrowser?.();
    db?.$client.close();
    await server?.stop();
  });

  it("a comment posted on a regression leaves the box empty; one posted with a token names the token", async () => {
    const viaToken = await fetch(url(`/api/regressions/${regressionId}`), { method: "POST", headers: { authorization: `Bearer ${viewerToken}` }, body: new URLSearchParams({ intent: "comment", body: "Seen on the nightly machine too." }) });
    expect(viaToken.status).toBe(200);
    const api = await (await fetch(url(`/api/regressions/${regressionId}`), { headers: { authorization: `Bearer ${viewerToken}` } })).json();
    expect(api.comments[0]).toMatchObject({ user: "Demo Admin", token: "nightly reader" });

    await signIn("viewer@arcwatch.test", "viewer-demo-pass");
    await page.goto(url(`/regressions/${regressionId}`));
    await hydrated(page);
    expect(await page.locator("li", { hasText: "Seen on the nightly machine too." }).textContent()).toMatch(/Demo Admin \(with API token “nightly reader”\)/);
    const box = page.locator("textarea[name=body]");
    await box.fill("Bisected to the KKT assembly change.");
    await page.click("button:has-text('Comment')");
    await page.locator("li", { hasText: "Bisected to the KKT assembly change." }).waitFor();
    await expect.poll(() => box.inputValue()).toBe("");
    // a session's comment carries no token note
    expect(await page.locator("li", { hasText: "Bisected to the KKT assembly change." }).textContent()).not.toMatch(/API token/);
    await screenshot(page, "regression-comment-cleared");
  });

  it("trial intervals over the limit are refused at the field, not clamped", async () => {
    const form = new FormData();
    form.set("id", "plover-trial");
    form.set("mode", "upload");
    form.set("problemJson", await (await import("node:fs")).promises.readFile(new URL("../../problems/pika-rover-dash/problem.json", import.meta.url), "utf8"));
    form.set("referenceCsv", await (await import("node:fs")).promises.readFile(new URL("../../problems/pika-rover-dash/reference.csv", import.meta.url), "utf8"));
    form.set("trialScheme", "trapezoidal");
    form.set("trialIntervals", "500");
    const r = await fetch(url("/api/problems/trial"), { method: "POST", headers: { authorization: `Bearer ${engineerToken}` }, body: form });
    expect(r.status).toBe(400);
    const body = await r.json();
    expect(body.errors.trialIntervals).toMatch(/at most 60 intervals \(you asked for 500\)/);
    expect(body.trial).toBeUndefined();
  });

  it("a cancelled job reads as cancelled, on the job and on its run page", async () => {
    const job = db.insert(jobs).values({ kind: "bench", payloadJson: { suite: "quick" }, status: "cancelled" }).returning({ id: jobs.id }).get().id;
    finishJob(db, job, "failed", "bench exited with code null");
    expect(db.select({ e: jobs.error }).from(jobs).where(eq(jobs.id, job)).get()!.e).toBe(CANCELLED_MESSAGE);
    const runId = insertRun("interrupted", job);
    await page.goto(url(`/runs/${runId}`));
    await hydrated(page);
    expect(await page.textContent("[data-testid=run-empty]")).toMatch(/This run was cancelled before any case finished\./);
    expect(await page.textContent("[data-testid=run-not-checked]")).toMatch(/Not checked: only complete runs are compared with a baseline, and this one was cancelled/);
    expect(await page.content()).not.toMatch(/no finished cases yet|there was no baseline/);
  });

  it("the run-suite job list follows the job's live status, and the overview's runs in progress refresh themselves", async () => {
    const job = db.insert(jobs).values({ kind: "bench", payloadJson: { suite: "quick", ref: "main" }, status: "queued" }).returning({ id: jobs.id }).get().id;
    await page.goto(url(`/run-suite?job=${job}`));
    await hydrated(page);
    const listed = page.locator(`[data-job-list-status='${job}']`);
    expect(await listed.textContent()).toBe("queued");
    db.update(jobs).set({ status: "running", startedAt: new Date(), progressJson: { done: 13, total: 25, current: null, lastCase: null, lastStatus: null, elapsedSeconds: 20, etaSeconds: 18, commit: "e".repeat(40), runId: null, phase: "running" } }).where(eq(jobs.id, job)).run();
    await expect.poll(() => page.getAttribute("[data-testid=job-panel]", "data-status"), { timeout: 15_000 }).toBe("running");
    await expect.poll(() => listed.textContent(), { timeout: 15_000 }).toBe("running");

    await page.goto(url("/"));
    await hydrated(page);
    const progress = page.locator("section[aria-labelledby=progress-title]");
    expect(await progress.textContent()).not.toMatch(/cases done/);
    insertRun("running", job); // a run starts while the page is open
    await expect.poll(() => progress.textContent(), { timeout: 30_000 }).toMatch(/quick on main at eeeeeeeeee.*0 cases done/);
    await screenshot(page, "overview-run-in-progress");
  });
});
