/**
 * An uploaded run takes the same step after detection as a command-line run (`alertOrConfirm`):
 * before, the server stored an upload's regressions and told nobody (no e-mail, no A/B), and
 * `bench --upload` counted the server's speed findings in its exit code at once. Now the upload's
 * answer names the A/B job the server queued, non-speed regressions are e-mailed at once, the speed
 * ones wait for the verdict, GET /api/runs/:id carries it, and `awaitServerConfirmation` (what
 * `bench --upload --confirm` polls with) waits for it. Timings here are invented test data.
 */
import http from "node:http";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { useTempDatabase } from "../helpers/temp-db";
import { pikaCase, runHeader } from "../helpers/run-payload";
import { twoCommitRepo } from "../helpers/two-commit-repo";

useTempDatabase("ingestconf");

const { getDb } = await import("~/db/client.server");
const { outbox, subscriptions, users } = await import("~/db/schema");
const { createApiToken } = await import("~/services/tokens.server");
const { handleIngest } = await import("~/services/ingest.server");
const { afterAbJob } = await import("~/services/ab-confirm.server");
const { stopStandin } = await import("~/services/mail.server");
const { loadSuite } = await import("~/runs/suite");
const { PAYLOAD_FORMAT } = await import("~/runs/payload");
const { awaitServerConfirmation } = await import("../../bench/runner/upload");

const BASE_ID = crypto.randomUUID();
const HEAD_ID = crypto.randomUUID();
let repo = "";
let c1 = "";
let c2 = "";
let removeRepo = () => {};
let token = "";
let suite: ReturnType<typeof loadSuite>;

beforeAll(() => {
  ({ repo, c1, c2, remove: removeRepo } = twoCommitRepo("ingestconf", [{ format: "arcwatch-suite/1", name: "trio", problems: ["pika-rover-dash"], schemes: ["trapezoidal"], meshes: [{ intervals: 10 }, { intervals: 11 }, { intervals: 12 }] }]));
  process.env.ARCWATCH_REPO = repo;
  suite = loadSuite(path.join(repo, "bench", "suites", "trio.json"));
  const db = getDb();
  const eng = db.insert(users).values({ email: "eng@example.com", name: "Eng", passwordHash: "x", role: "engineer" }).returning({ id: users.id }).get().id;
  token = createApiToken(db, { name: "runner", role: "engineer", createdById: eng }).token;
  db.insert(subscriptions).values({ userId: eng, suiteName: "trio" }).run();
});

afterAll(async () => {
  await stopStandin();
  removeRepo();
});

const samples = (m: number) => Array.from({ length: 12 }, (_, i) => m * (1 + 0.01 * ((i * 7) % 5)));

function payload(id: string, commit: string, slow: number, spoil: number) {
  return {
    format: PAYLOAD_FORMAT,
    run: runHeader(id, commit, "main", commit === c1 ? "one" : "two"),
    suite: { name: suite.definition.name, contentHash: suite.contentHash, definition: suite.definition, thresholds: null },
    problems: [],
    cases: [
      // Two cases three times slower (speed regressions), one case with a hundred times the error (accuracy).
      pikaCase(10, { samples: samples(0.01 * slow), medianSeconds: 0.01 * slow }),
      pikaCase(11, { samples: samples(0.011 * slow), medianSeconds: 0.011 * slow }),
      pikaCase(12, { samples: samples(0.012), medianSeconds: 0.012, objectiveErrorRel: 1e-6 * spoil, stateError: 1e-5 * spoil }),
    ],
  };
}

const ingest = (body: unknown) =>
  handleIngest(new Request("http://127.0.0.1:3999/api/runs", { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: JSON.stringify(body) }));

describe("an uploaded run's regressions", () => {
  it("are e-mailed (accuracy) or put to a queued A/B (speed), and GET /api/runs/:id carries the verdict", async () => {
    const db = getDb();
    const first = await ingest(payload(BASE_ID, c1, 1, 1));
    expect(first.status, JSON.stringify(await first.clone().json())).toBe(201);
    const res = await ingest(payload(HEAD_ID, c2, 3, 100));
    expect(res.status).toBe(201);
    const body = (await res.json()) as { newRegressions: number; abJobId: number | null; alerted: number; unconfirmed: string | null; detection?: unknown };
    expect(body.detection).toBeUndefined();
    expect(body.newRegressions).toBeGreaterThanOrEqual(3);
    expect(body.unconfirmed).toBeNull();
    expect(typeof body.abJobId).toBe("number");
    // The accuracy regression went out at once; the speed ones wait for the A/B.
    expect(body.alerted).toBe(1);
    const mail = db.select().from(outbox).all();
    expect(mail).toHaveLength(1);
    expect(mail[0]!.body).toContain("pika-rover-dash/trapezoidal/12");
    expect(mail[0]!.body).not.toContain("pika-rover-dash/trapezoidal/10");

    const { loader } = await import("~/routes/api/runs.$id");
    const read = async () => ((await (loader({ request: new Request(`http://127.0.0.1/api/runs/${HEAD_ID}`, { headers: { authorization: `Bearer ${token}` } }), params: { id: HEAD_ID }, context: {} } as never) as Promise<Response>)).json()) as Promise<{ confirmation: { state: string; regressionIds: number[]; standing: number[] } | null }>;
    const waiting = (await read()).confirmation!;
    expect(waiting.state).toBe("awaiting");
    expect(waiting.regressionIds.length).toBeGreaterThanOrEqual(2);

    // The job worker's verdict: slower on both cases.
    const verdict = {
      base: c1,
      head: c2,
      blocks: 6,
      repeats: 3,
      method: "test",
      pooled: { ratio: 2.9, low: 2.6, high: 3.2, verdict: "slower" as const, cases: 2 },
      cases: [10, 11].map((n) => ({ key: `pika-rover-dash/trapezoidal/${n}`, blockRatios: [2.8, 3, 2.9, 3.1, 2.7, 3], ratio: 2.9, low: 2.6, high: 3.2, verdict: "slower" as const, status: "optimal" })),
    };
    await afterAbJob(db, body.abJobId!, { result: verdict });
    const done = (await read()).confirmation!;
    expect(done.state).toBe("confirmed");
    expect(done.standing.sort()).toEqual(done.regressionIds.sort());
    // The held e-mail now goes out with the evidence.
    expect(db.select().from(outbox).all().at(-1)!.body).toContain("Confirmed by interleaved A/B");
  });

  it("`bench --upload --confirm` waits for the server's verdict, and gives up at its deadline", async () => {
    let calls = 0;
    const states = ["awaiting", "awaiting", "cleared"];
    const server = http.createServer((req, res) => {
      const state = states[Math.min(calls++, states.length - 1)]!;
      expect(req.headers.authorization).toBe("Bearer t0k");
      res.setHeader("content-type", "application/json");
      res.end(JSON.stringify({ id: "r1", confirmation: { state, jobId: 7, note: null, regressionIds: [1, 2], standing: state === "cleared" ? [] : [1, 2], undecided: [] } }));
    });
    await new Promise<void>((r) => server.listen(0, "127.0.0.1", () => r()));
    const port = (server.address() as { port: number }).port;
    try {
      const seen: string[] = [];
      const v = await awaitServerConfirmation(`http://127.0.0.1:${port}/api/runs`, "r1", "t0k", 60, (s) => seen.push(s), 10);
      expect(v).toMatchObject({ state: "cleared", standing: [] });
      expect(calls).toBe(3);
      expect(seen[0]).toContain("job 7");
      calls = 0;
      states.splice(0, states.length, "awaiting");
      const late = await awaitServerConfirmation(`http://127.0.0.1:${port}/api/runs`, "r1", "t0k", 0.05, undefined, 10);
      expect(late!.state).toBe("awaiting");
    } finally {
      server.close();
    }
  });
});
