/**
 * In Debian's chromium against the built app, seeded with the demo data (a real quick-suite run
 * plus the labelled demo history): an admin reads every page at 390 px (a phone held upright)
 * and nothing is wider than the viewport; tables scroll inside their cards. The same pass checks
 * the vocabulary: no page prints an identifier-shaped metric or status name (snake_case or
 * camelCase outside code), so every such name went through app/vocabulary.ts. At 1440 px the
 * admin's navigation is one row.
 */
import { execFileSync } from "node:child_process";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot, signInAs } from "../helpers/browser";
import { startTestServer, type RunningServer } from "../helpers/server";

const run = chromiumAvailable();

/** Elements wider than the viewport that are not inside a scrolling (or clipping) box. */
async function overflowing(page: Page): Promise<{ docWidth: number; offenders: string[] }> {
  return page.evaluate(() => {
    const vw = document.documentElement.clientWidth;
    const clipped = (el: Element): boolean => {
      for (let p = el.parentElement; p && p !== document.body; p = p.parentElement) {
        const ox = getComputedStyle(p).overflowX;
        if (ox === "auto" || ox === "scroll" || ox === "hidden" || ox === "clip") return true;
      }
      return false;
    };
    const offenders: string[] = [];
    for (const el of Array.from(document.querySelectorAll("body *"))) {
      const r = el.getBoundingClientRect();
      if (r.width === 0 || r.height === 0) continue;
      if (r.right > vw + 1 && !clipped(el)) {
        const id = `${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ""}${el.getAttribute("data-testid") ? `[data-testid=${el.getAttribute("data-testid")}]` : ""}.${(el.getAttribute("class") ?? "").split(/\s+/).slice(0, 4).join(".")}`;
        offenders.push(`${id} right=${Math.round(r.right)}`);
      }
    }
    return { docWidth: document.documentElement.scrollWidth, offenders: offenders.slice(0, 8) };
  });
}

/** Identifier-shaped words in the visible text outside code, formulas and form values. */
async function identifiers(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const skip = (el: Element | null): boolean => !!el?.closest("code, pre, .katex, script, style, textarea, select, [data-ident], svg title");
    const out = new Set<string>();
    const walker = document.createTreeWalker(document.querySelector("main") ?? document.body, NodeFilter.SHOW_TEXT);
    for (let n = walker.nextNode(); n; n = walker.nextNode()) {
      if (skip(n.parentElement)) continue;
      const t = n.textContent ?? "";
      for (const m of t.matchAll(/\b[a-z]{2,}(?:_[a-z0-9]{2,})+\b/g)) out.add(m[0]);
      for (const m of t.matchAll(/\b[a-z]{2,}[A-Z][A-Za-z]+\b/g)) out.add(m[0]);
    }
    return [...out];
  });
}

describe.runIf(run)("every page at phone width; one vocabulary on screen", () => {
  let server: RunningServer;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;

  beforeAll(async () => {
    // The demo seed runs the real quick suite once (minutes on a busy machine).
    process.env.ARCWATCH_DEMO_SEED = "1";
    try {
      server = await startTestServer();
    } finally {
      delete process.env.ARCWATCH_DEMO_SEED;
    }
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
    await signInAs(page, server.url, "admin");
  }, 900_000);

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
  });

  async function pagesToRead(): Promise<string[]> {
    const api = async (p: string) => (await page.request.get(`${server.url}${p}`)).json();
    const runList = ((await api("/api/runs?pageSize=5")) as { rows: { id: string }[] }).rows;
    const runId = runList[0]?.id;
    const runPage = runId ? await page.request.get(`${server.url}/runs/${runId}`).then((r) => r.text()) : "";
    const caseId = runPage.match(/href="\/cases\/(\d+)"/)?.[1];
    const regsHtml = await page.request.get(`${server.url}/regressions?demo=all`).then((r) => r.text());
    const regId = regsHtml.match(/href="\/regressions\/(\d+)"/)?.[1];
    const commitLink = regId ? (await page.request.get(`${server.url}/regressions/${regId}`).then((r) => r.text())).match(/href="(\/(?:regressions\/\d+\/)?commits\/[0-9a-f]+)"/)?.[1] : undefined;
    return [
      "/",
      "/runs",
      ...(runId ? [`/runs/${runId}`] : []),
      ...(caseId ? [`/cases/${caseId}`] : []),
      "/history",
      "/problems",
      "/problems/pika-rover-dash",
      "/problems/new",
      "/compare",
      "/compare?problem=kestrel-2-ascent",
      "/regressions",
      ...(regId ? [`/regressions/${regId}`] : []),
      ...(commitLink ? [commitLink] : []),
      // the commit page of the checkout's own HEAD: always in the repository the server reads
      `/commits/${execFileSync("git", ["rev-parse", "HEAD"], { encoding: "utf8" }).trim()}`,
      "/run-suite",
      "/settings",
      "/account",
      "/admin/users",
      "/admin/tokens",
      "/admin/outbox",
      "/glossary",
    ];
  }

  it("at 390 px nothing is wider than the viewport, and no page prints an identifier", { timeout: 300_000 }, async () => {
    await page.setViewportSize({ width: 390, height: 844 });
    const paths = await pagesToRead();
    // Every page of the app; a commit page only when the regression's commits are in the repository (demo ones are not).
    expect(paths.length, paths.join(" ")).toBeGreaterThanOrEqual(20);
    const problems: string[] = [];
    for (const p of paths) {
      await page.goto(`${server.url}${p}`);
      await hydrated(page);
      await page.waitForTimeout(300); // charts draw after hydration
      const o = await overflowing(page);
      if (o.docWidth > 390 || o.offenders.length) problems.push(`${p}: document ${o.docWidth} px; ${o.offenders.join("; ")}`);
      const ids = await identifiers(page);
      if (ids.length) problems.push(`${p}: prints identifiers ${ids.join(", ")} (define them in app/vocabulary.ts)`);
      await screenshot(page, `narrow${p.replace(/[/?=&]+/g, "-")}`);
    }
    expect(problems).toEqual([]);
    // The compact menu opens, lists every page, and closes when a link is followed.
    await page.goto(`${server.url}/`);
    await hydrated(page);
    expect(await page.isVisible("[data-testid=main-nav]")).toBe(false);
    await page.click("[data-testid=menu-button]");
    expect(await page.isVisible("[data-testid=main-nav] >> text=Regressions")).toBe(true);
    await page.click("[data-testid=main-nav] >> text=Regressions");
    await page.waitForURL(`${server.url}/regressions`);
    await expect.poll(() => page.isVisible("[data-testid=main-nav]")).toBe(false);
  });

  it("at 1440 px the admin's navigation is one row", { timeout: 60_000 }, async () => {
    await page.setViewportSize({ width: 1440, height: 900 });
    await page.goto(`${server.url}/`);
    await hydrated(page);
    const tops = await page.locator("[data-testid=main-nav] a").evaluateAll((as) => as.filter((a) => (a as HTMLElement).offsetParent !== null).map((a) => Math.round(a.getBoundingClientRect().top)));
    expect(tops.length).toBeGreaterThanOrEqual(11);
    expect(Math.max(...tops) - Math.min(...tops)).toBeLessThanOrEqual(2);
    const o = await overflowing(page);
    expect(o.docWidth).toBeLessThanOrEqual(1440);
    await screenshot(page, "wide-admin-nav");
  });
});
