/**
 * Sign-in (remix-auth + remix-auth-form) and the guards every loader, action and API route
 * calls: `getOptionalUser`, `requireUser`, `requireRole`. Guards throw:
 * - pages: a redirect to /signin?redirectTo=... (no user) or a 403 response (wrong role);
 * - API (`/api/...`): 401 / 403 JSON `{ error }`.
 * The API also accepts `Authorization: Bearer <token>` (app/services/tokens.server.ts).
 */
import { data, redirect } from "react-router";
import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { z } from "zod";
import { getDb } from "~/db/client.server";
import type { Role } from "~/db/schema";
import { findUserByEmail, getUserById, markSignedIn, normaliseEmail } from "~/models/users.server";
import { clientAddress } from "./client-address.server";
import { decoyPasswordHash, hashPassword, needsRehash, verifyPassword } from "./password.server";
import { ROLE_RANK } from "./roles";
import { createUserSession, currentSession, destroyRequestSession } from "./session.server";
import { attemptKeys, describeWait, reserveAttempt, settleAttempt } from "./throttle.server";
import { authenticateToken, bearerToken } from "./tokens.server";

export interface AuthUser {
  id: number;
  email: string;
  name: string;
  role: Role;
  via: "session" | "token";
  tokenId?: number;
  /** The server-side session's id hash (sessions only). */
  sessionIdHash?: string;
}

/** The one message for an unknown e-mail and a wrong password alike. */
export const GENERIC_SIGNIN_ERROR = "That e-mail and password do not match an account.";

class InvalidCredentials extends Error {}

let authenticator: Authenticator<AuthUser> | undefined;
function getAuthenticator(): Authenticator<AuthUser> {
  if (authenticator) return authenticator;
  authenticator = new Authenticator<AuthUser>();
  authenticator.use(
    new FormStrategy<AuthUser>(async ({ form }) => {
      const email = normaliseEmail(String(form.get("email") ?? ""));
      const password = String(form.get("password") ?? "");
      const db = getDb();
      const user = findUserByEmail(db, email);
      // Verify against a decoy hash when the account does not exist, so both paths take
      // the same argon2 time and the answer gives no hint.
      const ok = await verifyPassword(user?.passwordHash ?? (await decoyPasswordHash()), password);
      if (!user || !ok || user.disabledAt) throw new InvalidCredentials();
      markSignedIn(db, user.id, needsRehash(user.passwordHash) ? await hashPassword(password) : undefined);
      return { id: user.id, email: user.email, name: user.name, role: user.role, via: "session" };
    }),
    "form",
  );
  return authenticator;
}

export const signInSchema = z.object({
  email: z.string().trim().min(1, "Enter your e-mail address.").max(254, "That e-mail address is too long.").pipe(z.email("Enter a valid e-mail address.")),
  password: z.string().min(1, "Enter your password.").max(256, "That password is too long."),
});

export type SignInFields = "email" | "password";
export type SignInOutcome =
  | { ok: true; user: AuthUser; headers: Headers }
  | { ok: false; status: number; errors: Partial<Record<SignInFields | "form", string>>; values: { email: string } };

/**
 * Validates the form, applies the throttle, checks the password and, on success, returns
 * the Set-Cookie header of a fresh session.
 */
export async function signIn(request: Request): Promise<SignInOutcome> {
  const form = await request.clone().formData();
  const values = { email: String(form.get("email") ?? "") };
  const parsed = signInSchema.safeParse({ email: form.get("email") ?? "", password: form.get("password") ?? "" });
  if (!parsed.success) {
    const flat = z.flattenError(parsed.error).fieldErrors;
    return { ok: false, status: 400, values, errors: { email: flat.email?.[0], password: flat.password?.[0] } };
  }
  const db = getDb();
  const reservation = reserveAttempt(db, attemptKeys(parsed.data.email, clientAddress(request)));
  if (!reservation.ok) return { ok: false, status: 429, values, errors: { form: tooManyMessage(reservation.waitMs) } };
  let user: AuthUser;
  try {
    user = await getAuthenticator().authenticate("form", request);
  } catch (err) {
    if (!(err instanceof InvalidCredentials)) throw err;
    return { ok: false, status: 401, values, errors: { form: GENERIC_SIGNIN_ERROR } };
  }
  settleAttempt(db, reservation, true);
  const cookie = await createUserSession(db, user.id, { userAgent: request.headers.get("user-agent"), address: clientAddress(request) });
  const headers = new Headers({ "Set-Cookie": cookie });
  return { ok: true, user, headers };
}

function tooManyMessage(waitMs: number): string {
  return `Too many failed sign-in attempts. Try again in ${describeWait(waitMs)}.`;
}

/**
 * Checks a signed-in user's current password (account page) under the same throttle as
 * sign-in: null when right, else the field message (wrong, or locked out for a while).
 */
export async function checkCurrentPassword(request: Request, userId: number, password: string): Promise<string | null> {
  const db = getDb();
  const row = getUserById(db, userId);
  if (!row) return "That is not your current password.";
  const reservation = reserveAttempt(db, attemptKeys(row.email, clientAddress(request)));
  if (!reservation.ok) return tooManyMessage(reservation.waitMs);
  const ok = await verifyPassword(row.passwordHash, password);
  settleAttempt(db, reservation, ok);
  return ok ? null : "That is not your current password.";
}

/** Ends the request's server-side session; returns the Set-Cookie header that clears the cookie. */
export async function signOutHeaders(request: Request): Promise<Headers> {
  return new Headers({ "Set-Cookie": await destroyRequestSession(request) });
}

export function isApiRequest(request: Request): boolean {
  return new URL(request.url).pathname.startsWith("/api/");
}

class BadToken extends Error {}
/** An upload-only (runner) token on a route that is not an upload route: see runner-auth.server.ts. */
class UploadOnlyToken extends Error {}
export const UPLOAD_ONLY_MESSAGE = "This token may only upload runs and read the runs it uploaded.";

async function resolveUser(request: Request): Promise<AuthUser | null> {
  const db = getDb();
  const token = bearerToken(request);
  if (token !== null) {
    const t = authenticateToken(db, token);
    if (!t) throw new BadToken();
    if (t.scope === "upload") throw new UploadOnlyToken();
    return t;
  }
  const session = await currentSession(request, db);
  if (!session) return null;
  const row = getUserById(db, session.userId);
  if (!row || row.disabledAt) return null;
  return { id: row.id, email: row.email, name: row.name, role: row.role, via: "session", sessionIdHash: session.idHash };
}

/** The signed-in user, or null. A bad bearer token on the API throws 401. */
export async function getOptionalUser(request: Request): Promise<AuthUser | null> {
  try {
    return await resolveUser(request);
  } catch (err) {
    if (err instanceof BadToken) throw unauthorized(request, "Invalid or revoked API token.");
    if (err instanceof UploadOnlyToken) throw Response.json({ error: UPLOAD_ONLY_MESSAGE }, { status: 403 });
    throw err;
  }
}

/** Placeholder origin for `safeRedirectTo` when the caller does not pass its own. */
const LOCAL_ORIGIN = "http://arcwatch.invalid";

/**
 * A safe in-app path to return to after signing in (never another origin). The value must
 * be a path starting with a single "/", free of control characters (C0, DEL, C1) and
 * backslashes; it is then resolved with the WHATWG URL parser against `origin` (this
 * server's origin) and accepted only when it stays on that origin. The path returned is
 * the parser's normalised one, so dot segments cannot turn it into `//host` afterwards.
 * Sign-in and sign-out pages give `fallback` (no loops).
 */
export function safeRedirectTo(value: unknown, fallback = "/", origin = LOCAL_ORIGIN): string {
  if (typeof value !== "string" || value.length === 0 || value.length > 2048) return fallback;
  if (/[\u0000-\u001f\u007f-\u009f\\]/.test(value)) return fallback;
  if (!value.startsWith("/") || value.startsWith("//")) return fallback;
  let url: URL;
  try {
    url = new URL(value, origin);
  } catch {
    return fallback;
  }
  if (url.origin !== new URL(origin).origin) return fallback;
  const path = url.pathname + url.search + url.hash;
  if (!path.startsWith("/") || path.startsWith("//")) return fallback;
  if (/^\/(signin|signout)(?:[/?#.]|$)/i.test(url.pathname + "/")) return fallback;
  return path;
}

/** The page a request is for, without React Router's `.data` suffix of client navigations. */
function pagePath(request: Request): string {
  const url = new URL(request.url);
  let path = url.pathname;
  if (path === "/_root.data") path = "/";
  else if (path.endsWith(".data")) path = path.slice(0, -".data".length);
  url.searchParams.delete("_routes");
  const search = url.searchParams.toString();
  return path + (search ? `?${search}` : "");
}

function unauthorized(request: Request, message = "Sign in first, or send an API token."): Response {
  if (isApiRequest(request)) return Response.json({ error: message }, { status: 401 });
  const to = pagePath(request);
  return redirect(to === "/" ? "/signin" : `/signin?redirectTo=${encodeURIComponent(to)}`);
}

function forbidden(request: Request, role: Role) {
  const message = `This needs the ${role} role.`;
  if (isApiRequest(request)) return Response.json({ error: message }, { status: 403 });
  return data({ message }, { status: 403, statusText: "Forbidden" });
}

export async function requireUser(request: Request): Promise<AuthUser> {
  const user = await getOptionalUser(request);
  if (!user) throw unauthorized(request);
  return user;
}

export async function requireRole(request: Request, role: Role): Promise<AuthUser> {
  const user = await requireUser(request);
  if (ROLE_RANK[user.role] < ROLE_RANK[role]) throw forbidden(request, role);
  return user;
}
