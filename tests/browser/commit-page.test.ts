/**
 * The commit page in Debian's chromium against the built app, on a temporary git repository: an
 * engineer opens a commit from the branch's commit list (which marks where the branch leaves
 * main), reads its message body and its coloured diff (markup in the changed lines arrives as
 * text, never as elements), starts a suite run at that commit and an A/B comparison with its
 * parent, and sees both jobs queued with the right commits; from the branch, an A/B of its tip
 * against where it leaves main. A viewer sees the page but no buttons,
 * and the server refuses the viewer's post.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot, signInAs } from "../helpers/browser";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";

const GIT_ENV = { ...process.env, GIT_AUTHOR_NAME: "Ines Varga", GIT_AUTHOR_EMAIL: "ines@example.com", GIT_COMMITTER_NAME: "Ines Varga", GIT_COMMITTER_EMAIL: "ines@example.com" };
const git = (cwd: string, ...args: string[]) => execFileSync("git", args, { cwd, encoding: "utf8", env: GIT_ENV }).trim();

const EXEC = (extra: string) => `// Solver stand-in for the commit page test.
export const createExecutor = () => ({
  prepare(spec: { problemId: string; scheme: string; intervals: number }) {
    ${extra}
    return { solve: () => ({ problemId: spec.problemId, versionHash: "commit-page", scheme: spec.scheme, intervals: spec.intervals, status: "optimal", message: null, objective: 1, finalTime: 1, iterations: 3, constraintViolation: 0, errors: { objectiveAbs: 0, objectiveRel: 0, finalTimeAbs: 0, stateMax: 0, controlMax: 0 } }) };
  },
});
`;

const run = chromiumAvailable();

describe.runIf(run)("the commit page", () => {
  let server: RunningServer;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;
  let repo = "";
  let base = "";
  let head = "";

  beforeAll(async () => {
    repo = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-commit-page-"));
    fs.cpSync(path.join(ROOT, "problems", "pika-rover-dash"), path.join(repo, "problems", "pika-rover-dash"), { recursive: true });
    fs.mkdirSync(path.join(repo, "bench", "suites"), { recursive: true });
    fs.writeFileSync(path.join(repo, ".gitignore"), "node_modules\n*.db*\n.tmp\n");
    fs.writeFileSync(
      path.join(repo, "bench", "suites", "pocket.json"),
      JSON.stringify({ format: "arcwatch-suite/1", name: "pocket", problems: ["pika-rover-dash"], schemes: ["euler", "trapezoidal"], meshes: [{ intervals: 6 }], solver: { kind: "module", module: "../../exec.ts" } }),
    );
    fs.writeFileSync(path.join(repo, "exec.ts"), EXEC(""));
    git(repo, "init", "-q", "-b", "main");
    git(repo, "add", "-A");
    git(repo, "commit", "-q", "-m", "Pocket suite and its solver stand-in");
    base = git(repo, "rev-parse", "HEAD");
    git(repo, "checkout", "-q", "-b", "faster-setup");
    fs.writeFileSync(path.join(repo, "exec.ts"), EXEC('const label = "<script>window.__pwned = 1</script>"; void label;'));
    git(repo, "commit", "-q", "-am", "Keep the mesh label between solves", "-m", "The label was rebuilt on every solve.\nIt is now made once per case <b>and kept</b>.");
    head = git(repo, "rev-parse", "HEAD");
    server = await startTestServer({ env: { ARCWATCH_REPO: repo } });
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
  }, 300_000);

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
    if (repo) fs.rmSync(repo, { recursive: true, force: true });
  });

  it("opens from the branch's commits, shows body and diff, and queues a run and an A/B", { timeout: 120_000 }, async () => {
    await signInAs(page, server.url, "engineer");
    await page.goto(`${server.url}/run-suite?ref=faster-setup`);
    await hydrated(page);
    // The branch's own commit above, where it leaves main marked, main below.
    expect(await page.getAttribute(`[data-testid=branch-commits] [data-commit='${head}']`, "data-on-main")).toBe("no");
    expect(await page.getAttribute(`[data-testid=branch-commits] [data-commit='${base}']`, "data-on-main")).toBe("yes");
    expect(await page.textContent(`[data-commit='${base}'] [data-testid=fork-point]`)).toContain("faster-setup leaves main here");
    await Promise.all([page.waitForURL(new RegExp(`/commits/${head}$`)), page.click(`[data-testid=branch-commits] [data-commit='${head}'] a`)]);
    await hydrated(page);

    expect(await page.textContent("[data-testid=commit-subject]")).toBe("Keep the mesh label between solves");
    expect(await page.textContent("[data-testid=commit-body]")).toBe("The label was rebuilt on every solve.\nIt is now made once per case <b>and kept</b>.");
    expect(await page.locator("[data-testid=commit-body] b").count()).toBe(0);
    const file = page.locator("[data-diff-file='exec.ts']");
    expect(await file.locator("tr[data-kind=add]").count()).toBe(1);
    expect(await file.locator("tr[data-kind=add]").textContent()).toContain('const label = "<script>window.__pwned = 1</script>"; void label;');
    // Coloured by highlight.js: a keyword and a string inside the added line.
    expect(await file.locator("tr[data-kind=add] .hljs-keyword").first().textContent()).toBe("const");
    expect(await file.locator("tr[data-kind=add] .hljs-string").first().textContent()).toBe('"<script>window.__pwned = 1</script>"');
    expect(await page.locator("[data-testid=diff] script").count()).toBe(0);
    expect(await page.evaluate(() => (window as unknown as { __pwned?: number }).__pwned)).toBeUndefined();
    expect(await page.textContent("[data-testid=commit-runs]")).toContain("No run has measured this commit yet.");
    await screenshot(page, "commit-page");

    await page.selectOption("[data-testid=commit-suite]", "pocket");
    await Promise.all([page.waitForURL(/\?job=\d+&kind=bench$/), page.click("[data-testid=commit-run]")]);
    await hydrated(page);
    expect(await page.textContent("[data-testid=job-queued]")).toMatch(/Suite run queued as job \d+/);
    const benchJob = Number(/job=(\d+)/.exec(page.url())![1]);
    await Promise.all([page.waitForURL(/\?job=\d+&kind=ab$/), page.click("[data-testid=commit-ab]")]);
    await hydrated(page);
    expect(await page.textContent("[data-testid=job-queued]")).toMatch(/A\/B comparison with the parent queued as job \d+/);
    const abJob = Number(/job=(\d+)/.exec(page.url())![1]);
    // The A/B is listed on the page with its state before it runs.
    expect(await page.getAttribute("[data-testid=commit-ab-checks] [data-testid=ab-check]", "data-state")).toBe("awaiting");

    const jobs = (await (await page.request.get(`${server.url}/api/jobs`)).json()) as { jobs: { id: number; kind: string; status: string; payloadJson: Record<string, unknown> }[] };
    const b = jobs.jobs.find((j) => j.id === benchJob)!;
    const a = jobs.jobs.find((j) => j.id === abJob)!;
    expect(b).toMatchObject({ kind: "bench", status: "queued", payloadJson: { suite: "pocket", commit: head } });
    expect(a).toMatchObject({ kind: "ab", status: "queued", payloadJson: { suite: "pocket", base, head, cases: ["pika-rover-dash/euler/6", "pika-rover-dash/trapezoidal/6"] } });

    // The job page shows the A/B job as one.
    await page.goto(`${server.url}/run-suite?job=${abJob}`);
    await hydrated(page);
    expect(await page.textContent("[data-testid=job-panel] h2")).toContain(`interleaved A/B, suite pocket, ${head.slice(0, 10)} against ${base.slice(0, 10)}`);
    expect(await page.textContent("[data-testid=job-status]")).toBe("queued");

    // From the branch: its tip against where it leaves main.
    await page.goto(`${server.url}/run-suite?ref=faster-setup`);
    await hydrated(page);
    await Promise.all([page.waitForURL(/job=\d+$/), page.click("[data-testid=branch-ab]")]);
    await hydrated(page);
    const branchJob = Number(/job=(\d+)/.exec(page.url())![1]);
    expect(branchJob).toBeGreaterThan(abJob);
    expect(await page.textContent("[data-testid=job-panel] h2")).toContain(`interleaved A/B, suite pocket, ${head.slice(0, 10)} against ${base.slice(0, 10)}`);
  });

  it("shows a viewer the commit without buttons and refuses the viewer's post", { timeout: 60_000 }, async () => {
    await page.context().clearCookies();
    await signInAs(page, server.url, "viewer");
    await page.goto(`${server.url}/commits/${head.slice(0, 12)}`);
    await hydrated(page);
    expect(await page.textContent("[data-testid=commit-subject]")).toBe("Keep the mesh label between solves");
    expect(await page.locator("[data-testid=commit-run]").count()).toBe(0);
    expect(await page.textContent("[data-testid=commit-actions]")).toContain("needs the engineer role");
    const posted = await page.evaluate(async (url) => {
      const body = new URLSearchParams({ intent: "run", suite: "pocket" });
      const r = await fetch(url, { method: "POST", body, headers: { "content-type": "application/x-www-form-urlencoded" } });
      return r.status;
    }, `${server.url}/commits/${head}`);
    expect(posted).toBe(403);
    const missing = await page.goto(`${server.url}/commits/${"0".repeat(40)}`);
    expect(missing?.status()).toBe(404);
    const bad = await page.goto(`${server.url}/commits/not-a-sha`);
    expect(bad?.status()).toBe(404);
  });
});
