/** Typed queries on users. Role checks belong to the callers' guards (app/services/auth.server.ts). */
import { and, asc, count, eq, isNull, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { ROLES, users, type Role, type UserRow } from "~/db/schema";
import { hashPassword } from "~/services/password.server";
import { endUserSessions } from "~/services/session.server";

/** The fields safe to hand to the UI or the API (never the password hash). */
export type PublicUser = Pick<UserRow, "id" | "email" | "name" | "role" | "createdAt" | "lastSignInAt" | "disabledAt">;

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}

const publicColumns = {
  id: users.id,
  email: users.email,
  name: users.name,
  role: users.role,
  createdAt: users.createdAt,
  lastSignInAt: users.lastSignInAt,
  disabledAt: users.disabledAt,
};

export function findUserByEmail(db: Db, email: string): UserRow | undefined {
  return db.select().from(users).where(eq(users.email, normaliseEmail(email))).get();
}

export function getUserById(db: Db, id: number): UserRow | undefined {
  return db.select().from(users).where(eq(users.id, id)).get();
}

export function listUsers(db: Db): PublicUser[] {
  return db.select(publicColumns).from(users).orderBy(asc(users.email)).all();
}

export function countUsers(db: Db): number {
  return db.select({ n: count() }).from(users).get()?.n ?? 0;
}

export function countAdmins(db: Db): number {
  return db.select({ n: count() }).from(users).where(eq(users.role, "admin")).get()?.n ?? 0;
}

export async function createUser(
  db: Db,
  input: { email: string; name: string; role: Role; password: string },
): Promise<PublicUser> {
  const passwordHash = await hashPassword(input.password);
  return db
    .insert(users)
    .values({ email: normaliseEmail(input.email), name: input.name.trim(), role: input.role, passwordHash })
    .returning(publicColumns)
    .get();
}

export class LastAdminError extends Error {
  constructor() {
    super("At least one admin must remain.");
  }
}

/** Changes a role; refuses to demote the last enabled admin (checked inside one transaction). */
export function changeRole(db: Db, id: number, role: Role): PublicUser | undefined {
  return db.transaction((tx) => {
    const current = tx.select().from(users).where(eq(users.id, id)).get();
    if (!current) return undefined;
    if (current.role === "admin" && role !== "admin" && !current.disabledAt) {
      const enabledAdmins =
        tx
          .select({ n: count() })
          .from(users)
          .where(and(eq(users.role, "admin"), isNull(users.disabledAt)))
          .get()?.n ?? 0;
      if (enabledAdmins <= 1) throw new LastAdminError();
    }
    return tx
      .update(users)
      .set({ role, updatedAt: new Date() })
      .where(eq(users.id, id))
      .returning(publicColumns)
      .get();
  });
}

export class SelfDisableError extends Error {
  constructor() {
    super("You cannot disable your own account.");
  }
}

/**
 * Disables (signs out everywhere, refuses sign-in) or re-enables an account. Accounts are
 * disabled rather than deleted so that their comments and triage history keep their author.
 * Refuses to disable the acting admin or the last enabled admin.
 */
export function setDisabled(db: Db, id: number, disabled: boolean, actingUserId: number): PublicUser | undefined {
  const updated = db.transaction((tx) => {
    const current = tx.select().from(users).where(eq(users.id, id)).get();
    if (!current) return undefined;
    if (disabled && id === actingUserId) throw new SelfDisableError();
    if (disabled && current.role === "admin") {
      const enabledAdmins =
        tx
          .select({ n: count() })
          .from(users)
          .where(and(eq(users.role, "admin"), isNull(users.disabledAt)))
          .get()?.n ?? 0;
      if (enabledAdmins <= 1) throw new LastAdminError();
    }
    return tx
      .update(users)
      .set(
        disabled
          ? { disabledAt: new Date(), sessionVersion: sql`${users.sessionVersion} + 1`, updatedAt: new Date() }
          : { disabledAt: null, updatedAt: new Date() },
      )
      .where(eq(users.id, id))
      .returning(publicColumns)
      .get();
  });
  if (updated && disabled) endUserSessions(db, id);
  return updated;
}

/**
 * Sets a new password, bumps the session version and ends every server-side session of the
 * user except `keepSessionIdHash` (the session that made the change, if any). Returns the
 * new version.
 */
export async function setPassword(db: Db, id: number, password: string, keepSessionIdHash?: string): Promise<number> {
  const passwordHash = await hashPassword(password);
  const row = db
    .update(users)
    .set({ passwordHash, sessionVersion: sql`${users.sessionVersion} + 1`, updatedAt: new Date() })
    .where(eq(users.id, id))
    .returning({ v: users.sessionVersion })
    .get();
  if (!row) throw new Error(`User ${id} not found`);
  endUserSessions(db, id, keepSessionIdHash);
  return row.v;
}

export function updateName(db: Db, id: number, name: string): void {
  db.update(users).set({ name: name.trim(), updatedAt: new Date() }).where(eq(users.id, id)).run();
}

export function markSignedIn(db: Db, id: number, newHash?: string): void {
  db.update(users)
    .set(newHash ? { lastSignInAt: new Date(), passwordHash: newHash } : { lastSignInAt: new Date() })
    .where(eq(users.id, id))
    .run();
}
