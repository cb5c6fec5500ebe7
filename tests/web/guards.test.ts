import { beforeAll, describe, expect, it } from "vitest";
import { REDIRECT_BYPASSES, REDIRECT_KEEPS } from "../helpers/redirect-bypasses";
import { formPost, useTempDatabase } from "../helpers/temp-db";

useTempDatabase("guards");

const { getDb } = await import("~/db/client.server");
const { createUser, changeRole, setPassword, setDisabled, LastAdminError, SelfDisableError } = await import("~/models/users.server");
const { requireRole, requireUser, getOptionalUser, signIn, safeRedirectTo } = await import("~/services/auth.server");
const { createApiToken, revokeApiToken, hashToken } = await import("~/services/tokens.server");
const { apiTokens } = await import("~/db/schema");
const { eq } = await import("drizzle-orm");

const BASE = "http://127.0.0.1:3000";
const cookies: Record<string, string> = {};
const ids: Record<string, number> = {};

async function cookieFor(email: string, password: string) {
  const r = await signIn(formPost(`${BASE}/signin`, { email, password }));
  if (!r.ok) throw new Error(`sign-in failed for ${email}: ${JSON.stringify(r.errors)}`);
  return r.headers.get("Set-Cookie")!.split(";")[0]!;
}
const page = (path: string, cookie?: string) => new Request(`${BASE}${path}`, { headers: cookie ? { Cookie: cookie } : {} });

/** Runs a guard and returns what it threw (Response, or data() with init). */
async function thrown(p: Promise<unknown>): Promise<{ status: number; location?: string | null; body?: unknown }> {
  try {
    await p;
  } catch (e) {
    if (e instanceof Response) {
      const body = e.headers.get("content-type")?.includes("json") ? await e.json() : undefined;
      return { status: e.status, location: e.headers.get("Location"), body };
    }
    const d = e as { type?: string; init?: { status?: number }; data?: unknown };
    if (d?.type === "DataWithResponseInit") return { status: d.init?.status ?? 200, body: d.data };
    throw e;
  }
  throw new Error("guard did not throw");
}

beforeAll(async () => {
  const db = getDb();
  for (const role of ["viewer", "engineer", "admin"] as const) {
    const u = await createUser(db, { email: `${role}@guards.test`, name: role, role, password: `${role}-password` });
    ids[role] = u.id;
    cookies[role] = await cookieFor(`${role}@guards.test`, `${role}-password`);
  }
});

describe("requireUser", () => {
  it("redirects a page request without a session to sign-in, keeping the destination", async () => {
    const r = await thrown(requireUser(page("/admin/users?tab=1")));
    expect(r.status).toBe(302);
    expect(r.location).toBe("/signin?redirectTo=%2Fadmin%2Fusers%3Ftab%3D1");
    expect((await thrown(requireUser(page("/")))).location).toBe("/signin");
    // client-side navigation data request: the .data suffix is not part of the destination
    expect((await thrown(requireUser(page("/account.data")))).location).toBe("/signin?redirectTo=%2Faccount");
  });

  it("answers 401 JSON on the API", async () => {
    const r = await thrown(requireUser(page("/api/me")));
    expect(r.status).toBe(401);
    expect(r.body).toEqual({ error: expect.stringMatching(/Sign in/) });
  });

  it("ignores a tampered cookie", async () => {
    const [name, value] = cookies.admin!.split("=");
    const forged = `${name}=${Buffer.from(JSON.stringify({ userId: ids.admin, sessionVersion: 1 })).toString("base64")}.${value!.split(".")[1]}`;
    expect(await getOptionalUser(page("/", forged))).toBeNull();
  });

  it("returns the user for a valid session and drops sessions after a password change", async () => {
    const db = getDb();
    const u = await createUser(db, { email: "rotating@guards.test", name: "R", role: "viewer", password: "first-password" });
    const c = await cookieFor("rotating@guards.test", "first-password");
    expect((await requireUser(page("/", c))).email).toBe("rotating@guards.test");
    await setPassword(db, u.id, "second-password");
    expect(await getOptionalUser(page("/", c))).toBeNull();
  });
});

describe("requireRole", () => {
  it("lets each role through to its level and no further", async () => {
    for (const [role, allowed] of [
      ["viewer", ["viewer"]],
      ["engineer", ["viewer", "engineer"]],
      ["admin", ["viewer", "engineer", "admin"]],
    ] as const) {
      for (const need of ["viewer", "engineer", "admin"] as const) {
        const req = page("/api/me", cookies[role]);
        if ((allowed as readonly string[]).includes(need)) expect((await requireRole(req, need)).role).toBe(role);
        else {
          const r = await thrown(requireRole(req, need));
          expect(r.status, `${role} needing ${need}`).toBe(403);
          expect(r.body).toEqual({ error: `This needs the ${need} role.` });
        }
      }
    }
  });

  it("answers a page request from the wrong role with 403 (not a redirect)", async () => {
    const r = await thrown(requireRole(page("/admin/users", cookies.viewer), "admin"));
    expect(r.status).toBe(403);
  });

  it("sees a role change on the next request (role is read from the database)", async () => {
    const db = getDb();
    const u = await createUser(db, { email: "promoted@guards.test", name: "P", role: "viewer", password: "promoted-pass" });
    const c = await cookieFor("promoted@guards.test", "promoted-pass");
    expect((await thrown(requireRole(page("/api/me", c), "engineer"))).status).toBe(403);
    changeRole(db, u.id, "engineer");
    expect((await requireRole(page("/api/me", c), "engineer")).role).toBe("engineer");
  });

  it("refuses to demote the last admin", () => {
    expect(() => changeRole(getDb(), ids.admin!, "viewer")).toThrow(LastAdminError);
  });

  it("a disabled account loses its sessions and cannot sign in; re-enabled it can", async () => {
    const db = getDb();
    const u = await createUser(db, { email: "leaver@guards.test", name: "L", role: "engineer", password: "leaver-password" });
    const c = await cookieFor("leaver@guards.test", "leaver-password");
    expect(setDisabled(db, u.id, true, ids.admin!)?.disabledAt).toBeInstanceOf(Date);
    expect(await getOptionalUser(page("/", c))).toBeNull();
    const r = await signIn(formPost(`${BASE}/signin`, { email: "leaver@guards.test", password: "leaver-password" }));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors.form).toBe("That e-mail and password do not match an account.");
    setDisabled(db, u.id, false, ids.admin!);
    expect((await requireUser(page("/", await cookieFor("leaver@guards.test", "leaver-password")))).email).toBe("leaver@guards.test");
  });

  it("an admin cannot disable themselves, nor the last enabled admin", async () => {
    const db = getDb();
    expect(() => setDisabled(db, ids.admin!, true, ids.admin!)).toThrow(SelfDisableError);
    expect(() => setDisabled(db, ids.admin!, true, ids.engineer!)).toThrow(LastAdminError);
    const second = await createUser(db, { email: "second-admin@guards.test", name: "A2", role: "admin", password: "second-admin-pw" });
    setDisabled(db, second.id, true, ids.admin!);
    // A disabled admin does not count: the only enabled admin still cannot be demoted.
    expect(() => changeRole(db, ids.admin!, "viewer")).toThrow(LastAdminError);
  });
});

describe("API tokens", () => {
  const bearer = (t: string) => new Request(`${BASE}/api/me`, { headers: { Authorization: `Bearer ${t}` } });

  it("stores only the SHA-256 of the token and authenticates by it, updating last use", async () => {
    const db = getDb();
    const { token, row } = createApiToken(db, { name: "ci runner", role: "engineer", createdById: ids.admin! });
    expect(token).toMatch(/^aw_[A-Za-z0-9_-]{43}$/);
    expect(row.tokenHash).toBe(hashToken(token));
    expect(row.tokenHash).not.toContain(token.slice(3));
    // SHA-256("abc") from FIPS 180-2, Appendix B.1
    expect(hashToken("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    const u = await requireRole(bearer(token), "engineer");
    expect(u.via).toBe("token");
    expect(u.role).toBe("engineer");
    const after = db.select().from(apiTokens).where(eq(apiTokens.id, row.id)).get()!;
    expect(after.lastUsedAt).not.toBeNull();
  });

  it("caps a token at its creator's current role", async () => {
    const db = getDb();
    const { token } = createApiToken(db, { name: "too strong", role: "admin", createdById: ids.engineer! });
    expect((await requireUser(bearer(token))).role).toBe("engineer");
  });

  it("refuses revoked and unknown tokens with 401", async () => {
    const db = getDb();
    const { token, row } = createApiToken(db, { name: "old", role: "viewer", createdById: ids.admin! });
    expect(revokeApiToken(db, row.id)).toBe(true);
    expect((await thrown(requireUser(bearer(token)))).status).toBe(401);
    expect((await thrown(requireUser(bearer("aw_doesnotexist")))).status).toBe(401);
  });
});

describe("safeRedirectTo", () => {
  it("keeps in-app paths and drops everything else", () => {
    expect(safeRedirectTo("/account")).toBe("/account");
    expect(safeRedirectTo("//evil.example/x")).toBe("/");
    expect(safeRedirectTo("https://evil.example")).toBe("/");
    expect(safeRedirectTo("/\\evil.example")).toBe("/");
    expect(safeRedirectTo("/signin?redirectTo=/x")).toBe("/");
    expect(safeRedirectTo(null)).toBe("/");
  });

  it("refuses every known bypass and keeps same-origin paths exactly", () => {
    for (const v of REDIRECT_BYPASSES) expect(safeRedirectTo(v, "/", BASE), JSON.stringify(v)).toBe("/");
    for (const [v, want] of REDIRECT_KEEPS) expect(safeRedirectTo(v, "/", BASE)).toBe(want);
  });
});
