/**
 * Server-side sessions (table `sessions`) behind a signed cookie that carries only the
 * session's random id.
 *
 * - Id: 32 random bytes (base64url, 256 bits). The row is keyed by the id's SHA-256, so the
 *   database alone does not give a usable cookie.
 * - Ends: sign-out deletes the row; a session expires ABSOLUTE_MS after sign-in, or IDLE_MS
 *   after the last request (`last_seen_at`, refreshed at most once a minute); a password
 *   change ends every other session of the user, disabling the account ends all of them.
 * - Cookie: `__arcwatch`, HttpOnly, SameSite=Lax, Path=/, Max-Age = the absolute lifetime,
 *   Secure when NODE_ENV is "production" unless ARCWATCH_INSECURE_COOKIE=1 (plain-http
 *   deployments on a non-loopback name). Signed with HMAC-SHA256 by react-router's
 *   createCookie; the signature is a second lock on top of the random id.
 * - Secret: SESSION_SECRET (comma-separated to rotate: the first signs, all verify). Without
 *   it, a random secret is generated on first start and kept in `session-secret` beside the
 *   database file (mode 0600), and reused on later starts. No constant ever signs a cookie.
 *
 * API tokens (app/services/tokens.server.ts) are separate and do not use this table.
 */
import { createHash, randomBytes } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { and, asc, eq, lt, ne, or } from "drizzle-orm";
import { createCookie, type Cookie } from "react-router";
import { databasePath, getDb, type Db } from "~/db/client.server";
import { sessions, type SessionRow } from "~/db/schema";

export const SESSION_COOKIE = "__arcwatch";
/** Absolute lifetime of a session (7 days; common practice, no source). */
export const SESSION_MAX_AGE_S = 7 * 24 * 3600;
export const ABSOLUTE_MS = SESSION_MAX_AGE_S * 1000;
/** A session unused for this long ends (24 hours; common practice, no source). */
export const IDLE_MS = 24 * 3600 * 1000;
/** `last_seen_at` is written at most this often, so reading a page rarely writes. */
const TOUCH_RESOLUTION_MS = 60_000;
/** Name of the generated secret's file, beside the database. */
export const SECRET_FILE_NAME = "session-secret";

let generated: { file: string; secret: string } | undefined;

function parseList(value: string): string[] {
  return value
    .split(",")
    .map((s) => s.trim())
    .filter(Boolean);
}

/**
 * The generated secret for this database: read from `<db folder>/session-secret`, or created
 * there (owner read/write only) when missing. Two processes starting at once agree: the
 * file is created exclusively and the loser reads the winner's secret.
 */
function generatedSecret(): string {
  const dbFile = databasePath();
  if (dbFile === ":memory:") {
    generated ??= { file: ":memory:", secret: randomBytes(32).toString("base64url") };
    return generated.secret;
  }
  const file = path.join(path.dirname(dbFile), SECRET_FILE_NAME);
  if (generated?.file === file) return generated.secret;
  fs.mkdirSync(path.dirname(file), { recursive: true });
  let created = false;
  try {
    fs.writeFileSync(file, `${randomBytes(32).toString("base64url")}\n`, { mode: 0o600, flag: "wx" });
    created = true;
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code !== "EEXIST") throw err;
  }
  const mode = fs.statSync(file).mode & 0o777;
  if (mode & 0o077) {
    fs.chmodSync(file, 0o600);
    console.warn(`[arcwatch] ${file} was readable by others (mode ${mode.toString(8)}); set to 600.`);
  }
  const secret = parseList(fs.readFileSync(file, "utf8"))[0];
  if (!secret || secret.length < 32) throw new Error(`${file} holds no usable session secret (at least 32 characters); delete it to generate a new one.`);
  if (created) console.log(`[arcwatch] SESSION_SECRET is not set: generated a random session secret in ${file} (mode 600).`);
  generated = { file, secret };
  return secret;
}

/** The secrets in force: SESSION_SECRET's list, else the generated secret of this database. */
export function sessionSecrets(): string[] {
  const list = parseList(process.env.SESSION_SECRET ?? "");
  return list.length > 0 ? list : [generatedSecret()];
}

export function secureCookies(): boolean {
  return process.env.NODE_ENV === "production" && process.env.ARCWATCH_INSECURE_COOKIE !== "1";
}

let cookieCache: { key: string; cookie: Cookie } | undefined;
/** The signed cookie that carries the session id. */
export function sessionCookie(): Cookie {
  const secrets = sessionSecrets();
  const secure = secureCookies();
  const key = `${secrets.join(",")}|${secure}`;
  if (cookieCache?.key !== key) {
    cookieCache = {
      key,
      cookie: createCookie(SESSION_COOKIE, { httpOnly: true, sameSite: "lax", path: "/", secure, secrets, maxAge: SESSION_MAX_AGE_S }),
    };
  }
  return cookieCache.cookie;
}

export function hashSessionId(id: string): string {
  return createHash("sha256").update(id, "utf8").digest("hex");
}

/** The session id in the request's cookie (signature checked), or null. */
export async function sessionIdOf(request: Request): Promise<string | null> {
  const value: unknown = await sessionCookie().parse(request.headers.get("Cookie"));
  return typeof value === "string" && /^[A-Za-z0-9_-]{43}$/.test(value) ? value : null;
}

export interface SessionMeta {
  userAgent?: string | null;
  address?: string | null;
}

/** Starts a session for `userId`; returns the Set-Cookie value. Also sweeps expired rows. */
export async function createUserSession(db: Db, userId: number, meta: SessionMeta, now = Date.now()): Promise<string> {
  const id = randomBytes(32).toString("base64url");
  db.delete(sessions)
    .where(or(lt(sessions.expiresAt, new Date(now)), lt(sessions.lastSeenAt, new Date(now - IDLE_MS))))
    .run();
  db.insert(sessions)
    .values({
      idHash: hashSessionId(id),
      userId,
      createdAt: new Date(now),
      lastSeenAt: new Date(now),
      expiresAt: new Date(now + ABSOLUTE_MS),
      userAgent: meta.userAgent ? meta.userAgent.slice(0, 300) : null,
      address: meta.address ? meta.address.slice(0, 100) : null,
    })
    .run();
  return sessionCookie().serialize(id, { expires: new Date(now + ABSOLUTE_MS) });
}

/**
 * The live session row for the request's cookie (null when absent, forged, ended or
 * expired; an expired row is deleted). Refreshes `last_seen_at`.
 */
export async function currentSession(request: Request, db: Db = getDb(), now = Date.now()): Promise<SessionRow | null> {
  const id = await sessionIdOf(request);
  if (!id) return null;
  const idHash = hashSessionId(id);
  const row = db.select().from(sessions).where(eq(sessions.idHash, idHash)).get();
  if (!row) return null;
  if (row.expiresAt.getTime() <= now || now - row.lastSeenAt.getTime() >= IDLE_MS) {
    db.delete(sessions).where(eq(sessions.idHash, idHash)).run();
    return null;
  }
  if (now - row.lastSeenAt.getTime() >= TOUCH_RESOLUTION_MS) {
    db.update(sessions).set({ lastSeenAt: new Date(now) }).where(eq(sessions.idHash, idHash)).run();
    row.lastSeenAt = new Date(now);
  }
  return row;
}

/** Ends the request's session (deletes its row); returns the Set-Cookie value that clears the cookie. */
export async function destroyRequestSession(request: Request, db: Db = getDb()): Promise<string> {
  const id = await sessionIdOf(request);
  if (id) db.delete(sessions).where(eq(sessions.idHash, hashSessionId(id))).run();
  return sessionCookie().serialize("", { expires: new Date(0), maxAge: undefined });
}

/** Ends every session of a user, except the one whose id hash is `keepIdHash`. Returns how many ended. */
export function endUserSessions(db: Db, userId: number, keepIdHash?: string): number {
  const where = keepIdHash ? and(eq(sessions.userId, userId), ne(sessions.idHash, keepIdHash)) : eq(sessions.userId, userId);
  return db.delete(sessions).where(where).run().changes;
}

/** Ends one session of a user (the account page's "End" button); false when it was not theirs or already ended. */
export function endOneSession(db: Db, userId: number, idHash: string): boolean {
  return db.delete(sessions).where(and(eq(sessions.userId, userId), eq(sessions.idHash, idHash))).run().changes > 0;
}

export interface SessionListEntry {
  idHash: string;
  createdAt: Date;
  lastSeenAt: Date;
  expiresAt: Date;
  userAgent: string | null;
  address: string | null;
  current: boolean;
}

/** The user's live sessions, oldest first; `current` marks the one with id hash `currentIdHash`. */
export function listUserSessions(db: Db, userId: number, currentIdHash: string | null, now = Date.now()): SessionListEntry[] {
  return db
    .select()
    .from(sessions)
    .where(eq(sessions.userId, userId))
    .orderBy(asc(sessions.createdAt))
    .all()
    .filter((r) => r.expiresAt.getTime() > now && now - r.lastSeenAt.getTime() < IDLE_MS)
    .map((r) => ({
      idHash: r.idHash,
      createdAt: r.createdAt,
      lastSeenAt: r.lastSeenAt,
      expiresAt: new Date(Math.min(r.expiresAt.getTime(), r.lastSeenAt.getTime() + IDLE_MS)),
      userAgent: r.userAgent,
      address: r.address,
      current: r.idHash === currentIdHash,
    }));
}

// Create or read the generated secret at server start (this module loads with the server
// build), so the first request does not pay for it and the log says where it is.
if (process.env.ARCWATCH_SERVER_SETS_ADDRESS === "1") sessionSecrets();
