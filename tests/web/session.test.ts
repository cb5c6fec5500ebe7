import { afterEach, describe, expect, it, vi } from "vitest";
import { chromiumAvailable } from "../helpers/browser";

const saved = { ...process.env };
afterEach(() => {
  process.env = { ...saved };
  vi.restoreAllMocks();
  vi.resetModules();
});

describe("session cookie settings", () => {
  it("warns loudly exactly once when SESSION_SECRET is unset, and not when it is set", async () => {
    delete process.env.SESSION_SECRET;
    const warn = vi.spyOn(console, "warn").mockImplementation(() => {});
    const mod = await import("~/services/session.server");
    mod.sessionSecrets();
    mod.sessionStorage();
    expect(warn).toHaveBeenCalledTimes(1);
    expect(String(warn.mock.calls[0]![0])).toMatch(/SESSION_SECRET is not set/);

    vi.resetModules();
    warn.mockClear();
    process.env.SESSION_SECRET = "new-secret, old-secret";
    const fresh = await import("~/services/session.server");
    expect(fresh.sessionSecrets()).toEqual(["new-secret", "old-secret"]);
    expect(warn).not.toHaveBeenCalled();
  });

  it("sets HttpOnly and SameSite=Lax always, Secure in production unless opted out", async () => {
    process.env.SESSION_SECRET = "s3cret-for-this-test";
    const mod = await import("~/services/session.server");
    const cookieOf = async () => {
      const st = mod.sessionStorage();
      const session = await st.getSession();
      session.set("userId", 1);
      return st.commitSession(session);
    };
    process.env.NODE_ENV = "production";
    const prod = await cookieOf();
    expect(prod).toMatch(/HttpOnly/);
    expect(prod).toMatch(/SameSite=Lax/);
    expect(prod).toMatch(/Secure/);
    expect(prod).toMatch(/Max-Age=604800/);
    process.env.ARCWATCH_INSECURE_COOKIE = "1";
    expect(await cookieOf()).not.toMatch(/Secure/);
    delete process.env.ARCWATCH_INSECURE_COOKIE;
    process.env.NODE_ENV = "development";
    const dev = await cookieOf();
    expect(dev).not.toMatch(/Secure/);
    expect(dev).toMatch(/HttpOnly/);
  });

  it("a cookie signed with another secret is not accepted", async () => {
    process.env.SESSION_SECRET = "first-secret";
    const a = await import("~/services/session.server");
    const st = a.sessionStorage();
    const s = await st.getSession();
    s.set("userId", 7);
    const cookie = (await st.commitSession(s)).split(";")[0]!;
    process.env.SESSION_SECRET = "second-secret";
    expect((await a.sessionStorage().getSession(cookie)).get("userId")).toBeUndefined();
    process.env.SESSION_SECRET = "second-secret,first-secret"; // rotation: old cookies still verify
    expect((await a.sessionStorage().getSession(cookie)).get("userId")).toBe(7);
  });
});

describe("browser test guard", () => {
  it("fails instead of skipping when chromium is missing under CI=true", () => {
    vi.spyOn(console, "warn").mockImplementation(() => {});
    process.env.CI = "true";
    expect(() => chromiumAvailable("/nonexistent/chromium")).toThrow(/CI=true/);
    delete process.env.CI;
    expect(chromiumAvailable("/nonexistent/chromium")).toBe(false);
  });
});
