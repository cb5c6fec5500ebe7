/** People and access: users, sign-in throttling, server-side sessions, API tokens. Conventions: app/db/schema.ts. */
import { sql } from "drizzle-orm";
import { check, index, integer, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";
import { ROLES, TOKEN_SCOPES, inList, createdAt } from "./common";

export const users = sqliteTable(
  "users",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** Stored lower-cased and trimmed; unique. */
    email: text("email").notNull(),
    name: text("name").notNull(),
    role: text("role", { enum: ROLES }).notNull().default("viewer"),
    /** PHC string from argon2id (`$argon2id$v=19$m=...`). */
    passwordHash: text("password_hash").notNull(),
    /** Bumped to invalidate every cookie session of this user (password change, role change, disable). */
    sessionVersion: integer("session_version").notNull().default(1),
    disabledAt: integer("disabled_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }),
    lastSignInAt: integer("last_sign_in_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    uniqueIndex("users_email_unique").on(t.email),
    check("users_role_check", sql`${t.role} in (${inList(ROLES)})`),
    check("users_email_check", sql`${t.email} = lower(trim(${t.email})) and instr(${t.email}, '@') > 1`),
  ],
);

/**
 * Failed sign-in counters, one row per throttle key: `account:<email>` or `ip:<address>`.
 * Sessions live in the `sessions` table below (the cookie carries only their id).
 */
export const authThrottle = sqliteTable("auth_throttle", {
  key: text("key").primaryKey(),
  /** Failures counted since `window_start`. */
  failures: integer("failures").notNull().default(0),
  windowStart: integer("window_start", { mode: "timestamp_ms" }).notNull(),
  lastFailureAt: integer("last_failure_at", { mode: "timestamp_ms" }).notNull(),
  /** While in the future, sign-in attempts for this key are refused without checking the password. */
  lockedUntil: integer("locked_until", { mode: "timestamp_ms" }),
});

/**
 * Server-side sign-in sessions. The cookie holds only a random 256-bit session id (signed);
 * the row is keyed by the id's SHA-256, so a copy of the database does not hand out live
 * sessions. Signing out deletes the row; a session ends at `expires_at` (absolute) or after
 * an idle period since `last_seen_at` (app/services/session.server.ts).
 */
export const sessions = sqliteTable(
  "sessions",
  {
    /** Hex SHA-256 of the session id in the cookie. */
    idHash: text("id_hash").primaryKey(),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    createdAt: createdAt(),
    /** Refreshed at most once a minute. */
    lastSeenAt: integer("last_seen_at", { mode: "timestamp_ms" }).notNull(),
    /** Absolute end of the session. */
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
    /** User-Agent at sign-in (at most 300 characters), to recognise the session in the list. */
    userAgent: text("user_agent"),
    /** Client address at sign-in. */
    address: text("address"),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
);

export const apiTokens = sqliteTable(
  "api_tokens",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    name: text("name").notNull(),
    /** Hex SHA-256 of the full token; the token itself is shown once and never stored. */
    tokenHash: text("token_hash").notNull(),
    /** First characters of the token (e.g. `aw_3f9c2e1a`), shown in lists to recognise it. */
    prefix: text("prefix").notNull(),
    /** The token acts with this role (never above its creator's role at creation). */
    role: text("role", { enum: ROLES }).notNull().default("engineer"),
    createdById: integer("created_by_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    lastUsedAt: integer("last_used_at", { mode: "timestamp_ms" }),
    revokedAt: integer("revoked_at", { mode: "timestamp_ms" }),
    /**
     * "upload": a runner token (uploads runs, reads its own uploads, nothing else). No CHECK here:
     * adding one would rebuild the table; tokens.server.ts writes only TOKEN_SCOPES values.
     */
    scope: text("scope", { enum: TOKEN_SCOPES }).notNull().default("full"),
    /** When set, an upload token may only upload runs of the suite with this name. */
    suiteName: text("suite_name"),
  },
  (t) => [
    uniqueIndex("api_tokens_hash_unique").on(t.tokenHash),
    check("api_tokens_role_check", sql`${t.role} in (${inList(ROLES)})`),
  ],
);
