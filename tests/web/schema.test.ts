import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import type { JobStatus, RegressionDirection, RegressionKind, RegressionStatus, Role, RunStatus } from "~/db/schema";
import { useTempDatabase } from "../helpers/temp-db";

const file = useTempDatabase("schema");

const { getDb, openDatabase, closeDb } = await import("~/db/client.server");
const { pendingMigrations } = await import("~/db/migrate.server");
const S = await import("~/db/schema");
const { seed, DEMO_ACCOUNTS } = await import("~/db/seed.server");
const { verifyPassword } = await import("~/services/password.server");

const db = getDb();

function seedRun(id: string) {
  const suite =
    db.select().from(S.suites).where(eq(S.suites.name, "unit")).get() ??
    db.insert(S.suites).values({ name: "unit", contentHash: "h1", definitionJson: { problems: ["p1"] } }).returning().get();
  db.insert(S.problems).values({ id: "p1", title: "Problem one" }).onConflictDoNothing().run();
  return db
    .insert(S.runs)
    .values({ id, suiteId: suite.id, commitHash: "abc123", machineJson: { cores: 2 }, machineKey: "m1", startedAt: new Date() })
    .returning()
    .get();
}

describe("connection", () => {
  it("uses WAL, foreign keys and a busy timeout, and has applied every migration", () => {
    expect(db.$client.pragma("journal_mode", { simple: true })).toBe("wal");
    expect(db.$client.pragma("foreign_keys", { simple: true })).toBe(1);
    expect(db.$client.pragma("busy_timeout", { simple: true })).toBe(5000);
    expect(pendingMigrations(db.$client)).toBe(0);
    expect(db.$client.name).toBe(file);
  });

  it("re-opening an already migrated database applies nothing and keeps data", () => {
    db.insert(S.outbox).values({ to: "a@b.test", subject: "s", body: "b" }).run();
    const again = openDatabase(file);
    expect(again.select().from(S.outbox).all()).toHaveLength(1);
    again.$client.close();
  });
});

describe("constraints", () => {
  it("users: unique lower-case e-mail, known roles only", () => {
    db.insert(S.users).values({ email: "ada@arcwatch.test", name: "Ada", passwordHash: "x" }).run();
    expect(() => db.insert(S.users).values({ email: "ada@arcwatch.test", name: "Ada 2", passwordHash: "x" }).run()).toThrow(/UNIQUE/);
    expect(() => db.insert(S.users).values({ email: "Ada@Arcwatch.test", name: "A", passwordHash: "x" }).run()).toThrow(/users_email_check/);
    expect(() => db.insert(S.users).values({ email: "no-at-sign", name: "A", passwordHash: "x" }).run()).toThrow(/users_email_check/);
    expect(() =>
      db.insert(S.users).values({ email: "b@arcwatch.test", name: "B", passwordHash: "x", role: "owner" as Role }).run(),
    ).toThrow(/users_role_check/);
    const row = db.select().from(S.users).where(eq(S.users.email, "ada@arcwatch.test")).get()!;
    expect(row.role).toBe("viewer");
    expect(row.createdAt).toBeInstanceOf(Date);
  });

  it("runs and case results: foreign keys enforced, cascade on run delete, status checked", () => {
    const run = seedRun("11111111-1111-4111-8111-111111111111");
    expect(run.status).toBe("running");
    expect(() =>
      db.insert(S.runs).values({ ...run, id: "r-bad", status: "exploded" as RunStatus }).run(),
    ).toThrow(/runs_status_check/);
    const base = { problemId: "p1", problemVersionHash: "v1", scheme: "trapezoidal", intervals: 20, status: "optimal" };
    expect(() => db.insert(S.caseResults).values({ ...base, runId: "no-such-run", caseKey: "k" }).run()).toThrow(/FOREIGN KEY/);
    expect(() => db.insert(S.caseResults).values({ ...base, runId: run.id, caseKey: "k0", intervals: 0 }).run()).toThrow(/intervals_check/);
    const c = db.insert(S.caseResults).values({ ...base, runId: run.id, caseKey: "p1/trapezoidal/20" }).returning().get();
    expect(() => db.insert(S.caseResults).values({ ...base, runId: run.id, caseKey: "p1/trapezoidal/20" }).run()).toThrow(/UNIQUE/);
    db.insert(S.timingSamples).values({ caseResultId: c.id, samplesJson: [0.012, 0.011, 0.013] }).run();
    expect(db.select().from(S.timingSamples).get()!.samplesJson).toEqual([0.012, 0.011, 0.013]);
    db.delete(S.runs).where(eq(S.runs.id, run.id)).run();
    expect(db.select().from(S.caseResults).all()).toHaveLength(0);
    expect(db.select().from(S.timingSamples).all()).toHaveLength(0);
  });

  it("regressions: kind, direction, status and p value are checked; events cascade", () => {
    const run = seedRun("22222222-2222-4222-8222-222222222222");
    const base = { runId: run.id, caseKey: "p1/lgr/10x4", kind: "speed" as const, direction: "regression" as const, metric: "median_seconds" };
    expect(() => db.insert(S.regressions).values({ ...base, kind: "vibes" as RegressionKind }).run()).toThrow(/regressions_kind_check/);
    expect(() => db.insert(S.regressions).values({ ...base, direction: "sideways" as RegressionDirection }).run()).toThrow(/direction_check/);
    expect(() => db.insert(S.regressions).values({ ...base, pValue: 1.5 }).run()).toThrow(/p_value_check/);
    const r = db.insert(S.regressions).values({ ...base, pValue: 0.003, before: 0.1, after: 0.14, ratio: 1.4 }).returning().get();
    expect(r.status).toBe("open");
    db.insert(S.regressionEvents).values({ regressionId: r.id, fromStatus: "open", toStatus: "acknowledged", note: "looking" }).run();
    expect(() => db.insert(S.regressionEvents).values({ regressionId: r.id, toStatus: "done" as RegressionStatus }).run()).toThrow(/CHECK/);
    db.delete(S.regressions).where(eq(S.regressions.id, r.id)).run();
    expect(db.select().from(S.regressionEvents).all()).toHaveLength(0);
  });

  it("subscriptions: exactly one target, no duplicates per user", () => {
    const u = db.select().from(S.users).get()!;
    db.insert(S.subscriptions).values({ userId: u.id, problemId: "p1" }).run();
    db.insert(S.subscriptions).values({ userId: u.id, suiteName: "quick" }).run();
    expect(() => db.insert(S.subscriptions).values({ userId: u.id, problemId: "p1" }).run()).toThrow(/UNIQUE/);
    expect(() => db.insert(S.subscriptions).values({ userId: u.id, suiteName: "quick" }).run()).toThrow(/UNIQUE/);
    expect(() => db.insert(S.subscriptions).values({ userId: u.id }).run()).toThrow(/one_target_check/);
    expect(() => db.insert(S.subscriptions).values({ userId: u.id, problemId: "p1", suiteName: "full" }).run()).toThrow(/one_target_check/);
  });

  it("jobs and comments: status and body checked", () => {
    const j = db.insert(S.jobs).values({ kind: "bench", payloadJson: { suite: "quick" } }).returning().get();
    expect(j.status).toBe("queued");
    expect(j.log).toBe("");
    expect(() => db.insert(S.jobs).values({ kind: "bench", payloadJson: {}, status: "paused" as JobStatus }).run()).toThrow(/jobs_status_check/);
    const u = db.select().from(S.users).get()!;
    expect(() => db.insert(S.comments).values({ userId: u.id, targetType: "run", targetId: "x", body: "   " }).run()).toThrow(/body_check/);
  });

  it("problem versions are unique per content hash", () => {
    db.insert(S.problemVersions).values({ problemId: "p1", contentHash: "c1", json: "{}" }).run();
    expect(() => db.insert(S.problemVersions).values({ problemId: "p1", contentHash: "c1", json: "{}" }).run()).toThrow(/UNIQUE/);
  });
});

describe("seed", () => {
  it("creates the demo accounts only on an empty user table", async () => {
    // This database already has users from the tests above: seeding adds nothing.
    const before = db.select().from(S.users).all().length;
    await seed(db);
    expect(db.select().from(S.users).all()).toHaveLength(before);
    closeDb();
    process.env.ARCWATCH_DB = file.replace(/arcwatch\.db$/, "fresh.db");
    const fresh = getDb();
    const lines: string[] = [];
    await seed(fresh, (l) => lines.push(l));
    await seed(fresh, (l) => lines.push(l));
    expect(lines).toHaveLength(1);
    const rows = fresh.select().from(S.users).all();
    expect(rows.map((r) => [r.email, r.role]).sort()).toEqual(DEMO_ACCOUNTS.map((a) => [a.email, a.role]).sort());
    for (const a of DEMO_ACCOUNTS) {
      const row = rows.find((r) => r.email === a.email)!;
      expect(await verifyPassword(row.passwordHash, a.password)).toBe(true);
    }
  });
});
