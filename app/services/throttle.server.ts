/**
 * Sign-in throttling, stored in SQLite (table auth_throttle) so it survives restarts and is
 * shared by every server process on the same database.
 *
 * Two keys per attempt: `account:<normalised email>` (whether or not the account exists, so
 * a lock says nothing about existence) and `ip:<client address>`. Failures are counted in a
 * fixed window of WINDOW_MS opened by the first failure. Once a key reaches its limit, every
 * further failure locks it for BASE_LOCK_MS · 2^(failures − limit), capped at MAX_LOCK_MS
 * (exponential back-off; common practice, no source). A successful sign-in clears the
 * account key, not the address key.
 */
import { eq } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { authThrottle } from "~/db/schema";

export const WINDOW_MS = 15 * 60_000;
export const ACCOUNT_LIMIT = 5;
export const ADDRESS_LIMIT = 20;
export const BASE_LOCK_MS = 60_000;
export const MAX_LOCK_MS = 15 * 60_000;

export function accountKey(email: string): string {
  return `account:${email.trim().toLowerCase()}`;
}
export function addressKey(address: string): string {
  return `ip:${address}`;
}

function limitFor(key: string): number {
  return key.startsWith("account:") ? ACCOUNT_LIMIT : ADDRESS_LIMIT;
}

/** Milliseconds until `key` may try again (0 when not locked). */
export function lockRemainingMs(db: Db, key: string, now = Date.now()): number {
  const row = db.select().from(authThrottle).where(eq(authThrottle.key, key)).get();
  if (!row?.lockedUntil) return 0;
  return Math.max(0, row.lockedUntil.getTime() - now);
}

/** Largest lock remaining over several keys. */
export function lockedFor(db: Db, keys: string[], now = Date.now()): number {
  return Math.max(0, ...keys.map((k) => lockRemainingMs(db, k, now)));
}

/** Counts one failure against each key; returns the new lock duration in ms (0 if none). */
export function recordFailure(db: Db, keys: string[], now = Date.now()): number {
  let longest = 0;
  db.transaction((tx) => {
    for (const key of keys) {
      const row = tx.select().from(authThrottle).where(eq(authThrottle.key, key)).get();
      const fresh = !row || now - row.windowStart.getTime() > WINDOW_MS;
      const failures = fresh ? 1 : row.failures + 1;
      const windowStart = fresh ? new Date(now) : row.windowStart;
      const limit = limitFor(key);
      const lockMs = failures >= limit ? Math.min(MAX_LOCK_MS, BASE_LOCK_MS * 2 ** (failures - limit)) : 0;
      const lockedUntil = lockMs > 0 ? new Date(now + lockMs) : null;
      longest = Math.max(longest, lockMs);
      tx.insert(authThrottle)
        .values({ key, failures, windowStart, lastFailureAt: new Date(now), lockedUntil })
        .onConflictDoUpdate({
          target: authThrottle.key,
          set: { failures, windowStart, lastFailureAt: new Date(now), lockedUntil },
        })
        .run();
    }
  });
  return longest;
}

export function clearKey(db: Db, key: string): void {
  db.delete(authThrottle).where(eq(authThrottle.key, key)).run();
}

/** "3 minutes" style text for a lock message. */
export function describeWait(ms: number): string {
  const minutes = Math.ceil(ms / 60_000);
  return minutes <= 1 ? "a minute" : `${minutes} minutes`;
}
