/**
 * Rendered pages kept for many readers (app/services/page-cache.server.ts), through HTTP against
 * the built server: a kept page is served again to the same user only, with a fresh nonce in
 * every answer that matches the answer's Content-Security-Policy; another user, a signed-out
 * session and a changed database never get it.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startTestServer, type RunningServer } from "../helpers/server";

let server: RunningServer;
beforeAll(async () => {
  server = await startTestServer({ env: { ARCWATCH_JOB_WORKER: "0" } });
}, 400_000);
afterAll(async () => {
  await server?.stop();
});

async function signIn(email: string, password: string): Promise<string> {
  const r = await fetch(`${server.url}/signin`, {
    method: "POST",
    headers: { Origin: server.url, "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email, password }),
    redirect: "manual",
  });
  expect(r.status).toBe(302);
  return r.headers.get("set-cookie")!.split(";")[0]!;
}

interface Got {
  status: number;
  how: string | null;
  nonce: string | null;
  body: string;
  location: string | null;
}
async function get(path: string, cookie: string): Promise<Got> {
  const r = await fetch(`${server.url}${path}`, { headers: { Cookie: cookie }, redirect: "manual" });
  const csp = r.headers.get("content-security-policy") ?? "";
  return { status: r.status, how: r.headers.get("x-arcwatch-page-cache"), nonce: /'nonce-([^']+)'/.exec(csp)?.[1] ?? null, body: await r.text(), location: r.headers.get("location") };
}
const signedInAs = (html: string) => /data-testid="signed-in-as">([^<]*)</.exec(html)?.[1] ?? null;
const roleShown = (html: string) => /data-role="([a-z]+)"/.exec(html)?.[1] ?? null;
/** Every nonce attribute of the page equals the answer's own, and the page has some. */
function noncesMatch(g: Got) {
  const found = [...g.body.matchAll(/nonce="([^"]+)"/g)].map((m) => m[1]);
  expect(found.length).toBeGreaterThan(1);
  for (const n of found) expect(n).toBe(g.nonce);
}

describe("rendered pages kept per user and data version", () => {
  it("serves a kept page to its user with a fresh nonce, never to another user", async () => {
    const engineer = await signIn("engineer@arcwatch.test", "engineer-demo-pass");
    const viewer = await signIn("viewer@arcwatch.test", "viewer-demo-pass");
    const first = await get("/compare", engineer);
    expect(first.status).toBe(200);
    expect(first.how).toBe("miss");
    expect(signedInAs(first.body)).toBe("Demo Engineer");
    noncesMatch(first);

    const again = await get("/compare", engineer);
    expect(again.how).toBe("hit");
    expect(again.nonce).not.toBe(first.nonce);
    noncesMatch(again);
    expect(again.body).not.toContain(first.nonce!);
    // Apart from the nonce, the same page.
    expect(again.body.replaceAll(again.nonce!, "N")).toBe(first.body.replaceAll(first.nonce!, "N"));

    // Another user: rendered for them, their own name and role.
    const other = await get("/compare", viewer);
    expect(other.how).toBe("miss");
    expect(signedInAs(other.body)).toBe("Demo Viewer");
    expect(roleShown(other.body)).toBe("viewer");
    expect(other.body).not.toContain("engineer@arcwatch.test");

    // Many readers of both users at once: each answer is its reader's page.
    const mixed = await Promise.all(Array.from({ length: 40 }, (_, i) => (i % 2 ? get("/compare", viewer) : get("/compare", engineer)).then((g) => ({ i, g }))));
    const nonces = new Set<string>();
    for (const { i, g } of mixed) {
      expect(g.status).toBe(200);
      expect(signedInAs(g.body)).toBe(i % 2 ? "Demo Viewer" : "Demo Engineer");
      expect(["hit", "shared", "miss"]).toContain(g.how);
      noncesMatch(g);
      nonces.add(g.nonce!);
    }
    expect(nonces.size).toBe(mixed.length);
    expect(mixed.filter((m) => m.g.how === "hit").length).toBeGreaterThan(30);
  }, 120_000);

  it("gives nothing kept to a signed-out session, and renders again after the data changes", async () => {
    const engineer = await signIn("engineer@arcwatch.test", "engineer-demo-pass");
    expect((await get("/problems", engineer)).how).toBe("miss");
    expect((await get("/problems", engineer)).how).toBe("hit");

    // Any write (here: another sign-in stores a session row) is a new data version.
    await signIn("admin@arcwatch.test", "admin-demo-pass");
    const after = await get("/problems", engineer);
    expect(after.how).toBe("miss");
    expect((await get("/problems", engineer)).how).toBe("hit");

    const out = await fetch(`${server.url}/signout`, { method: "POST", headers: { Origin: server.url, Cookie: engineer }, redirect: "manual" });
    expect(out.status).toBe(302);
    const gone = await get("/problems", engineer);
    expect(gone.status).toBe(302);
    expect(gone.location).toMatch(/^\/signin/);
    expect(gone.how).toBeNull();
    expect(gone.body).not.toContain("Demo Engineer");
  }, 120_000);

  it("keeps no page it must not: other pages, other methods, anonymous readers", async () => {
    const engineer = await signIn("engineer@arcwatch.test", "engineer-demo-pass");
    expect((await get("/account", engineer)).how).toBeNull();
    expect((await get("/glossary", engineer)).how).toBeNull();
    expect((await get("/settings", engineer)).how).toBeNull();
    const anon = await get("/compare", "");
    expect(anon.status).toBe(302);
    expect(anon.how).toBeNull();
  }, 60_000);
});
