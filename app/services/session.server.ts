/**
 * Cookie sessions (createCookieSessionStorage from react-router). The cookie holds the
 * signed user id and the user's session version; every request re-reads the user row, so
 * a role change applies at once and bumping `users.session_version` signs a user out
 * everywhere.
 *
 * Cookie: `__arcwatch`, HttpOnly, SameSite=Lax, Path=/, 7 days, Secure when NODE_ENV is
 * "production" unless ARCWATCH_INSECURE_COOKIE=1 (plain-http deployments on a non-loopback
 * name). Secret: SESSION_SECRET (comma-separated to rotate: the first signs, all verify);
 * without it a development default is used and a loud warning is printed once.
 */
import { createCookieSessionStorage, type SessionStorage } from "react-router";

export interface SessionData {
  userId: number;
  sessionVersion: number;
  signedInAt: number;
}
export interface FlashData {
  notice: string;
}

export const SESSION_COOKIE = "__arcwatch";
export const SESSION_MAX_AGE_S = 7 * 24 * 3600;
const DEV_SECRET = "arcwatch-development-secret-do-not-use-in-production";

let warned = false;
/** The secrets in force; warns once on stderr when falling back to the development default. */
export function sessionSecrets(): string[] {
  const list = (process.env.SESSION_SECRET ?? "")
    .split(",")
    .map((s) => s.trim())
    .filter(Boolean);
  if (list.length > 0) return list;
  if (!warned) {
    warned = true;
    const bar = "!".repeat(78);
    console.warn(
      `\n${bar}\n!! SESSION_SECRET is not set: sessions are signed with the PUBLIC development default.\n` +
        `!! Anyone can forge a session cookie. Set SESSION_SECRET to a long random string\n` +
        `!! (e.g. \`node -e "console.log(crypto.randomBytes(32).toString('hex'))"\`) before real use.\n${bar}\n`,
    );
  }
  return [DEV_SECRET];
}

// Warn at server start (this module loads with the server build), not at the first request.
sessionSecrets();

let storage: { key: string; value: SessionStorage<SessionData, FlashData> } | undefined;

export function secureCookies(): boolean {
  return process.env.NODE_ENV === "production" && process.env.ARCWATCH_INSECURE_COOKIE !== "1";
}

export function sessionStorage(): SessionStorage<SessionData, FlashData> {
  const secrets = sessionSecrets();
  const secure = secureCookies();
  const key = `${secrets.join(",")}|${secure}`;
  if (storage?.key !== key) {
    storage = {
      key,
      value: createCookieSessionStorage<SessionData, FlashData>({
        cookie: {
          name: SESSION_COOKIE,
          httpOnly: true,
          sameSite: "lax",
          path: "/",
          secure,
          secrets,
          maxAge: SESSION_MAX_AGE_S,
        },
      }),
    };
  }
  return storage.value;
}

export function getSession(request: Request) {
  return sessionStorage().getSession(request.headers.get("Cookie"));
}
