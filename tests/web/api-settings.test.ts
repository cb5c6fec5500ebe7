/**
 * Settings and export: engineers propose thresholds and admins save them (roles checked in the
 * action), a saved set overrides the suite file; subscriptions; CSV quoting as RFC 4180 states
 * it (Shafranovich, "Common Format and MIME Type for CSV Files", RFC 4180, 2005, section 2).
 */
import { beforeAll, describe, expect, it } from "vitest";
import { useTempDatabase } from "../helpers/temp-db";

useTempDatabase("settings");

const { getDb } = await import("~/db/client.server");
const { createUser } = await import("~/models/users.server");
const { createApiToken } = await import("~/services/tokens.server");
const { effectiveThresholds, listSubscriptions } = await import("~/models/settings.server");
const { toCsv } = await import("~/services/export.server");
const { suites, problems } = await import("~/db/schema");
const settings = await import("~/routes/settings");

const tokens: Record<string, string> = {};
const BASE = "http://127.0.0.1:3000";

function post(role: string, fields: Record<string, string>) {
  return new Request(`${BASE}/settings`, { method: "POST", body: new URLSearchParams(fields), headers: { authorization: `Bearer ${tokens[role]}`, "content-type": "application/x-www-form-urlencoded" } });
}

async function act(role: string, fields: Record<string, string>): Promise<{ status: number; data: { errors: Record<string, string>; notice: string | null } }> {
  try {
    const out = (await settings.action({ request: post(role, fields), params: {}, context: {} } as never)) as unknown as { data: never; init?: { status?: number } };
    return { status: out.init?.status ?? 200, data: out.data };
  } catch (e) {
    if (e instanceof Response) return { status: e.status, data: { errors: {}, notice: null } };
    const d = e as { init?: { status?: number } };
    return { status: d.init?.status ?? 500, data: { errors: {}, notice: null } };
  }
}

const proposal = { intent: "propose", suiteName: "quick", accuracyFactor: "3", accuracyFloor: "1e-9", iterationShare: "0.25", iterationMin: "3", speedRatio: "1.3", alpha: "0.001", confidence: "0.99", driftMinShift: "0.1", driftMinHistory: "6" };

beforeAll(async () => {
  const db = getDb();
  for (const role of ["viewer", "engineer", "admin"] as const) {
    const u = await createUser(db, { email: `${role}@settings.test`, name: role, role, password: `${role}-password` });
    tokens[role] = createApiToken(db, { name: role, role, createdById: u.id }).token;
  }
  db.insert(suites).values({ name: "quick", contentHash: "a".repeat(64), definitionJson: {}, thresholdsJson: { speedRatio: 1.2, alpha: 0.001 } }).run();
  db.insert(problems).values({ id: "pika-rover-dash", title: "Pika" }).run();
});

describe("thresholds", () => {
  it("a viewer cannot propose; an engineer proposes; bad values come back at their field", async () => {
    expect((await act("viewer", proposal)).status).toBe(403);
    const bad = await act("engineer", { ...proposal, speedRatio: "0.5" });
    expect(bad.status).toBe(400);
    expect(bad.data.errors.speedRatio).toBeTruthy();
    const ok = await act("engineer", proposal);
    expect(ok.status).toBe(200);
    expect(ok.data.notice).toMatch(/Proposal \d+/);
    // not in force until an admin saves it
    expect(effectiveThresholds(getDb(), "quick", { speedRatio: 1.2 }).speedRatio).toBe(1.2);
  });

  it("only an admin saves; the saved set overrides the suite file", async () => {
    const id = (await act("engineer", { ...proposal, speedRatio: "1.4" })).data.notice!.match(/Proposal (\d+)/)![1]!;
    expect((await act("engineer", { intent: "save", id })).status).toBe(403);
    expect((await act("admin", { intent: "save", id })).status).toBe(200);
    expect(effectiveThresholds(getDb(), "quick", { speedRatio: 1.2 }).speedRatio).toBe(1.4);
    expect((await act("admin", { intent: "save", id })).status).toBe(400); // already decided
  });
});

describe("subscriptions", () => {
  it("a viewer follows a suite and a problem, once each, and can stop", async () => {
    expect((await act("viewer", { intent: "subscribe", target: "suite", suiteName: "quick" })).status).toBe(200);
    expect((await act("viewer", { intent: "subscribe", target: "suite", suiteName: "quick" })).status).toBe(200);
    expect((await act("viewer", { intent: "subscribe", target: "problem", problemId: "no-such-problem" })).status).toBe(400);
    expect((await act("viewer", { intent: "subscribe", target: "problem", problemId: "pika-rover-dash" })).status).toBe(200);
    const db = getDb();
    const viewerId = (await import("~/models/users.server")).findUserByEmail(db, "viewer@settings.test")!.id;
    const subs = listSubscriptions(db, viewerId);
    expect(subs.map((s) => s.suiteName ?? s.problemId).sort()).toEqual(["pika-rover-dash", "quick"]);
    await act("viewer", { intent: "unsubscribe", id: String(subs[0]!.id) });
    expect(listSubscriptions(db, viewerId)).toHaveLength(1);
  });
});

describe("CSV export", () => {
  it("quotes fields with commas, quotes and line breaks, doubles quotes, ends lines with CRLF", () => {
    const csv = toCsv(["a", "b", "c"], [{ a: 'say "hi"', b: "x,y", c: "two\nlines" }, { a: 1.5, b: null, c: true }]);
    expect(csv).toBe('a,b,c\r\n"say ""hi""","x,y","two\nlines"\r\n1.5,,true\r\n');
  });
  it("defuses spreadsheet formulas and writes non-finite numbers as empty", () => {
    expect(toCsv(["a", "b"], [{ a: "=HYPERLINK(1)", b: Number.NaN }])).toBe("a,b\r\n'=HYPERLINK(1),\r\n");
  });
});
