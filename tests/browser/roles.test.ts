/**
 * The built app in Debian's chromium: signed-out visitors are sent to sign-in (pages) or
 * refused with 401 (API); each demo role signs in and sees what it may do; forged requests
 * beyond a role are refused with 403; cross-origin POSTs are refused. One screenshot per
 * page goes to tests/screenshots/.
 */
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser, screenshot } from "../helpers/browser";
import { startTestServer, type RunningServer } from "../helpers/server";

const DEMO = {
  viewer: { email: "viewer@arcwatch.test", password: "viewer-demo-pass" },
  engineer: { email: "engineer@arcwatch.test", password: "engineer-demo-pass" },
  admin: { email: "admin@arcwatch.test", password: "admin-demo-pass" },
} as const;
type DemoRole = keyof typeof DEMO;

const run = chromiumAvailable();

describe.runIf(run)("roles in the browser", () => {
  let server: RunningServer;
  let context: BrowserContext;
  let closeBrowser: () => Promise<void>;
  let page: Page;
  const requested: string[] = [];

  beforeAll(async () => {
    server = await startTestServer();
    const b = await launchBrowser();
    context = b.context;
    closeBrowser = b.close;
    page = context.pages()[0] ?? (await context.newPage());
    page.on("request", (r) => requested.push(r.url()));
  });

  afterAll(async () => {
    await closeBrowser?.();
    await server?.stop();
  });

  const url = (p: string) => `${server.url}${p}`;

  async function signInAs(role: DemoRole) {
    await context.clearCookies();
    await page.goto(url("/signin"));
    await hydrated(page);
    await page.fill("input[name=email]", DEMO[role].email);
    await page.fill("input[name=password]", DEMO[role].password);
    await Promise.all([page.waitForURL(url("/")), page.click("button[type=submit]")]);
    await hydrated(page);
    await expect.poll(() => page.textContent("[data-role]")).toBe(role);
  }

  /** A same-origin request from inside the page, as a forging user would send it. */
  async function pageFetch(path: string, init: { method: string; form?: Record<string, string>; json?: unknown }) {
    return page.evaluate(
      async ({ path, init }) => {
        const body = init.form ? new URLSearchParams(init.form) : init.json !== undefined ? JSON.stringify(init.json) : undefined;
        const headers: Record<string, string> = init.json !== undefined ? { "Content-Type": "application/json" } : {};
        const r = await fetch(path, { method: init.method, body, headers, redirect: "manual" });
        return { status: r.status, text: await r.text() };
      },
      { path, init },
    );
  }

  it("sends a signed-out visitor to sign-in, and answers the API with 401 JSON", async () => {
    await context.clearCookies();
    await page.goto(url("/admin/users"));
    await hydrated(page);
    expect(page.url()).toBe(url("/signin?redirectTo=%2Fadmin%2Fusers"));
    await expect.poll(() => page.textContent("footer")).toMatch(/numerical benchmarks.+independent\s+verification/);
    await screenshot(page, "signin");
    for (const p of ["/", "/account", "/no-such-page"]) {
      const r = await fetch(url(p), { redirect: "manual" });
      expect(r.status, p).toBe(302);
      expect(r.headers.get("location"), p).toMatch(/^\/signin/);
    }
    for (const p of ["/api/me", "/api/health", "/api/jobs", "/api/unknown/thing"]) {
      const r = await fetch(url(p));
      expect(r.status, p).toBe(401);
      expect(r.headers.get("content-type"), p).toMatch(/application\/json/);
      expect(await r.json(), p).toHaveProperty("error");
    }
    const post = await fetch(url("/api/jobs"), {
      method: "POST",
      headers: { Origin: server.url, "Content-Type": "application/json" },
      body: JSON.stringify({ kind: "bench", payload: { suite: "quick" } }),
    });
    expect(post.status).toBe(401);
  });

  it("shows one generic error for a wrong password and field errors that keep the typed e-mail", async () => {
    await page.goto(url("/signin"));
    await hydrated(page);
    await page.fill("input[name=email]", "viewer@arcwatch.test");
    await page.fill("input[name=password]", "not-the-password");
    await page.click("button[type=submit]");
    await expect.poll(() => page.textContent("[data-form-error]")).toBe("That e-mail and password do not match an account.");
    expect(await page.inputValue("input[name=email]")).toBe("viewer@arcwatch.test");
    await page.fill("input[name=email]", "nobody@arcwatch.test");
    await page.click("button[type=submit]");
    await expect.poll(() => page.inputValue("input[name=email]")).toBe("nobody@arcwatch.test");
    await expect.poll(() => page.textContent("[data-form-error]")).toBe("That e-mail and password do not match an account.");
    await page.fill("input[name=email]", "viewer@");
    await page.fill("input[name=password]", "");
    await page.click("button[type=submit]");
    await expect.poll(() => page.textContent("[data-field-error=email]")).toBe("Enter a valid e-mail address.");
    expect(await page.textContent("[data-field-error=password]")).toBe("Enter your password.");
    expect(await page.inputValue("input[name=email]")).toBe("viewer@");
    await screenshot(page, "signin-errors");
  });

  it("viewer: reads the overview; cannot open admin pages, queue runs or change roles", async () => {
    await signInAs("viewer");
    expect(await page.textContent("[data-testid=count-runs]")).toBe("0");
    expect(await page.textContent("[data-testid=empty-state]")).toContain("npm run bench -- --suite quick");
    expect(await page.locator("nav >> text=Users").count()).toBe(0);
    expect(await page.locator("form[aria-label='Queue a benchmark job']").count()).toBe(0);
    await screenshot(page, "overview-viewer");

    await page.goto(url("/admin/users"));
    await hydrated(page);
    expect(await page.getAttribute("[data-error-status]", "data-error-status")).toBe("403");
    await screenshot(page, "admin-users-forbidden-viewer");
    await page.goto(url("/admin/tokens"));
    await hydrated(page);
    expect(await page.getAttribute("[data-error-status]", "data-error-status")).toBe("403");
    const mint = await pageFetch("/admin/tokens", { method: "POST", form: { intent: "create", name: "mine", role: "admin" } });
    expect(mint.status).toBe(403);

    // Forged requests beyond the viewer role, sent from the viewer's own signed-in page.
    const promote = await pageFetch("/admin/users", { method: "POST", form: { intent: "role", userId: "1", role: "admin" } });
    expect(promote.status).toBe(403);
    const create = await pageFetch("/admin/users", {
      method: "POST",
      form: { intent: "create", email: "sneaky@arcwatch.test", name: "S", role: "admin", password: "sneaky-password" },
    });
    expect(create.status).toBe(403);
    const queuePage = await pageFetch("/?index", { method: "POST", form: { suite: "quick" } });
    expect(queuePage.status).toBe(403);
    const queueApi = await pageFetch("/api/jobs", { method: "POST", json: { kind: "bench", payload: { suite: "quick" } } });
    expect(queueApi.status).toBe(403);
    expect(JSON.parse(queueApi.text)).toEqual({ error: "This needs the engineer role." });
    const me = await pageFetch("/api/me", { method: "GET" });
    expect(JSON.parse(me.text)).toMatchObject({ email: "viewer@arcwatch.test", role: "viewer" });
    const jobs = JSON.parse((await pageFetch("/api/jobs", { method: "GET" })).text) as { jobs: unknown[] };
    expect(jobs.jobs).toHaveLength(0);
  });

  it("engineer: queues a run (page and API, with field errors); cannot manage users", async () => {
    await signInAs("engineer");
    await page.fill("input[name=suite]", "Not A Suite!");
    await page.click("form[aria-label='Queue a benchmark job'] button[type=submit]");
    await expect.poll(() => page.textContent("[data-field-error=suite]")).toMatch(/Suite names use/);
    expect(await page.inputValue("input[name=suite]")).toBe("Not A Suite!");
    await page.fill("input[name=suite]", "quick");
    await page.click("form[aria-label='Queue a benchmark job'] button[type=submit]");
    await expect.poll(() => page.textContent("[data-notice]")).toMatch(/^Queued job 1: bench suite quick\.$/);
    await expect.poll(() => page.locator("[data-job-row]").count()).toBe(1);
    await screenshot(page, "overview-engineer");

    // a commit that is not in the repository is refused at once (README: 400 with the field errors)
    const unknown = await pageFetch("/api/jobs", { method: "POST", json: { kind: "bench", payload: { suite: "full", commit: "abc1234" } } });
    expect(unknown.status).toBe(400);
    expect(JSON.parse(unknown.text).fields["payload.commit"][0]).toMatch(/abc1234 is not a commit/);
    const api = await pageFetch("/api/jobs", { method: "POST", json: { kind: "bench", payload: { suite: "full" } } });
    expect(api.status).toBe(201);
    expect(JSON.parse(api.text).job).toMatchObject({ id: 2, kind: "bench", status: "queued", payloadJson: { suite: "full", commit: expect.stringMatching(/^[0-9a-f]{40}$/) } });
    const bad = await pageFetch("/api/jobs", { method: "POST", json: { kind: "bench", payload: { suite: "" } } });
    expect(bad.status).toBe(400);

    await page.goto(url("/admin/users"));
    await hydrated(page);
    expect(await page.getAttribute("[data-error-status]", "data-error-status")).toBe("403");
    const promote = await pageFetch("/admin/users", { method: "POST", form: { intent: "role", userId: "2", role: "admin" } });
    expect(promote.status).toBe(403);
  });

  it("admin: creates a user (field errors keep typed values), changes a role", async () => {
    await signInAs("admin");
    await page.click("nav >> text=Users");
    await page.waitForURL(url("/admin/users"));
    await expect.poll(() => page.locator("[data-user-row]").count()).toBe(3);
    const form = page.locator("form[aria-label='Add a user']");
    await form.locator("input[name=name]").fill("Orla Okafor");
    await form.locator("input[name=email]").fill("orla@");
    await form.locator("select[name=role]").selectOption("engineer");
    await form.locator("input[name=password]").fill("short");
    await form.locator("button[type=submit]").click();
    await expect.poll(() => form.locator("[data-field-error=email]").textContent()).toBe("Enter a valid e-mail address.");
    expect(await form.locator("[data-field-error=password]").textContent()).toBe("Use at least 8 characters.");
    expect(await form.locator("input[name=name]").inputValue()).toBe("Orla Okafor");
    expect(await form.locator("input[name=email]").inputValue()).toBe("orla@");
    expect(await form.locator("select[name=role]").inputValue()).toBe("engineer");
    await screenshot(page, "admin-users-errors");

    await form.locator("input[name=email]").fill("orla@arcwatch.test");
    await form.locator("input[name=password]").fill("orla-first-pass");
    await form.locator("button[type=submit]").click();
    await expect.poll(() => page.textContent("[data-notice]")).toBe("Created orla@arcwatch.test as engineer.");
    await expect.poll(() => page.locator("[data-user-row]").count()).toBe(4);

    const row = page.locator("[data-user-row='orla@arcwatch.test']");
    await row.locator("select[name=role]").selectOption("viewer");
    await row.locator("button", { hasText: "Save" }).click();
    await expect.poll(() => page.textContent("[data-notice]")).toBe("orla@arcwatch.test is now viewer.");

    await row.locator("[data-access-button]").click();
    await expect.poll(() => page.textContent("[data-notice]")).toBe("orla@arcwatch.test is disabled.");
    const orla = await fetch(url("/signin"), {
      method: "POST",
      headers: { Origin: server.url, "Content-Type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams({ email: "orla@arcwatch.test", password: "orla-first-pass" }),
      redirect: "manual",
    });
    expect(orla.status).toBe(401);
    expect(await page.locator("[data-user-row='admin@arcwatch.test'] [data-access-button]").isDisabled()).toBe(true);

    const self = page.locator("[data-user-row='admin@arcwatch.test']");
    await self.locator("select[name=role]").selectOption("viewer");
    await self.locator("button", { hasText: "Save" }).click();
    await expect.poll(() => self.locator("[data-field-error=role]").textContent()).toBe("At least one admin must remain.");
    expect(await self.locator("select[name=role]").inputValue()).toBe("admin");
    await screenshot(page, "admin-users");
  });

  it("admin: creates an API token shown once, which authenticates until revoked", async () => {
    await page.click("nav >> text=API tokens");
    await page.waitForURL(url("/admin/tokens"));
    await hydrated(page);
    const form = page.locator("form[aria-label='Create a token']");
    await form.locator("button[type=submit]").click();
    await expect.poll(() => form.locator("[data-field-error=name]").textContent()).toMatch(/Name the token/);
    await form.locator("input[name=name]").fill("ci runner");
    await form.locator("select[name=role]").selectOption("engineer");
    await form.locator("button[type=submit]").click();
    await expect.poll(() => page.locator("[data-token]").count()).toBe(1);
    const token = (await page.textContent("[data-token]"))!.trim();
    expect(token).toMatch(/^aw_[A-Za-z0-9_-]{43}$/);
    await screenshot(page, "admin-tokens");

    const bearer = { Authorization: `Bearer ${token}` };
    const me = await fetch(url("/api/me"), { headers: bearer });
    expect(await me.json()).toMatchObject({ role: "engineer", via: "token" });
    const queued = await fetch(url("/api/jobs"), {
      method: "POST",
      headers: { ...bearer, "Content-Type": "application/json" },
      body: JSON.stringify({ kind: "bench", payload: { suite: "quick" } }),
    });
    expect(queued.status).toBe(201);

    await page.reload();
    await hydrated(page);
    const row = page.locator("[data-token-row='ci runner']");
    expect(await row.textContent()).not.toContain(token.slice(12));
    await row.locator("button[type=submit]").click();
    await expect.poll(() => page.textContent("[data-notice]")).toBe("Token revoked.");
    expect((await fetch(url("/api/me"), { headers: bearer })).status).toBe(401);
    expect((await fetch(url("/api/me"), { headers: { Authorization: "Bearer aw_made-up" } })).status).toBe(401);
  });

  it("account page, theme persisted without flash, sign-out", async () => {
    await page.goto(url("/account"));
    await hydrated(page);
    expect(await page.textContent("main h1")).toBe("Account");
    const pw = page.locator("form[aria-label='Change password']");
    await pw.locator("input[name=currentPassword]").fill("not-my-password");
    await pw.locator("input[name=newPassword]").fill("admin-new-pass-1");
    await pw.locator("input[name=confirmPassword]").fill("admin-new-pass-2");
    await pw.locator("button[type=submit]").click();
    await expect.poll(() => pw.locator("[data-field-error=confirmPassword]").textContent()).toBe("The two new passwords differ.");
    await pw.locator("input[name=confirmPassword]").fill("admin-new-pass-1");
    await pw.locator("button[type=submit]").click();
    await expect.poll(() => pw.locator("[data-field-error=currentPassword]").textContent()).toBe("That is not your current password.");
    await screenshot(page, "account-errors");
    await pw.locator("input[name=currentPassword]").fill(DEMO.admin.password);
    await pw.locator("input[name=newPassword]").fill("admin-new-pass-1");
    await pw.locator("input[name=confirmPassword]").fill("admin-new-pass-1");
    await pw.locator("button[type=submit]").click();
    await expect.poll(() => page.textContent("[data-notice]")).toBe("Password changed. Other sessions have been signed out.");
    // This session survives its own password change.
    expect(JSON.parse((await pageFetch("/api/me", { method: "GET" })).text)).toMatchObject({ role: "admin" });
    await screenshot(page, "account");
    const before = await page.getAttribute("html", "data-theme");
    await page.click("[data-testid=theme-toggle]");
    const after = before === "dark" ? "light" : "dark";
    expect(await page.getAttribute("html", "data-theme")).toBe(after);
    // The theme is applied by the head script before hydration: check the server HTML + script result.
    await page.reload();
    expect(await page.evaluate(() => document.documentElement.dataset.theme)).toBe(after);
    await hydrated(page);
    await page.goto(url("/"));
    await hydrated(page);
    await screenshot(page, `overview-admin-${after}`);

    await Promise.all([page.waitForURL(url("/signin")), page.click("[data-testid=sign-out]")]);
    const me = await pageFetch("/api/me", { method: "GET" });
    expect(me.status).toBe(401);
  });

  it("loads everything, fonts included, from the server itself", async () => {
    expect(requested.length).toBeGreaterThan(20);
    const foreign = requested.filter((u) => !u.startsWith(`${server.url}/`) && !u.startsWith("data:"));
    expect(foreign).toEqual([]);
    expect(requested.some((u) => /inter-latin-\d+-normal-[\w-]+\.woff2$/.test(u))).toBe(true);
    expect(requested.some((u) => /jetbrains-mono-latin-\d+-normal-[\w-]+\.woff2$/.test(u))).toBe(true);
    await page.goto(url("/signin"));
    await hydrated(page);
    await page.evaluate(() => document.fonts.ready);
    const loaded = await page.evaluate(() =>
      [...document.fonts].filter((f) => f.status === "loaded").map((f) => f.family.replace(/["']/g, "")),
    );
    expect(loaded).toContain("Inter"); // the sign-in page has no monospace text; its font request is checked above
  });

  it("refuses cross-origin state changes even with a valid session", async () => {
    const signin = await fetch(url("/signin"), {
      method: "POST",
      headers: { Origin: server.url, "Content-Type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams(DEMO.engineer),
      redirect: "manual",
    });
    expect(signin.status).toBe(302);
    const cookie = signin.headers.get("set-cookie")!.split(";")[0]!;
    const evil = { Cookie: cookie, Origin: "http://attacker.invalid" };
    const api = await fetch(url("/api/jobs"), {
      method: "POST",
      headers: { ...evil, "Content-Type": "application/json" },
      body: JSON.stringify({ kind: "bench", payload: { suite: "quick" } }),
    });
    expect(api.status).toBe(403);
    expect((await api.json()).error).toMatch(/Cross-origin request refused/);
    const pagePost = await fetch(url("/?index"), {
      method: "POST",
      headers: { ...evil, "Content-Type": "application/x-www-form-urlencoded" },
      body: "suite=quick",
      redirect: "manual",
    });
    // React Router itself answers a foreign-Origin document POST with 400; our check answers 403.
    expect([400, 403]).toContain(pagePost.status);
    const noOrigin = await fetch(url("/?index"), {
      method: "POST",
      headers: { Cookie: cookie, "Content-Type": "application/x-www-form-urlencoded" },
      body: "suite=quick",
      redirect: "manual",
    });
    expect(noOrigin.status).toBe(403);
    const list = await fetch(url("/api/jobs"), { headers: { Cookie: cookie } });
    expect(((await list.json()) as { jobs: unknown[] }).jobs).toHaveLength(3);
  });
});
