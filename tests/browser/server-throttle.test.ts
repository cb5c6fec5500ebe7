/**
 * Sign-in throttling through the real server (scripts/serve.mjs): the per-address bucket
 * uses the socket address, so spoofed headers do not let a client escape it; the account
 * bucket locks the right password too. Plain HTTP, no browser needed.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startTestServer, type RunningServer } from "../helpers/server";

let server: RunningServer;
beforeAll(async () => {
  server = await startTestServer();
});
afterAll(async () => {
  await server?.stop();
});

async function attempt(email: string, password: string, headers: Record<string, string> = {}) {
  const r = await fetch(`${server.url}/signin`, {
    method: "POST",
    headers: { Origin: server.url, "Content-Type": "application/x-www-form-urlencoded", ...headers },
    body: new URLSearchParams({ email, password }),
    redirect: "manual",
  });
  return { status: r.status, text: await r.text() };
}

describe("throttle through the server", () => {
  it("locks an account after 5 failures, even for its right password", async () => {
    for (let i = 0; i < 5; i++) expect((await attempt("viewer@arcwatch.test", `wrong-${i}-pass`)).status).toBe(401);
    const r = await attempt("viewer@arcwatch.test", "viewer-demo-pass");
    expect(r.status).toBe(429);
    expect(r.text).toContain("Too many failed sign-in attempts. Try again in a minute.");
    // Another account from the same address is still allowed (address limit not reached).
    expect((await attempt("engineer@arcwatch.test", "engineer-demo-pass")).status).toBe(302);
  });

  it("locks the client address after 20 failures, whatever address headers it forges", async () => {
    // 5 failures above already count for this address (127.0.0.1); 15 more reach 20.
    for (let i = 0; i < 15; i++) {
      const r = await attempt(`ghost${i}@arcwatch.test`, "guess-password", {
        "x-arcwatch-client-address": `forged-${i}`,
        "X-Forwarded-For": `198.51.100.${i}`,
      });
      expect(r.status).toBe(401);
    }
    const r = await attempt("admin@arcwatch.test", "admin-demo-pass", { "x-arcwatch-client-address": "fresh-address" });
    expect(r.status).toBe(429);
  });
});
