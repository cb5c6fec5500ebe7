/**
 * API tokens for programs (CI runners uploading results, scripts reading the API).
 *
 * A token is `aw_` + 32 random bytes in base64url (256 bits). Only its SHA-256 (hex) is
 * stored; a fast hash is right here because the token is random, not a human password.
 * `Authorization: Bearer <token>` is looked up by hash; revoked tokens, tokens whose creator
 * is disabled, and unknown tokens are refused. A token acts with its own role, capped at
 * its creator's current role. `last_used_at` is refreshed at most once a minute.
 *
 * Scopes: a "full" token acts with its role on every route. An "upload" token (a CI runner's)
 * may only upload runs (optionally of one suite) and read back the runs it uploaded: the
 * guards in auth.server.ts refuse it everywhere else, and the upload routes accept it through
 * `requireUploader` in runner-auth.server.ts.
 */
import { createHash, randomBytes } from "node:crypto";
import { and, desc, eq, isNull } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { apiTokens, users, TOKEN_SCOPES, type ApiTokenRow, type Role, type TokenScope } from "~/db/schema";
import { ROLE_RANK } from "./roles";

export const TOKEN_PREFIX = "aw_";
/** Characters of the token kept in `prefix` to recognise it in lists. */
export const TOKEN_DISPLAY_LENGTH = 11;
const LAST_USED_RESOLUTION_MS = 60_000;

export function generateToken(): string {
  return TOKEN_PREFIX + randomBytes(32).toString("base64url");
}

export function hashToken(token: string): string {
  return createHash("sha256").update(token, "utf8").digest("hex");
}

export interface TokenUser {
  id: number;
  email: string;
  name: string;
  role: Role;
  via: "token";
  tokenId: number;
  scope: TokenScope;
  /** An upload token limited to one suite: its name. */
  suiteName: string | null;
}

/** Creates a token; returns the plain token (show it once) and the stored row. */
export function createApiToken(
  db: Db,
  input: { name: string; role: Role; createdById: number | null; scope?: TokenScope; suiteName?: string | null },
): { token: string; row: ApiTokenRow } {
  const scope = input.scope ?? "full";
  if (!TOKEN_SCOPES.includes(scope)) throw new Error(`unknown token scope "${scope}"`);
  if (input.suiteName && scope !== "upload") throw new Error("only an upload token can be limited to one suite");
  const token = generateToken();
  const row = db
    .insert(apiTokens)
    .values({
      name: input.name.trim(),
      role: input.role,
      tokenHash: hashToken(token),
      prefix: token.slice(0, TOKEN_DISPLAY_LENGTH),
      createdById: input.createdById,
      scope,
      suiteName: input.suiteName?.trim() || null,
    })
    .returning()
    .get();
  return { token, row };
}

export function revokeApiToken(db: Db, id: number): boolean {
  const r = db
    .update(apiTokens)
    .set({ revokedAt: new Date() })
    .where(and(eq(apiTokens.id, id), isNull(apiTokens.revokedAt)))
    .run();
  return r.changes > 0;
}

export function listApiTokens(db: Db) {
  return db
    .select({
      id: apiTokens.id,
      name: apiTokens.name,
      prefix: apiTokens.prefix,
      role: apiTokens.role,
      createdAt: apiTokens.createdAt,
      lastUsedAt: apiTokens.lastUsedAt,
      revokedAt: apiTokens.revokedAt,
      scope: apiTokens.scope,
      suiteName: apiTokens.suiteName,
      createdBy: users.email,
    })
    .from(apiTokens)
    .leftJoin(users, eq(apiTokens.createdById, users.id))
    .orderBy(desc(apiTokens.createdAt))
    .all();
}

/** The bearer token in `Authorization`, or null when the header is absent or not Bearer. */
export function bearerToken(request: Request): string | null {
  const m = /^Bearer\s+(\S+)\s*$/i.exec(request.headers.get("authorization") ?? "");
  return m ? m[1]! : null;
}

/**
 * Resolves a plain token to the identity it acts as, or null when it is unknown, revoked,
 * or its creator is disabled. Updates `last_used_at`.
 */
export function authenticateToken(db: Db, token: string, now = Date.now()): TokenUser | null {
  if (!token.startsWith(TOKEN_PREFIX)) return null;
  const row = db
    .select({ token: apiTokens, creator: users })
    .from(apiTokens)
    .leftJoin(users, eq(apiTokens.createdById, users.id))
    .where(eq(apiTokens.tokenHash, hashToken(token)))
    .get();
  if (!row || row.token.revokedAt) return null;
  if (row.creator?.disabledAt) return null;
  let role = row.token.role;
  if (row.creator && ROLE_RANK[row.creator.role] < ROLE_RANK[role]) role = row.creator.role;
  const last = row.token.lastUsedAt?.getTime() ?? 0;
  if (now - last >= LAST_USED_RESOLUTION_MS) {
    db.update(apiTokens).set({ lastUsedAt: new Date(now) }).where(eq(apiTokens.id, row.token.id)).run();
  }
  return {
    id: row.creator?.id ?? 0,
    email: row.creator?.email ?? "",
    name: `token ${row.token.name}`,
    role,
    via: "token",
    tokenId: row.token.id,
    scope: row.token.scope === "upload" ? "upload" : "full",
    suiteName: row.token.suiteName,
  };
}
