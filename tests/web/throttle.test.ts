import { beforeAll, describe, expect, it } from "vitest";
import { formPost, useTempDatabase } from "../helpers/temp-db";

useTempDatabase("throttle");

const { getDb } = await import("~/db/client.server");
const { createUser } = await import("~/models/users.server");
const { GENERIC_SIGNIN_ERROR, signIn } = await import("~/services/auth.server");
const T = await import("~/services/throttle.server");

const SIGNIN = "http://127.0.0.1:3000/signin";
const attempt = (email: string, password: string) => signIn(formPost(SIGNIN, { email, password }));

beforeAll(async () => {
  const db = getDb();
  await createUser(db, { email: "pilot@arcwatch.test", name: "Pilot", role: "engineer", password: "right-password-1" });
  await createUser(db, { email: "navigator@arcwatch.test", name: "Navigator", role: "viewer", password: "right-password-2" });
});

describe("throttle arithmetic", () => {
  // Behaviour changed on purpose: the 5-failure, 60 s doubling lock now applies to one
  // account from one address (the pair key); the account as a whole has a slower back-off.
  it("locks an (account, address) pair at its limit with doubling lock times, capped", () => {
    const db = getDb();
    const key = T.pairKey("Arith@Example.test ", "192.0.2.1");
    expect(key).toBe("pair:arith@example.test|192.0.2.1");
    expect(T.accountKey("Arith@Example.test ")).toBe("account:arith@example.test");
    const t0 = 1_000_000_000_000;
    for (let i = 1; i < T.PAIR_LIMIT; i++) expect(T.recordFailure(db, [key], t0 + i)).toBe(0);
    expect(T.lockedFor(db, [key], t0 + 10)).toBe(0);
    // failure number ACCOUNT_LIMIT: lock BASE_LOCK_MS * 2^0
    expect(T.recordFailure(db, [key], t0 + 100)).toBe(T.BASE_LOCK_MS);
    expect(T.lockedFor(db, [key], t0 + 100)).toBe(T.BASE_LOCK_MS);
    expect(T.recordFailure(db, [key], t0 + 200)).toBe(2 * T.BASE_LOCK_MS);
    expect(T.recordFailure(db, [key], t0 + 300)).toBe(4 * T.BASE_LOCK_MS);
    for (let i = 0; i < 10; i++) T.recordFailure(db, [key], t0 + 400 + i);
    expect(T.lockedFor(db, [key], t0 + 409)).toBe(T.MAX_LOCK_MS);
    expect(T.lockedFor(db, [key], t0 + 409 + T.MAX_LOCK_MS + 1)).toBe(0);
  });

  it("locks the account as a whole later and for shorter than a pair", () => {
    const db = getDb();
    const key = T.accountKey("slow@example.test");
    const t0 = 1_050_000_000_000;
    for (let i = 1; i < T.ACCOUNT_LIMIT; i++) expect(T.recordFailure(db, [key], t0 + i)).toBe(0);
    expect(T.recordFailure(db, [key], t0 + 100)).toBe(T.ACCOUNT_BASE_LOCK_MS);
    for (let i = 0; i < 20; i++) T.recordFailure(db, [key], t0 + 200 + i);
    expect(T.lockedFor(db, [key], t0 + 219)).toBe(T.ACCOUNT_MAX_LOCK_MS);
    expect(T.ACCOUNT_LIMIT).toBeGreaterThan(T.PAIR_LIMIT);
    expect(T.ACCOUNT_MAX_LOCK_MS).toBeLessThan(T.MAX_LOCK_MS);
  });

  it("reserves attempts atomically: a locked key refuses without counting, success gives back the reservation", () => {
    const db = getDb();
    const keys = T.attemptKeys("reserve@example.test", "192.0.2.9");
    const t0 = 1_070_000_000_000;
    for (let i = 0; i < T.PAIR_LIMIT; i++) expect(T.reserveAttempt(db, keys, t0 + i).ok).toBe(true);
    const refused = T.reserveAttempt(db, keys, t0 + 10);
    expect(refused).toEqual({ ok: false, waitMs: T.BASE_LOCK_MS - 6 });
    // Refused attempts are not counted: the address still has PAIR_LIMIT failures.
    expect(db.$client.prepare("select failures from auth_throttle where key = ?").get(T.addressKey("192.0.2.9"))).toEqual({ failures: T.PAIR_LIMIT });
    const other = T.attemptKeys("owner@example.test", "192.0.2.9");
    const r = T.reserveAttempt(db, other, t0 + 20);
    expect(r.ok).toBe(true);
    if (r.ok) T.settleAttempt(db, r, true);
    expect(db.$client.prepare("select failures from auth_throttle where key = ?").get(T.addressKey("192.0.2.9"))).toEqual({ failures: T.PAIR_LIMIT });
    expect(T.lockedFor(db, [T.pairKey("owner@example.test", "192.0.2.9"), T.accountKey("owner@example.test")], t0 + 20)).toBe(0);
  });

  it("starts a new window after WINDOW_MS without failures", () => {
    const db = getDb();
    const key = T.addressKey("192.0.2.7");
    const t0 = 1_100_000_000_000;
    for (let i = 0; i < T.ADDRESS_LIMIT - 1; i++) T.recordFailure(db, [key], t0 + i);
    // The next failure comes after the window closed: the count restarts at 1, no lock.
    expect(T.recordFailure(db, [key], t0 + T.WINDOW_MS + 1000)).toBe(0);
    expect(T.recordFailure(db, [key], t0 + T.WINDOW_MS + 2000)).toBe(0);
  });
});

describe("sign-in", () => {
  it("gives the same generic message for an unknown e-mail and for a wrong password", async () => {
    const unknown = await attempt("nobody@arcwatch.test", "whatever-pass");
    const wrong = await attempt("navigator@arcwatch.test", "wrong-password");
    expect(unknown.ok).toBe(false);
    expect(wrong.ok).toBe(false);
    if (unknown.ok || wrong.ok) return;
    expect(unknown.status).toBe(401);
    expect(wrong.status).toBe(401);
    expect(unknown.errors).toEqual({ form: GENERIC_SIGNIN_ERROR });
    expect(wrong.errors).toEqual({ form: GENERIC_SIGNIN_ERROR });
  });

  it("reports field errors and keeps the typed e-mail", async () => {
    const r = await attempt("not-an-email", "");
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.status).toBe(400);
    expect(r.errors.email).toBe("Enter a valid e-mail address.");
    expect(r.errors.password).toBe("Enter your password.");
    expect(r.values.email).toBe("not-an-email");
  });

  it("locks one account after repeated failures, even for the right password, and not others", async () => {
    for (let i = 0; i < T.ACCOUNT_LIMIT; i++) {
      const r = await attempt("pilot@arcwatch.test", `bad-${i}-password`);
      expect(r.ok).toBe(false);
    }
    const locked = await attempt("pilot@arcwatch.test", "right-password-1");
    expect(locked.ok).toBe(false);
    if (!locked.ok) {
      expect(locked.status).toBe(429);
      expect(locked.errors.form).toMatch(/Too many failed sign-in attempts/);
    }
    const other = await attempt("navigator@arcwatch.test", "right-password-2");
    expect(other.ok).toBe(true);
    if (other.ok) expect(other.headers.get("Set-Cookie")).toMatch(/^__arcwatch=.+HttpOnly.+SameSite=Lax/);
  });

  it("locks an address after many failures across different accounts", async () => {
    const db = getDb();
    // Under a server that does not set the client address header every client is "unknown".
    const key = T.addressKey("unknown");
    T.clearKey(db, key);
    for (let i = 0; i < T.ADDRESS_LIMIT; i++) await attempt(`user${i}@elsewhere.test`, "guess-password");
    expect(T.lockedFor(db, [key])).toBeGreaterThan(0);
    const r = await attempt("navigator@arcwatch.test", "right-password-2");
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.status).toBe(429);
  });
});
