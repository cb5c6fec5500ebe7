/**
 * Sign-in throttling, stored in SQLite (table auth_throttle) so it survives restarts and is
 * shared by every server process on the same database.
 *
 * Three keys per attempt, each with its own policy (POLICIES):
 * - `pair:<email>|<address>`: one account from one client address. Locks after PAIR_LIMIT
 *   failures, for BASE_LOCK_MS · 2^(failures − limit), capped at MAX_LOCK_MS. This is the
 *   lock a guesser meets; it does not stop the account's owner at another address.
 * - `account:<email>` (whether or not the account exists, so a lock says nothing about
 *   existence): every address together. A slower, shorter back-off (ACCOUNT_LIMIT,
 *   ACCOUNT_BASE_LOCK_MS doubling up to ACCOUNT_MAX_LOCK_MS) that bounds guessing spread over
 *   many addresses, while a stranger failing on purpose can hold the owner off for at most
 *   ACCOUNT_MAX_LOCK_MS at a time rather than 15 minutes.
 * - `ip:<address>`: one address across accounts (ADDRESS_LIMIT, same back-off as the pair).
 * Failures are counted in a fixed window of WINDOW_MS opened by the first failure
 * (exponential back-off; common practice, no source).
 *
 * Concurrency: `reserveAttempt` counts the attempt as a failure BEFORE the password is
 * checked, inside one IMMEDIATE transaction that first refuses if any key is locked. Parallel
 * attempts are therefore serialised by SQLite's write lock (across processes too) and at most
 * `limit` wrong passwords reach the check. `settleAttempt` then, on success, gives back that
 * attempt's own reservation; earlier failures stay counted until their window closes.
 */
import { eq } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { authThrottle } from "~/db/schema";

export const WINDOW_MS = 15 * 60_000;
export const PAIR_LIMIT = 5;
export const ADDRESS_LIMIT = 20;
export const BASE_LOCK_MS = 60_000;
export const MAX_LOCK_MS = 15 * 60_000;
export const ACCOUNT_LIMIT = 10;
export const ACCOUNT_BASE_LOCK_MS = 15_000;
export const ACCOUNT_MAX_LOCK_MS = 2 * 60_000;

interface Policy {
  limit: number;
  baseLockMs: number;
  maxLockMs: number;
}
export const POLICIES: Record<"pair" | "account" | "ip", Policy> = {
  pair: { limit: PAIR_LIMIT, baseLockMs: BASE_LOCK_MS, maxLockMs: MAX_LOCK_MS },
  account: { limit: ACCOUNT_LIMIT, baseLockMs: ACCOUNT_BASE_LOCK_MS, maxLockMs: ACCOUNT_MAX_LOCK_MS },
  ip: { limit: ADDRESS_LIMIT, baseLockMs: BASE_LOCK_MS, maxLockMs: MAX_LOCK_MS },
};

function normalisedEmail(email: string): string {
  return email.trim().toLowerCase();
}
export function accountKey(email: string): string {
  return `account:${normalisedEmail(email)}`;
}
export function addressKey(address: string): string {
  return `ip:${address}`;
}
export function pairKey(email: string, address: string): string {
  return `pair:${normalisedEmail(email)}|${address}`;
}
/** The three keys of one sign-in (or password re-check) attempt. */
export function attemptKeys(email: string, address: string): string[] {
  return [pairKey(email, address), accountKey(email), addressKey(address)];
}

function policyFor(key: string): Policy {
  const kind = key.slice(0, key.indexOf(":")) as keyof typeof POLICIES;
  return POLICIES[kind] ?? POLICIES.pair;
}

function lockMsFor(key: string, failures: number): number {
  const p = policyFor(key);
  return failures >= p.limit ? Math.min(p.maxLockMs, p.baseLockMs * 2 ** (failures - p.limit)) : 0;
}

type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

function remainingIn(tx: Tx | Db, key: string, now: number): number {
  const row = tx.select().from(authThrottle).where(eq(authThrottle.key, key)).get();
  if (!row?.lockedUntil) return 0;
  return Math.max(0, row.lockedUntil.getTime() - now);
}

/** Milliseconds until `key` may try again (0 when not locked). */
export function lockRemainingMs(db: Db, key: string, now = Date.now()): number {
  return remainingIn(db, key, now);
}

/** Largest lock remaining over several keys. */
export function lockedFor(db: Db, keys: string[], now = Date.now()): number {
  return Math.max(0, ...keys.map((k) => lockRemainingMs(db, k, now)));
}

function countFailure(tx: Tx, key: string, now: number): number {
  const row = tx.select().from(authThrottle).where(eq(authThrottle.key, key)).get();
  const fresh = !row || now - row.windowStart.getTime() > WINDOW_MS;
  const failures = fresh ? 1 : row.failures + 1;
  const windowStart = fresh ? new Date(now) : row.windowStart;
  const lockMs = lockMsFor(key, failures);
  const lockedUntil = lockMs > 0 ? new Date(now + lockMs) : null;
  tx.insert(authThrottle)
    .values({ key, failures, windowStart, lastFailureAt: new Date(now), lockedUntil })
    .onConflictDoUpdate({ target: authThrottle.key, set: { failures, windowStart, lastFailureAt: new Date(now), lockedUntil } })
    .run();
  return lockMs;
}

/** Counts one failure against each key; returns the longest new lock in ms (0 if none). */
export function recordFailure(db: Db, keys: string[], now = Date.now()): number {
  return db.transaction((tx) => Math.max(0, ...keys.map((k) => countFailure(tx, k, now))), { behavior: "immediate" });
}

export type Reservation = { ok: true; keys: string[] } | { ok: false; waitMs: number };

/**
 * Refuses when any key is locked; otherwise counts the attempt as a failure of every key
 * (locking a key that reaches its limit) — all in one IMMEDIATE transaction, before the
 * password is checked. Call `settleAttempt` with the outcome afterwards.
 */
export function reserveAttempt(db: Db, keys: string[], now = Date.now()): Reservation {
  return db.transaction(
    (tx): Reservation => {
      const waitMs = Math.max(0, ...keys.map((k) => remainingIn(tx, k, now)));
      if (waitMs > 0) return { ok: false, waitMs };
      for (const k of keys) countFailure(tx, k, now);
      return { ok: true, keys };
    },
    { behavior: "immediate" },
  );
}

/**
 * After the password check: a failure stays counted. A success takes its own reserved
 * failure back from every key (unlocking a key that only this reservation had locked), and
 * leaves the other attempts' failures counted: clearing them would reopen the limit to
 * attempts still in flight beside a correct one.
 */
export function settleAttempt(db: Db, reservation: { keys: string[] }, success: boolean): void {
  if (!success) return;
  db.transaction(
    (tx) => {
      for (const key of reservation.keys) {
        const row = tx.select().from(authThrottle).where(eq(authThrottle.key, key)).get();
        if (!row) continue;
        const failures = Math.max(0, row.failures - 1);
        if (failures === 0) {
          tx.delete(authThrottle).where(eq(authThrottle.key, key)).run();
          continue;
        }
        const lockedUntil = failures >= policyFor(key).limit ? row.lockedUntil : null;
        tx.update(authThrottle).set({ failures, lockedUntil }).where(eq(authThrottle.key, key)).run();
      }
    },
    { behavior: "immediate" },
  );
}

export function clearKey(db: Db, key: string): void {
  db.delete(authThrottle).where(eq(authThrottle.key, key)).run();
}

/** "3 minutes" style text for a lock message. */
export function describeWait(ms: number): string {
  const minutes = Math.ceil(ms / 60_000);
  return minutes <= 1 ? "a minute" : `${minutes} minutes`;
}
