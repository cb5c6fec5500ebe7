/** Server-side sessions: expiry, ending, listing (the HTTP side is in tests/browser/security.test.ts). */
import { beforeAll, describe, expect, it } from "vitest";
import { formPost, useTempDatabase } from "../helpers/temp-db";

useTempDatabase("sessions");

const { getDb } = await import("~/db/client.server");
const { createUser, setPassword, setDisabled } = await import("~/models/users.server");
const S = await import("~/services/session.server");
const { signIn } = await import("~/services/auth.server");

const BASE = "http://127.0.0.1:3000";
let userId = 0;
let adminId = 0;
const req = (cookie: string) => new Request(`${BASE}/`, { headers: { Cookie: cookie } });
async function cookieFor(email: string, password: string, ua = "test-agent/1.0") {
  const r = await signIn(formPost(`${BASE}/signin`, { email, password }, { "User-Agent": ua }));
  if (!r.ok) throw new Error(JSON.stringify(r.errors));
  return r.headers.get("Set-Cookie")!.split(";")[0]!;
}

beforeAll(async () => {
  userId = (await createUser(getDb(), { email: "keeper@sessions.test", name: "K", role: "engineer", password: "keeper-password" })).id;
  adminId = (await createUser(getDb(), { email: "boss@sessions.test", name: "B", role: "admin", password: "boss-password-1" })).id;
});

describe("server-side sessions", () => {
  it("stores only the hash of the random id, with user agent and address", async () => {
    const c = await cookieFor("keeper@sessions.test", "keeper-password", "Agent/7");
    const row = await S.currentSession(req(c));
    expect(row?.userId).toBe(userId);
    expect(row?.userAgent).toBe("Agent/7");
    const id = await S.sessionIdOf(req(c));
    expect(row?.idHash).toBe(S.hashSessionId(id!));
    expect(row?.idHash).not.toContain(id!);
  });

  it("ends after the idle limit and after the absolute limit", async () => {
    const db = getDb();
    const c = await cookieFor("keeper@sessions.test", "keeper-password");
    const t0 = Date.now();
    // Used every 23 hours, it lives until the absolute limit...
    let now = t0;
    while (now + 23 * 3600_000 < t0 + S.ABSOLUTE_MS) {
      now += 23 * 3600_000;
      expect(await S.currentSession(req(c), db, now), `at +${(now - t0) / 3600_000} h`).not.toBeNull();
    }
    expect(await S.currentSession(req(c), db, t0 + S.ABSOLUTE_MS + 1)).toBeNull();
    // ...and an unused one ends after IDLE_MS.
    const idle = await cookieFor("keeper@sessions.test", "keeper-password");
    expect(await S.currentSession(req(idle), db, Date.now() + S.IDLE_MS - 60_000)).not.toBeNull();
    expect(await S.currentSession(req(idle), db, Date.now() + 2 * S.IDLE_MS)).toBeNull();
    // The expired row is gone, not just refused.
    expect(await S.currentSession(req(idle), db)).toBeNull();
  });

  it("a password change keeps the session that made it and ends the others; disabling ends all", async () => {
    const db = getDb();
    const mine = await cookieFor("keeper@sessions.test", "keeper-password");
    const other = await cookieFor("keeper@sessions.test", "keeper-password");
    const keep = (await S.currentSession(req(mine)))!.idHash;
    await setPassword(db, userId, "keeper-password-2", keep);
    expect(await S.currentSession(req(mine))).not.toBeNull();
    expect(await S.currentSession(req(other))).toBeNull();
    expect(S.listUserSessions(db, userId, keep).map((s) => s.current)).toEqual([true]);
    setDisabled(db, userId, true, adminId);
    expect(await S.currentSession(req(mine))).toBeNull();
    setDisabled(db, userId, false, adminId);
  });

  it("one session can be ended by its owner only", async () => {
    const db = getDb();
    const a = await cookieFor("boss@sessions.test", "boss-password-1");
    const hash = (await S.currentSession(req(a)))!.idHash;
    expect(S.endOneSession(db, userId, hash)).toBe(false);
    expect(await S.currentSession(req(a))).not.toBeNull();
    expect(S.endOneSession(db, adminId, hash)).toBe(true);
    expect(await S.currentSession(req(a))).toBeNull();
  });
});
