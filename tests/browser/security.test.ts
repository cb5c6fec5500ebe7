/**
 * Hardening checks through HTTP against the real server (scripts/serve.mjs on the built app),
 * started as a fresh `npm start` would be: no SESSION_SECRET. ARCWATCH_TRUST_PROXY=1 lets the
 * test speak from several client addresses (X-Forwarded-For); one solver thread with a queue
 * of one and a 5 s wall-clock limit make the pool's limits reachable in a test.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import Database from "better-sqlite3";
import { createCookie, createCookieSessionStorage } from "react-router";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromiumAvailable, hydrated, launchBrowser } from "../helpers/browser";
import { chainProblem } from "../helpers/load-problem";
import { REDIRECT_BYPASSES } from "../helpers/redirect-bypasses";
import { ROOT, startTestServer, type RunningServer } from "../helpers/server";

let server: RunningServer;
beforeAll(async () => {
  server = await startTestServer({
    env: {
      SESSION_SECRET: "",
      ARCWATCH_TRUST_PROXY: "1",
      ARCWATCH_SOLVER_WORKERS: "1",
      ARCWATCH_SOLVER_QUEUE: "1",
      ARCWATCH_TRIAL_WALL_SECONDS: "5",
      ARCWATCH_JOB_WORKER: "0",
    },
  });
}, 400_000);
afterAll(async () => {
  await server?.stop();
});

const DEMO = {
  viewer: ["viewer@arcwatch.test", "viewer-demo-pass"],
  engineer: ["engineer@arcwatch.test", "engineer-demo-pass"],
  admin: ["admin@arcwatch.test", "admin-demo-pass"],
} as const;

async function post(p: string, fields: Record<string, string>, headers: Record<string, string> = {}) {
  const r = await fetch(`${server.url}${p}`, {
    method: "POST",
    headers: { Origin: server.url, "Content-Type": "application/x-www-form-urlencoded", ...headers },
    body: new URLSearchParams(fields),
    redirect: "manual",
  });
  return { status: r.status, location: r.headers.get("location"), cookie: r.headers.get("set-cookie")?.split(";")[0] ?? null, headers: r.headers, text: await r.text() };
}
const signIn = (who: readonly [string, string], address: string, extra: Record<string, string> = {}) =>
  post("/signin", { email: who[0], password: who[1], ...extra }, { "X-Forwarded-For": address });
async function cookieOf(who: readonly [string, string], address: string): Promise<string> {
  const r = await signIn(who, address);
  expect(r.status, r.text.slice(0, 300)).toBe(302);
  return r.cookie!;
}
async function get(p: string, cookie?: string) {
  const r = await fetch(`${server.url}${p}`, { headers: cookie ? { Cookie: cookie } : {}, redirect: "manual" });
  return { status: r.status, location: r.headers.get("location"), headers: r.headers, text: await r.text() };
}
/** An admin session kept from the first test, for checks that need a signed-in caller. */
let adminCookie = "";
const meStatus = async (cookie: string) => (await get("/api/me", cookie)).status;

describe("1. no public default secret", () => {
  it("generates a random secret beside the database, owner-only", () => {
    const file = path.join(path.dirname(server.dbFile), "session-secret");
    expect(fs.statSync(file).mode & 0o777).toBe(0o600);
    expect(fs.readFileSync(file, "utf8").trim()).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(server.log()).toMatch(/generated a random session secret/);
  });

  it("refuses cookies signed with any constant found in the repository", async () => {
    const cookie = await cookieOf(DEMO.admin, "192.0.2.1");
    adminCookie = cookie;
    expect(await meStatus(cookie)).toBe(200);
    const [, value] = cookie.split("=");
    const id = JSON.parse(Buffer.from(decodeURIComponent(value!).split(".")[0]!, "base64").toString("utf8")) as string;

    // Every string literal of the repository's own text files (and the old development default).
    const constants = new Set<string>(["arcwatch-development-secret-do-not-use-in-production"]);
    const tracked = execFileSync("git", ["ls-files"], { cwd: ROOT, encoding: "utf8" }).split("\n").filter((f) => /\.(ts|tsx|mjs|js|json|md|sql|sh)$/.test(f) || f === ".ci/run");
    for (const f of tracked) {
      const full = path.join(ROOT, f);
      if (!fs.existsSync(full) || fs.statSync(full).size > 2_000_000 || f.endsWith("package-lock.json")) continue;
      const text = fs.readFileSync(full, "utf8");
      for (const m of text.matchAll(/(["'`])((?:(?!\1)[^\\\n]|\\.){6,200})\1/g)) constants.add(m[2]!);
      if (f.endsWith(".md")) for (const w of text.split(/[\s`'"|()]+/)) if (w.length >= 8 && w.length <= 200) constants.add(w);
    }
    expect(constants.size).toBeGreaterThan(1000);
    let accepted = 0;
    for (const secret of constants) {
      // The server's cookie verifies under `secret` only if the server signs with it.
      if ((await createCookie("__arcwatch", { secrets: [secret] }).parse(cookie)) === id) accepted++;
    }
    expect(accepted).toBe(0);

    // And through the server: the same id re-signed, and the old cookie format, with the old default.
    const dev = "arcwatch-development-secret-do-not-use-in-production";
    const resigned = (await createCookie("__arcwatch", { secrets: [dev] }).serialize(id)).split(";")[0]!;
    expect(await meStatus(resigned)).toBe(401);
    const old = createCookieSessionStorage({ cookie: { name: "__arcwatch", secrets: [dev] } });
    const s = await old.getSession();
    s.set("userId", 3);
    s.set("sessionVersion", 1);
    s.set("signedInAt", Date.now());
    expect(await meStatus((await old.commitSession(s)).split(";")[0]!)).toBe(401);
  });
});

describe("3. sessions that end (and issue 19: a password change without JavaScript)", () => {
  it("sign-out ends that session only; an account page lists sessions and ends one", async () => {
    const a = await cookieOf(DEMO.viewer, "192.0.2.11");
    const b = await cookieOf(DEMO.viewer, "192.0.2.12");
    expect(await meStatus(a)).toBe(200);
    const out = await post("/signout", {}, { Cookie: a });
    expect(out.status).toBe(302);
    expect(await meStatus(a)).toBe(401);
    expect(await meStatus(b)).toBe(200);

    const c = await cookieOf(DEMO.viewer, "192.0.2.13");
    const page = await get("/account", c);
    expect(page.status).toBe(200);
    expect(page.text).toContain('data-session="current"');
    expect(page.text).toContain("192.0.2.12");
    const hashes = [...page.text.matchAll(/name="session" value="([0-9a-f]{64})"/g)].map((m) => m[1]!);
    expect(hashes.length).toBeGreaterThanOrEqual(1);
    for (const h of hashes) expect((await post("/account", { intent: "end-session", session: h }, { Cookie: c })).status).toBe(200);
    expect(await meStatus(b)).toBe(401);
    expect(await meStatus(c)).toBe(200);
  });

  it("a password change posted as a plain form keeps this session and ends the others", async () => {
    const mine = await cookieOf(DEMO.viewer, "192.0.2.14");
    const other = await cookieOf(DEMO.viewer, "192.0.2.15");
    // A document POST, as a browser without JavaScript sends it: the page answers at once.
    const r = await post("/account", { intent: "password", currentPassword: DEMO.viewer[1], newPassword: "viewer-new-pass-1", confirmPassword: "viewer-new-pass-1" }, { Cookie: mine, "X-Forwarded-For": "192.0.2.14" });
    expect(r.status, r.text.slice(0, 200)).toBe(200);
    expect(r.text).toContain("Password changed.");
    expect(await meStatus(mine)).toBe(200);
    expect((await get("/account", mine)).status).toBe(200);
    expect(await meStatus(other)).toBe(401);
    expect((await signIn(["viewer@arcwatch.test", "viewer-new-pass-1"], "192.0.2.16")).status).toBe(302);
  });
});

describe("4. throttling under parallel requests", () => {
  it("30 wrong passwords at once: exactly 5 are checked; the right one is then refused from that address only", async () => {
    const wrong = await Promise.all(Array.from({ length: 30 }, (_, i) => signIn([DEMO.engineer[0], `wrong-pass-${i}`], "198.51.100.7")));
    const statuses = wrong.map((r) => r.status);
    expect(statuses.filter((s) => s === 401)).toHaveLength(5);
    expect(statuses.filter((s) => s === 429)).toHaveLength(25);
    expect((await signIn(DEMO.engineer, "198.51.100.7")).status).toBe(429);
    // The owner at another address is not locked out by a stranger's failures.
    expect((await signIn(DEMO.engineer, "203.0.113.9")).status).toBe(302);
  });

  it("29 wrong and the right one at once: at most 5 wrong passwords reach the check", async () => {
    const tries = Array.from({ length: 30 }, (_, i) => (i === 17 ? DEMO.admin[1] : `wrong-pass-${i}`));
    const rs = await Promise.all(tries.map((p) => signIn([DEMO.admin[0], p], "198.51.100.8")));
    const checkedWrong = rs.filter((r) => r.status === 401).length;
    const signedIn = rs.filter((r) => r.status === 302).length;
    expect(checkedWrong).toBeLessThanOrEqual(5);
    // The right one may arrive among the first five (then it gives its own place back) or be refused.
    expect(checkedWrong + signedIn).toBeLessThanOrEqual(6);
    expect(rs.filter((r) => r.status === 429).length).toBeGreaterThanOrEqual(24);
  });

  it("failures spread over many addresses lock the account briefly (slower back-off)", async () => {
    const account = "someone-else@arcwatch.test";
    for (let i = 0; i < 10; i++) expect((await signIn([account, `spread-${i}-pass`], `198.51.100.${100 + i}`)).status).toBe(401);
    const r = await signIn([account, "any-password-1"], "203.0.113.50");
    expect(r.status).toBe(429);
    const db = new Database(server.dbFile, { readonly: true });
    try {
      const row = db.prepare("select locked_until from auth_throttle where key = ?").get(`account:${account}`) as { locked_until: number };
      expect(row.locked_until - Date.now()).toBeGreaterThan(0);
      expect(row.locked_until - Date.now()).toBeLessThanOrEqual(2 * 60_000);
    } finally {
      db.close();
    }
  });

  it("throttles the current-password check of the account page", async () => {
    const c = await cookieOf(DEMO.engineer, "203.0.113.9");
    for (let i = 0; i < 5; i++) {
      const r = await post("/account", { intent: "password", currentPassword: `nope-${i}-pass`, newPassword: "whatever-pass-1", confirmPassword: "whatever-pass-1" }, { Cookie: c, "X-Forwarded-For": "203.0.113.9" });
      expect(r.status).toBe(400);
    }
    const r = await post("/account", { intent: "password", currentPassword: DEMO.engineer[1], newPassword: "whatever-pass-1", confirmPassword: "whatever-pass-1" }, { Cookie: c, "X-Forwarded-For": "203.0.113.9" });
    expect(r.status).toBe(429);
    expect(r.text).toContain("Too many failed sign-in attempts");
  });
});

describe("5. no open redirect", () => {
  it("answers every known bypass with a same-origin Location", async () => {
    const c = await cookieOf(["viewer@arcwatch.test", "viewer-new-pass-1"], "192.0.2.30");
    for (const v of REDIRECT_BYPASSES) {
      const r = await get(`/signin?redirectTo=${encodeURIComponent(v)}`, c);
      expect(r.status, JSON.stringify(v)).toBe(302);
      expect(r.location, JSON.stringify(v)).toBe("/");
    }
    const r = await signIn(["viewer@arcwatch.test", "viewer-new-pass-1"], "192.0.2.31", { redirectTo: "/\t/evil.example" });
    expect(r.location).toBe("/");
    expect((await signIn(["viewer@arcwatch.test", "viewer-new-pass-1"], "192.0.2.31", { redirectTo: "/runs?branch=main" })).location).toBe("/runs?branch=main");
  });
});

/** Sends only the request head (and optionally some body) and resolves with the first response. */
function rawRequest(p: string, headers: Record<string, string>, feed?: (req: http.ClientRequest) => void): Promise<{ status: number; body: string; sent: number }> {
  return new Promise((resolve, reject) => {
    let sent = 0;
    let answered = false;
    const u = new URL(p, server.url);
    const req = http.request({ host: u.hostname, port: u.port, path: u.pathname, method: "POST", headers: { Origin: server.url, ...headers } }, (res) => {
      answered = true;
      let body = "";
      res.on("data", (d) => (body += d));
      const done = () => resolve({ status: res.statusCode ?? 0, body, sent });
      res.on("end", done);
      res.on("close", done);
      res.on("error", done);
    });
    // The server closes the connection after refusing; a write in flight may then fail.
    req.on("error", (err) => {
      if (!answered) reject(err);
    });
    const write = req.write.bind(req);
    (req as unknown as { write: (chunk: Buffer) => boolean }).write = (chunk: Buffer) => {
      sent += chunk.length;
      return write(chunk);
    };
    if (feed) feed(req);
    else req.flushHeaders();
  });
}

describe("6. bodies bounded before they are read", () => {
  it("refuses a declared 64 MB form, and an API body from an anonymous caller, before any byte is sent", async () => {
    const form = await rawRequest("/signin", { "Content-Type": "application/x-www-form-urlencoded", "Content-Length": String(64 * 1024 * 1024) });
    expect(form.status).toBe(413);
    expect(form.sent).toBe(0);
    const anon = await rawRequest("/api/regressions/1", { "Content-Type": "application/json", "Content-Length": String(64 * 1024 * 1024) });
    expect(anon.status).toBe(401);
    const big = await rawRequest("/api/regressions/1", { Cookie: adminCookie, "Content-Type": "application/json", "Content-Length": String(64 * 1024 * 1024) });
    expect(big.status).toBe(413);
  });

  it("answers an upload without a length with 413, and cuts off an unbounded form at its cap", async () => {
    const upload = await rawRequest("/api/runs", { Authorization: "Bearer aw_whatever", "Content-Type": "application/json", "Transfer-Encoding": "chunked" }, (req) => req.flushHeaders());
    expect(upload.status).toBe(413);
    expect(upload.body).toMatch(/Content-Length/);
    const chunk = Buffer.alloc(16 * 1024, "a");
    const streamed = await rawRequest("/signin", { "Content-Type": "application/x-www-form-urlencoded", "Transfer-Encoding": "chunked" }, (req) => {
      let stop = false;
      req.on("response", () => (stop = true));
      req.on("error", () => (stop = true));
      const pump = () => {
        while (!stop && req.write(Buffer.concat([Buffer.from("x="), chunk]))) if ((req as unknown as { writableLength: number }).writableLength > 1e9) break;
        if (!stop) req.once("drain", pump);
      };
      pump();
    });
    expect(streamed.status).toBe(413);
    console.log(`unbounded form: ${streamed.sent} bytes written before the refusal was read`);
    // Socket buffers hold a few megabytes at most; a server reading everything would never answer.
    expect(streamed.sent).toBeLessThan(32 * 1024 * 1024);
  });
});

describe("2. trial solves off the request thread", () => {
  it("refuses an oversized problem before any work, stops a long trial at the wall limit, answers 503 when the queue is full, and keeps serving", async () => {
    // The engineer account is locked by the throttling tests above; the admin session acts (admin ≥ engineer).
    const c = adminCookie;
    const trial = (problemJson: string, id: string) =>
      fetch(`${server.url}/api/problems/trial`, {
        method: "POST",
        headers: { Origin: server.url, Cookie: c, "Content-Type": "application/x-www-form-urlencoded" },
        body: new URLSearchParams({ mode: "upload", id, problemJson, trialScheme: "hermite-simpson", trialIntervals: "60" }),
      }).then(async (r) => ({ status: r.status, retryAfter: r.headers.get("retry-after"), body: (await r.json()) as { errors?: Record<string, string>; trial?: { status: string }; error?: string }, at: Date.now() }));

    const tooBig = await trial(chainProblem(150), "chain-150");
    expect(tooBig.status).toBe(400);
    expect(tooBig.body.errors?.problemJson).toMatch(/at most 40 states/);

    const heavy = chainProblem(40);
    const running = [trial(heavy, "chain-a"), trial(heavy, "chain-b"), trial(heavy, "chain-c")];
    const healthAt: number[] = [];
    const first = await Promise.race(running);
    // One thread, a queue of one: the third is refused at once.
    expect(first.status).toBe(503);
    expect(Number(first.retryAfter)).toBeGreaterThan(0);
    for (let i = 0; i < 3; i++) {
      expect((await get("/api/health", c)).status).toBe(200);
      healthAt.push(Date.now());
    }
    const all = await Promise.all(running);
    const stopped = all.filter((r) => r.status === 400);
    expect(stopped.length).toBe(2);
    for (const r of stopped) expect(r.body.errors?.form).toMatch(/stopped/i);
    // The server answered while the solves ran.
    expect(Math.max(...healthAt)).toBeLessThan(Math.min(...stopped.map((r) => r.at)));
    // A fresh thread replaced the terminated one.
    const small = await trial(chainProblem(2), "chain-2");
    expect(small.status, JSON.stringify(small.body).slice(0, 300)).toBe(200);
    expect(small.body.trial?.status).toBeTruthy();
  }, 300_000);
});

describe("9. standard headers", () => {
  it("sends a nonce-based CSP, frame-ancestors none, nosniff and a referrer policy; every inline script carries the nonce", async () => {
    const a = await get("/signin");
    const b = await get("/signin");
    const csp = a.headers.get("content-security-policy")!;
    const nonce = /'nonce-([^']+)'/.exec(csp)?.[1];
    expect(nonce).toBeTruthy();
    expect(b.headers.get("content-security-policy")).not.toContain(nonce);
    expect(csp).toMatch(/frame-ancestors 'none'/);
    expect(csp).toMatch(/script-src 'self' 'nonce-/);
    expect(csp).not.toMatch(/script-src[^;]*unsafe-inline/);
    expect(a.headers.get("x-content-type-options")).toBe("nosniff");
    expect(a.headers.get("referrer-policy")).toBe("same-origin");
    const scripts = [...a.text.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length).toBeGreaterThan(1);
    for (const s of scripts) expect(s).toContain(`nonce="${nonce}"`);
  });
});

describe.runIf(chromiumAvailable())("5 and 9 in the browser: redirects and the content security policy", () => {
  let context: BrowserContext;
  let close: () => Promise<void>;
  let page: Page;
  const violations: string[] = [];
  beforeAll(async () => {
    const b = await launchBrowser();
    context = b.context;
    close = b.close;
    page = context.pages()[0] ?? (await context.newPage());
    page.on("console", (m) => {
      if (/Content Security Policy/i.test(m.text())) violations.push(m.text());
    });
  });
  afterAll(async () => {
    await close?.();
  });

  it("signs in and stays on this server whatever redirectTo says", async () => {
    for (const v of ["/\t/evil.example", "/.//evil.example", "//evil.example", "/\\evil.example", "https://evil.example", "javascript:alert(1)"]) {
      await context.clearCookies();
      await page.goto(`${server.url}/signin?redirectTo=${encodeURIComponent(v)}`);
      await hydrated(page);
      await page.fill("input[name=email]", "viewer@arcwatch.test");
      await page.fill("input[name=password]", "viewer-new-pass-1");
      await Promise.all([page.waitForURL((u) => !u.pathname.startsWith("/signin")), page.click("button[type=submit]")]);
      expect(new URL(page.url()).origin, JSON.stringify(v)).toBe(server.url);
      expect(new URL(page.url()).pathname).toBe("/");
    }
  });

  it("runs the app's own scripts under the policy and blocks an injected inline script", async () => {
    await page.goto(`${server.url}/account`);
    await hydrated(page);
    expect(violations).toEqual([]);
    const ran = await page.evaluate(async () => {
      const seen = new Promise<string>((resolve) => document.addEventListener("securitypolicyviolation", (e) => resolve(e.violatedDirective), { once: true }));
      const s = document.createElement("script");
      s.textContent = "window.__injected = true";
      document.body.appendChild(s);
      const directive = await Promise.race([seen, new Promise<string>((r) => setTimeout(() => r("none"), 2000))]);
      return { injected: (window as unknown as { __injected?: boolean }).__injected ?? false, directive };
    });
    expect(ran.injected).toBe(false);
    expect(ran.directive).toMatch(/^script-src/);
  });

  it("cannot be framed by another origin", async () => {
    await page.setContent(`<iframe id="f" src="${server.url}/signin"></iframe>`);
    await page.waitForTimeout(1500);
    const frame = page.frames().find((f) => f !== page.mainFrame());
    const text = frame ? await frame.content().catch(() => "") : "";
    expect(text).not.toContain("Sign in");
  });
});
