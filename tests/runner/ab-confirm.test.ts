/**
 * Automatic confirmation end to end, in a temporary git repository whose solver (a small module
 * executor committed with it) does three times the work per solve from the second commit on:
 * the command line records both commits, detection flags the speed regression, an "ab" job is
 * queued on the affected case and the e-mail waits; the job worker then runs the interleaved
 * A/B (bench --ab as a child process), the check is "confirmed" with its paired ratios, and only
 * then does the e-mail go out, saying so. A second part checks the other endings: a verdict of
 * "same" clears the regression without e-mail, and a suite with A/B off e-mails at once, marked
 * unconfirmed. Sizes are the smallest that still decide: one case, 12 timed solves per run, the
 * A/B's default 6 blocks, solves of a few milliseconds.
 */
import { afterAll, describe, expect, it } from "vitest";
import { execFileSync, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { eq } from "drizzle-orm";
import { openDatabase } from "~/db/client.server";
import { abChecks, jobs, outbox, regressionEvents, regressions, subscriptions, users } from "~/db/schema";
import { stopStandin } from "~/services/mail.server";
import { REPO, tempDir } from "./helpers";
import { standInExecutor } from "../helpers/stand-in-executor";

afterAll(async () => {
  await stopStandin();
});

function git(cwd: string, ...args: string[]): string {
  return execFileSync("git", args, { cwd, encoding: "utf8", env: { ...process.env, GIT_AUTHOR_NAME: "Arcwatch Test", GIT_AUTHOR_EMAIL: "test@example.com", GIT_COMMITTER_NAME: "Arcwatch Test", GIT_COMMITTER_EMAIL: "test@example.com" } }).trim();
}

/**
 * Floating-point steps per mesh interval per solve: about 4 ms per solve here, 12 ms after the
 * planted change. At a tenth of that (sub-millisecond solves) a loaded 2-core machine spread the
 * six paired block ratios from 0.95 to 11 and the A/B could not decide; measured, not a rule.
 */
const WORK = 40_000;

const executor = (work: number) => standInExecutor(work, "ab-confirm-test");

function makeRepo(name: string, thresholds: Record<string, unknown> = {}): string {
  const repo = tempDir(name);
  fs.cpSync(path.join(REPO, "tsconfig.json"), path.join(repo, "tsconfig.json"));
  fs.cpSync(path.join(REPO, "problems", "pika-rover-dash"), path.join(repo, "problems", "pika-rover-dash"), { recursive: true });
  fs.mkdirSync(path.join(repo, "bench", "suites"), { recursive: true });
  fs.writeFileSync(path.join(repo, ".gitignore"), ".tmp\n*.db*\nnode_modules\n");
  fs.writeFileSync(
    path.join(repo, "bench", "suites", "conf.json"),
    JSON.stringify({ format: "arcwatch-suite/1", name: "conf", problems: ["pika-rover-dash"], schemes: ["euler"], meshes: [{ intervals: 6 }], repeats: 12, jobs: 1, clock: "cpu", solver: { kind: "module", module: "../../exec.ts" }, thresholds }),
  );
  fs.writeFileSync(path.join(repo, "exec.ts"), executor(WORK));
  git(repo, "init", "-q", "-b", "main");
  git(repo, "add", "-A");
  git(repo, "commit", "-q", "-m", "Baseline solver");
  fs.symlinkSync(path.join(REPO, "node_modules"), path.join(repo, "node_modules"), "dir");
  return repo;
}

function bench(repo: string, dbFile: string) {
  return spawnSync(process.execPath, ["--import", "tsx", path.join(REPO, "bench/run.ts"), "--suite", "conf", "--db", dbFile], {
    cwd: repo,
    encoding: "utf8",
    env: { ...process.env, TSX_TSCONFIG_PATH: path.join(REPO, "tsconfig.json"), ARCWATCH_MIGRATIONS: path.join(REPO, "drizzle"), ARCWATCH_REPO: repo, VITEST: "" },
    timeout: 240_000,
  });
}

function subscribe(dbFile: string) {
  const db = openDatabase(dbFile);
  const id = db.insert(users).values({ email: "lead@example.com", name: "Lead", passwordHash: "x" }).returning({ id: users.id }).get().id;
  db.insert(subscriptions).values({ userId: id, suiteName: "conf" }).run();
  db.$client.close();
}

describe("automatic A/B confirmation of a speed regression", () => {
  it("holds the e-mail, confirms by interleaved A/B, then e-mails the confirmed slowdown", { timeout: 600_000 }, async () => {
    const repo = makeRepo("abconf");
    const dbFile = path.join(repo, "conf.db");
    const first = bench(repo, dbFile);
    expect(first.status, first.stderr).toBe(0);
    subscribe(dbFile);
    fs.writeFileSync(path.join(repo, "exec.ts"), executor(3 * WORK));
    git(repo, "commit", "-q", "-am", "Three times the work per solve");
    const head = git(repo, "rev-parse", "HEAD");
    const base = git(repo, "rev-parse", "HEAD~1");
    const second = bench(repo, dbFile);
    expect(second.status, second.stdout + second.stderr).toBe(3);
    expect(second.stdout).toMatch(/await interleaved A\/B job \d+/);

    const db = openDatabase(dbFile);
    const speed = db.select().from(regressions).where(eq(regressions.kind, "speed")).all();
    expect(speed.length).toBeGreaterThanOrEqual(1);
    const [check] = db.select().from(abChecks).all();
    expect(check).toMatchObject({ state: "awaiting", auto: true, alertsHeld: true, baseCommit: base, headCommit: head, suiteName: "conf" });
    expect(check!.casesJson).toEqual(["pika-rover-dash/euler/6"]);
    expect(check!.regressionIds.sort()).toEqual(speed.map((r) => r.id).sort());
    // Nothing e-mailed yet: the speed finding waits for the verdict.
    expect(db.select().from(outbox).all()).toHaveLength(0);

    // The job worker's step, in this process, against the temporary repository.
    process.env.ARCWATCH_DB = dbFile;
    process.env.ARCWATCH_REPO = repo;
    process.env.TSX_TSCONFIG_PATH = path.join(REPO, "tsconfig.json");
    const { runNextJob } = await import("~/services/job-worker.server");
    const ran = await runNextJob(db);
    expect(ran).toBe(check!.jobId);
    const job = db.select().from(jobs).where(eq(jobs.id, ran!)).get()!;
    expect(job.status, job.log).toBe("done");
    const settled = db.select().from(abChecks).where(eq(abChecks.id, check!.id)).get()!;
    const result = settled.resultJson as { cases: { key: string; ratio: number; low: number; high: number; verdict: string; blockRatios: number[] }[] };
    console.log(`A/B: ${result.cases.map((c) => `${c.key} ×${c.ratio.toFixed(3)} [${c.low.toFixed(3)}, ${c.high.toFixed(3)}] ${c.verdict}; block ratios ${c.blockRatios.map((r) => r.toFixed(2)).join(" ")}`).join("; ")}`);
    expect(settled.state).toBe("confirmed");
    expect(result.cases[0]!.blockRatios).toHaveLength(6);
    // Three times the work: the paired ratio is well above 1 (far from exactly 3: fixed costs per solve).
    expect(result.cases[0]!.low).toBeGreaterThan(1.3);
    const mail = db.select().from(outbox).all();
    expect(mail).toHaveLength(1);
    expect(mail[0]!.to).toBe("lead@example.com");
    expect(mail[0]!.body).toContain("Confirmed by interleaved A/B");
    const notes = db.select({ note: regressionEvents.note }).from(regressionEvents).where(eq(regressionEvents.regressionId, speed[0]!.id)).all().map((e) => e.note ?? "");
    expect(notes.some((n) => n.startsWith("Awaiting interleaved A/B"))).toBe(true);
    expect(notes.some((n) => n.startsWith("Confirmed by interleaved A/B"))).toBe(true);
    // The worktrees the comparison made are gone.
    expect(git(repo, "worktree", "list").split("\n")).toHaveLength(1);
    db.$client.close();
  });

  it("e-mails at once, marked unconfirmed, when the suite turns A/B off", { timeout: 600_000 }, async () => {
    const repo = makeRepo("abconf-off", { abConfirm: false });
    const dbFile = path.join(repo, "conf.db");
    expect(bench(repo, dbFile).status).toBe(0);
    subscribe(dbFile);
    fs.writeFileSync(path.join(repo, "exec.ts"), executor(3 * WORK));
    git(repo, "commit", "-q", "-am", "Three times the work per solve");
    const second = bench(repo, dbFile);
    expect(second.status, second.stderr).toBe(3);
    const db = openDatabase(dbFile);
    expect(db.select().from(abChecks).all()).toHaveLength(0);
    const mail = db.select().from(outbox).all();
    expect(mail).toHaveLength(1);
    expect(mail[0]!.body).toContain("Speed findings are unconfirmed: interleaved A/B could not run (A/B confirmation is off for suite conf)");
    db.$client.close();
  });
});
