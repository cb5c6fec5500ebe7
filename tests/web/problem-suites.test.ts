/**
 * The problem page's suite actions on the server: a viewer is refused (403) and nothing is stored;
 * an engineer adds the problem to a suite (version 1, who, note) and the page's loader then says
 * the suite runs it because of that change; adding it twice is refused (409); an unknown suite is
 * a 400 naming the field; taking it out again is version 2; "Run it now" queues a job of the
 * problem's own suite.
 */
import { describe, expect, it } from "vitest";
import { formPost, useTempDatabase } from "../helpers/temp-db";

useTempDatabase("problem-suites");

const { getDb } = await import("~/db/client.server");
const { createUser } = await import("~/models/users.server");
const { signIn } = await import("~/services/auth.server");
const { listSuiteChanges } = await import("~/models/suite-changes.server");
const { listJobs } = await import("~/models/jobs.server");
const route = await import("~/routes/problems.$id");

const BASE = "http://127.0.0.1:3000";
const db = getDb();
await createUser(db, { email: "v@arcwatch.test", name: "Vera Viewer", role: "viewer", password: "viewer-password-123" });
await createUser(db, { email: "e@arcwatch.test", name: "Ed Engineer", role: "engineer", password: "engineer-password-123" });
async function cookieFor(email: string, password: string) {
  const r = await signIn(formPost(`${BASE}/signin`, { email, password }));
  if (!r.ok) throw new Error("sign-in failed");
  return r.headers.get("Set-Cookie")!.split(";")[0]!;
}
const viewer = await cookieFor("v@arcwatch.test", "viewer-password-123");
const engineer = await cookieFor("e@arcwatch.test", "engineer-password-123");
const ID = "wren-wheel-spin-down";

async function act(cookie: string, fields: Record<string, string>) {
  const request = formPost(`${BASE}/problems/${ID}`, fields, { Cookie: cookie });
  try {
    const out = (await route.action({ request, params: { id: ID }, context: {} } as never)) as unknown;
    if (out instanceof Response) return { status: out.status, body: null };
    const d = out as { type?: string; init?: { status?: number }; data?: unknown };
    return { status: d.init?.status ?? 200, body: d.data as Record<string, string> };
  } catch (e) {
    if (e instanceof Response) return { status: e.status, body: null };
    const d = e as { type?: string; init?: { status?: number }; data?: unknown };
    if (d?.type === "DataWithResponseInit") return { status: d.init?.status ?? 500, body: d.data as Record<string, string> };
    throw e;
  }
}
const quickView = async () => {
  const data = (await route.loader({ request: new Request(`${BASE}/problems/${ID}`, { headers: { Cookie: engineer } }), params: { id: ID }, context: {} } as never)) as { suites: { name: string; membership: { included: boolean; via: string } }[] };
  return data.suites.find((s) => s.name === "quick")!.membership;
};

describe("suite changes from the problem page", () => {
  it("viewer refused; engineer adds, twice refused, unknown suite named, removed again", async () => {
    expect(await quickView()).toMatchObject({ included: false, via: "not-selected" });
    expect((await act(viewer, { intent: "add-to-suite", suite: "quick" })).status).toBe(403);
    expect(listSuiteChanges(db, "quick")).toEqual([]);

    expect((await act(engineer, { intent: "add-to-suite", suite: "quick", note: "spin-down on every commit" })).status).toBe(302);
    expect(listSuiteChanges(db, "quick")).toEqual([expect.objectContaining({ version: 1, action: "add", problemId: ID, by: "Ed Engineer", note: "spin-down on every commit" })]);
    expect(await quickView()).toMatchObject({ included: true, via: "change" });

    expect(await act(engineer, { intent: "add-to-suite", suite: "quick" })).toMatchObject({ status: 409, body: { suiteError: expect.stringMatching(/already runs/) } });
    expect(await act(engineer, { intent: "add-to-suite", suite: "nightly-x" })).toMatchObject({ status: 400, body: { suiteError: expect.stringMatching(/^suite: "nightly-x" is not a suite of this checkout \(it has: full, quick\)/) } });
    // full selects every problem in its file: not removable here
    expect((await act(engineer, { intent: "remove-from-suite", suite: "full" })).status).toBe(409);

    expect((await act(engineer, { intent: "remove-from-suite", suite: "quick" })).status).toBe(302);
    expect(listSuiteChanges(db, "quick").map((c) => [c.version, c.action])).toEqual([[1, "add"], [2, "remove"]]);
    expect(await quickView()).toMatchObject({ included: false, via: "removed" });
  }, 180_000); // the page's loader starts a solver thread (seconds on a loaded machine)

  it("Run it now queues the problem's own suite (viewer refused)", async () => {
    expect((await act(viewer, { intent: "run-now" })).status).toBe(403);
    expect(listJobs(db)).toHaveLength(0);
    expect((await act(engineer, { intent: "run-now" })).status).toBe(302);
    const jobs = listJobs(db);
    expect(jobs).toHaveLength(1);
    expect(jobs[0]!.payloadJson).toMatchObject({ suite: `problem-${ID}`, problem: ID, commit: expect.stringMatching(/^[0-9a-f]{40}$/) });
  });
});
