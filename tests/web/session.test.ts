import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it, vi } from "vitest";
import { chromiumAvailable } from "../helpers/browser";

const saved = { ...process.env };
afterEach(() => {
  process.env = { ...saved };
  vi.restoreAllMocks();
  vi.resetModules();
});

describe("session cookie settings", () => {
  it("without SESSION_SECRET generates a random secret beside the database (mode 600) and reuses it", async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-secret-"));
    try {
      delete process.env.SESSION_SECRET;
      process.env.ARCWATCH_DB = path.join(dir, "arcwatch.db");
      const log = vi.spyOn(console, "log").mockImplementation(() => {});
      const mod = await import("~/services/session.server");
      const [first] = mod.sessionSecrets();
      const file = path.join(dir, mod.SECRET_FILE_NAME);
      expect(fs.statSync(file).mode & 0o777).toBe(0o600);
      expect(first).toMatch(/^[A-Za-z0-9_-]{43}$/);
      expect(fs.readFileSync(file, "utf8").trim()).toBe(first);
      expect(String(log.mock.calls[0]![0])).toMatch(/generated a random session secret/);
      // A later start (fresh module) reuses it; another database gets another secret.
      vi.resetModules();
      const again = await import("~/services/session.server");
      expect(again.sessionSecrets()).toEqual([first]);
      process.env.ARCWATCH_DB = path.join(dir, "other", "arcwatch.db");
      expect(again.sessionSecrets()[0]).not.toBe(first);
      // A file left readable by others is tightened.
      fs.chmodSync(file, 0o644);
      vi.spyOn(console, "warn").mockImplementation(() => {});
      process.env.ARCWATCH_DB = path.join(dir, "arcwatch.db");
      vi.resetModules();
      expect((await import("~/services/session.server")).sessionSecrets()).toEqual([first]);
      expect(fs.statSync(file).mode & 0o777).toBe(0o600);

      process.env.SESSION_SECRET = "new-secret, old-secret";
      expect(again.sessionSecrets()).toEqual(["new-secret", "old-secret"]);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it("sets HttpOnly and SameSite=Lax always, Secure in production unless opted out", async () => {
    process.env.SESSION_SECRET = "s3cret-for-this-test";
    const mod = await import("~/services/session.server");
    const cookieOf = () => mod.sessionCookie().serialize("x".repeat(43));
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
    const id = "A".repeat(43);
    const cookie = (await a.sessionCookie().serialize(id)).split(";")[0]!;
    const req = () => new Request("http://127.0.0.1/", { headers: { Cookie: cookie } });
    expect(await a.sessionIdOf(req())).toBe(id);
    process.env.SESSION_SECRET = "second-secret";
    expect(await a.sessionIdOf(req())).toBeNull();
    process.env.SESSION_SECRET = "second-secret,first-secret"; // rotation: old cookies still verify
    expect(await a.sessionIdOf(req())).toBe(id);
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
