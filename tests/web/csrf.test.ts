import { describe, expect, it } from "vitest";
import { checkSameOrigin } from "~/services/csrf.server";

const url = "http://127.0.0.1:3000/admin/users";
function req(method: string, headers: Record<string, string> = {}) {
  return new Request(url, { method, headers });
}

describe("same-origin check for state-changing requests", () => {
  it("lets safe methods through whatever their headers", () => {
    for (const m of ["GET", "HEAD", "OPTIONS"]) expect(checkSameOrigin(req(m, { Origin: "https://elsewhere.example" })).ok).toBe(true);
  });

  it("accepts a POST whose Origin is this server", () => {
    expect(checkSameOrigin(req("POST", { Origin: "http://127.0.0.1:3000" })).ok).toBe(true);
  });

  it("refuses another origin, another port, another scheme and the opaque 'null' origin", () => {
    for (const o of ["https://elsewhere.example", "http://127.0.0.1:3001", "https://127.0.0.1:3000", "null", "http://localhost:3000"]) {
      const v = checkSameOrigin(req("POST", { Origin: o }));
      expect(v.ok, o).toBe(false);
    }
    for (const m of ["PUT", "PATCH", "DELETE"]) expect(checkSameOrigin(req(m, { Origin: "https://elsewhere.example" })).ok).toBe(false);
  });

  it("falls back to the Referer when Origin is absent", () => {
    expect(checkSameOrigin(req("POST", { Referer: "http://127.0.0.1:3000/account" })).ok).toBe(true);
    expect(checkSameOrigin(req("POST", { Referer: "https://elsewhere.example/page" })).ok).toBe(false);
    expect(checkSameOrigin(req("POST", { Referer: "not a url" })).ok).toBe(false);
  });

  it("refuses a POST with neither header unless it carries a Bearer token", () => {
    const v = checkSameOrigin(req("POST"));
    expect(v.ok).toBe(false);
    if (!v.ok) expect(v.reason).toMatch(/without Origin or Referer/);
    expect(checkSameOrigin(req("POST", { Authorization: "Bearer aw_abc" })).ok).toBe(true);
    expect(checkSameOrigin(req("POST", { Authorization: "Basic abc" })).ok).toBe(false);
  });
});
