/**
 * Sharded runs: n uploads of one suite, one run.
 *
 * Each shard upload carries a run-group key (commit, suite name and content hash, the CI
 * pipeline's id) and its shard index of n. The first shard to arrive creates the run (status
 * "running", `shard_count` n, a deadline); every shard adds its cases to that run and one
 * run_shards row (its machine, class, times, own status). In the same transaction that stores the
 * last shard the run is finished, so exactly one upload sees `completed: true` and runs the
 * regression check: detection runs once however the uploads interleave (better-sqlite3 runs one
 * write transaction at a time).
 *
 * Refusals (409, nothing stored): a shard of another suite version or shard count than the run
 * the key names, a case another shard of the run already sent (the runners planned differently),
 * a shard after the run was closed. A shard index already in is answered 200 with
 * `created: false` and changes nothing (a retried CI job uploads its shard again).
 *
 * Machine classes: the run keeps the class and machine key of its shards when they agree; when
 * they differ, `timings_compared` is false, the machine key becomes "mixed:<hash>" and the
 * regression check compares accuracy, robustness and structure but no timings.
 *
 * A run still waiting at its deadline is closed by `closeOverdueGroups` as interrupted with a
 * note naming the shards that never came (and "missing" run_shards rows for them); its cases
 * stay and no regression check is made on a part of a suite.
 */
import { createHash } from "node:crypto";
import { and, asc, eq, inArray, isNotNull, lt, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, runShards, runs, suites, type RunStatus } from "~/db/schema";
import type { RunPayload } from "~/runs/payload";
import { canonicalJson, sha256 } from "~/runs/suite";
import { afterRun, type Detection } from "./detection.server";
import { ensureSuite, storePayloadCases } from "./recording.server";

/** Hours a sharded run waits for its last shard (ARCWATCH_SHARD_DEADLINE_HOURS, default 6). */
export function shardDeadlineMs(): number {
  const h = Number(process.env.ARCWATCH_SHARD_DEADLINE_HOURS ?? 6);
  return (Number.isFinite(h) && h > 0 ? h : 6) * 3_600_000;
}

/** The group key stored on the run: commit, suite name and pipeline (the suite version is checked against the run's suite). */
export function groupKeyOf(commitHash: string, suiteName: string, pipeline: string): string {
  return `${commitHash}:${suiteName}:${pipeline}`;
}

export interface ShardInfo {
  index: number;
  count: number;
  pipeline: string;
}

/** What a shard upload brings, already validated (a run payload's fields). */
export interface ShardUpload {
  sourceRunId: string;
  shard: ShardInfo;
  suite: { name: string; contentHash: string };
  suiteId: number;
  commit: { hash: string; branch: string | null; dirty: boolean; subject: string | null; author: string | null; date: Date | null };
  machine: Record<string, unknown>;
  machineKey: string;
  machineClass: string;
  calibrationSeconds: number | null;
  startedAt: Date;
  finishedAt: Date | null;
  status: "complete" | "interrupted" | "failed";
  solverLabel: string | null;
  externalRepo: string | null;
  caseKeys: string[];
  tokenId: number | null;
}

type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

export type ShardOutcome =
  | { ok: true; created: boolean; runId: string; shardsIn: number; shardCount: number; completed: boolean; status: string; note: string | null }
  | { ok: false; status: 409; error: string };

const classesKey = (classes: string[]) => `mixed:${createHash("sha256").update([...new Set(classes)].sort().join("\n")).digest("hex").slice(0, 32)}`;

/**
 * Stores one shard. `ensureSuiteId` gives the suite row id inside the transaction; `writeCases`
 * inserts the shard's problems and cases into the run (the one recording path's writers).
 */
export function storeShard(db: Db, up: Omit<ShardUpload, "suiteId">, ensureSuiteId: (tx: Tx) => number, writeCases: (tx: Tx, runId: string) => void, now = new Date()): ShardOutcome {
  const key = groupKeyOf(up.commit.hash, up.suite.name, up.shard.pipeline);
  return db.transaction((tx): ShardOutcome => {
    const suiteId = ensureSuiteId(tx);
    let run = tx.select().from(runs).where(eq(runs.groupKey, key)).get();
    if (!run) {
      const id = crypto.randomUUID();
      tx.insert(runs)
        .values({
          id,
          suiteId,
          commitHash: up.commit.hash,
          branch: up.commit.branch,
          dirty: up.commit.dirty,
          commitSubject: up.commit.subject,
          commitAuthor: up.commit.author,
          commitDate: up.commit.date,
          machineJson: { sharded: true, pipeline: up.shard.pipeline },
          machineKey: up.machineKey,
          machineClass: up.machineClass,
          startedAt: up.startedAt,
          status: "running",
          calibrationSeconds: null,
          solverLabel: up.solverLabel,
          externalRepo: up.externalRepo,
          groupKey: key,
          shardCount: up.shard.count,
          shardDeadlineAt: new Date(now.getTime() + shardDeadlineMs()),
        })
        .run();
      run = tx.select().from(runs).where(eq(runs.id, id)).get()!;
    }
    const shardsIn = () => tx.select({ index: runShards.shardIndex }).from(runShards).where(and(eq(runShards.runId, run!.id), eq(runShards.state, "received"))).all().length;
    const already = tx.select().from(runShards).where(and(eq(runShards.runId, run.id), eq(runShards.shardIndex, up.shard.index))).get();
    if (already && already.state === "received") {
      const same = already.sourceRunId === up.sourceRunId;
      return {
        ok: true,
        created: false,
        runId: run.id,
        shardsIn: shardsIn(),
        shardCount: run.shardCount!,
        completed: false,
        status: run.status,
        note: same ? `Shard ${up.shard.index} of ${run.shardCount} is already in; nothing changed.` : `Shard ${up.shard.index} of ${run.shardCount} is already in (from runner run ${already.sourceRunId}); this upload (${up.sourceRunId}) was ignored.`,
      };
    }
    if (run.suiteId !== suiteId) {
      const theirs = tx.select({ hash: suites.contentHash }).from(suites).where(eq(suites.id, run.suiteId)).get();
      return {
        ok: false,
        status: 409,
        error: `Shard ${up.shard.index} was made with suite "${up.suite.name}" version ${up.suite.contentHash.slice(0, 12)}, but run ${run.id} of pipeline "${up.shard.pipeline}" at commit ${up.commit.hash.slice(0, 10)} runs version ${theirs?.hash.slice(0, 12) ?? "?"}: every shard of one run must use the same suite file.`,
      };
    }
    if (run.shardCount !== up.shard.count) {
      return { ok: false, status: 409, error: `This upload is shard ${up.shard.index}/${up.shard.count}, but run ${run.id} of pipeline "${up.shard.pipeline}" was split into ${run.shardCount} shards.` };
    }
    if (run.status !== "running") {
      return { ok: false, status: 409, error: `Run ${run.id} was closed (${run.status}${run.statusNote ? `: ${run.statusNote}` : ""}); shard ${up.shard.index}/${up.shard.count} came too late and was not stored.` };
    }
    const keys = new Set(up.caseKeys);
    if (keys.size !== up.caseKeys.length) return { ok: false, status: 409, error: `Shard ${up.shard.index} lists a case twice.` };
    const present = tx.select({ key: caseResults.caseKey }).from(caseResults).where(eq(caseResults.runId, run.id)).all();
    const clash = present.find((p) => keys.has(p.key));
    if (clash) {
      return {
        ok: false,
        status: 409,
        error: `Case ${clash.key} of shard ${up.shard.index} is already in run ${run.id} from another shard: the runners planned different shards (same suite file, machine class and shard count on every runner, and \`--shard k/n --plan\` to compare).`,
      };
    }
    writeCases(tx, run.id);
    tx.insert(runShards)
      .values({
        runId: run.id,
        shardIndex: up.shard.index,
        shardCount: up.shard.count,
        state: "received",
        sourceRunId: up.sourceRunId,
        machineJson: up.machine,
        machineKey: up.machineKey,
        machineClass: up.machineClass,
        startedAt: up.startedAt,
        finishedAt: up.finishedAt,
        sourceStatus: up.status,
        caseCount: up.caseKeys.length,
        calibrationSeconds: up.calibrationSeconds,
        tokenId: up.tokenId,
        receivedAt: now,
      })
      .run();
    const rows = tx.select().from(runShards).where(and(eq(runShards.runId, run.id), eq(runShards.state, "received"))).all();
    const classes = rows.map((r) => r.machineClass ?? r.machineKey ?? "?");
    const mixed = new Set(classes).size > 1;
    const patch: Partial<typeof runs.$inferInsert> = {
      startedAt: new Date(Math.min(...rows.map((r) => (r.startedAt ?? now).getTime()))),
      timingsCompared: !mixed,
      machineKey: mixed ? classesKey(classes) : rows[0]!.machineKey ?? up.machineKey,
      machineClass: mixed ? null : up.machineClass,
      machineJson: mixed ? { sharded: true, pipeline: up.shard.pipeline, classes: [...new Set(classes)].sort() } : { ...(rows[0]!.machineJson as Record<string, unknown>), sharded: true, pipeline: up.shard.pipeline },
    };
    let completed = false;
    let status: RunStatus = "running";
    let note: string | null = null;
    if (rows.length === run.shardCount) {
      completed = true;
      const notComplete = rows.filter((r) => r.sourceStatus !== "complete").sort((a, b) => a.shardIndex - b.shardIndex);
      status = notComplete.length ? "interrupted" : "complete";
      note = notComplete.length ? `Shard${notComplete.length > 1 ? "s" : ""} ${notComplete.map((r) => `${r.shardIndex} (${r.sourceStatus})`).join(", ")} did not finish on ${notComplete.length > 1 ? "their runners" : "its runner"}.` : null;
      const finished = Math.max(...rows.map((r) => (r.finishedAt ?? now).getTime()));
      Object.assign(patch, { status, finishedAt: new Date(finished), statusNote: note });
    }
    tx.update(runs).set(patch).where(eq(runs.id, run.id)).run();
    return { ok: true, created: true, runId: run.id, shardsIn: rows.length, shardCount: run.shardCount!, completed, status, note };
  });
}

export interface ShardView {
  index: number;
  state: "received" | "missing" | "waiting";
  machine: string | null;
  machineClass: string | null;
  sourceStatus: string | null;
  cases: number;
  startedAt: number | null;
  finishedAt: number | null;
  seconds: number | null;
  receivedAt: number | null;
}

/** Every shard of a sharded run in index order (shards not yet in as "waiting"); null when the run is not sharded. */
export function runShardsOf(db: Db, runId: string): { count: number; in: number; deadlineAt: number | null; timingsCompared: boolean; shards: ShardView[] } | null {
  const run = db.select({ count: runs.shardCount, deadline: runs.shardDeadlineAt, timingsCompared: runs.timingsCompared }).from(runs).where(eq(runs.id, runId)).get();
  if (!run?.count) return null;
  const rows = db.select().from(runShards).where(eq(runShards.runId, runId)).orderBy(asc(runShards.shardIndex)).all();
  const by = new Map(rows.map((r) => [r.shardIndex, r]));
  const shards: ShardView[] = [];
  for (let i = 1; i <= run.count; i++) {
    const r = by.get(i);
    const m = (r?.machineJson ?? null) as { cpuModel?: unknown; cores?: unknown } | null;
    shards.push({
      index: i,
      state: r ? r.state : "waiting",
      machine: m && typeof m.cpuModel === "string" ? `${m.cpuModel}${typeof m.cores === "number" ? ` × ${m.cores}` : ""}` : null,
      machineClass: r?.machineClass ?? null,
      sourceStatus: r?.sourceStatus ?? null,
      cases: r?.caseCount ?? 0,
      startedAt: r?.startedAt?.getTime() ?? null,
      finishedAt: r?.finishedAt?.getTime() ?? null,
      seconds: r?.startedAt && r.finishedAt ? (r.finishedAt.getTime() - r.startedAt.getTime()) / 1000 : null,
      receivedAt: r && r.state === "received" ? r.receivedAt.getTime() : null,
    });
  }
  return { count: run.count, in: rows.filter((r) => r.state === "received").length, deadlineAt: run.deadline?.getTime() ?? null, timingsCompared: run.timingsCompared, shards };
}

/** Closes sharded runs still waiting after their deadline; returns them with the missing shard indexes. */
export function closeOverdueGroups(db: Db, now = new Date()): { runId: string; missing: number[] }[] {
  const overdue = db
    .select({ id: runs.id, count: runs.shardCount })
    .from(runs)
    .where(and(eq(runs.status, "running"), isNotNull(runs.groupKey), lt(runs.shardDeadlineAt, now)))
    .all();
  const out: { runId: string; missing: number[] }[] = [];
  for (const r of overdue) {
    const closed = db.transaction((tx) => {
      const current = tx.select({ status: runs.status }).from(runs).where(eq(runs.id, r.id)).get();
      if (current?.status !== "running") return null;
      const have = new Set(tx.select({ i: runShards.shardIndex }).from(runShards).where(eq(runShards.runId, r.id)).all().map((s) => s.i));
      const missing: number[] = [];
      for (let i = 1; i <= (r.count ?? 0); i++) if (!have.has(i)) missing.push(i);
      for (const i of missing) tx.insert(runShards).values({ runId: r.id, shardIndex: i, shardCount: r.count!, state: "missing", receivedAt: now }).run();
      const note = `Incomplete: shard${missing.length > 1 ? "s" : ""} ${missing.join(", ")} of ${r.count} never came before the deadline; no regression check was made on a part of the suite.`;
      tx.update(runs).set({ status: "interrupted", finishedAt: now, statusNote: note }).where(eq(runs.id, r.id)).run();
      return missing;
    });
    if (closed) out.push({ runId: r.id, missing: closed });
  }
  return out;
}

/** Shards in and expected per sharded run, for lists (the overview's runs in progress). */
export function shardProgress(db: Db, runIds: string[]): Map<string, { in: number; count: number }> {
  const out = new Map<string, { in: number; count: number }>();
  if (runIds.length === 0) return out;
  const rows = db
    .select({ id: runs.id, count: runs.shardCount, n: sql<number>`(select count(*) from run_shards s where s.run_id = ${runs.id} and s.state = 'received')` })
    .from(runs)
    .where(and(inArray(runs.id, runIds), isNotNull(runs.shardCount)))
    .all();
  for (const r of rows) out.set(r.id, { in: r.n, count: r.count! });
  return out;
}

export type ShardIngest =
  | { ok: true; created: boolean; runId: string; newRegressions: number; shard: { index: number; count: number; in: number; completed: boolean; status: string; note: string | null }; detection: Detection | null; suiteName: string }
  | { ok: false; status: 400 | 409; error: string };

/**
 * Stores a validated payload that names a shard (`run.shard`) as part of its group's run, and runs
 * the regression check when it completed the run (exactly once per run, see `storeShard`).
 */
export function ingestShard(db: Db, p: RunPayload, tokenId: number | null): ShardIngest {
  const shard = p.run.shard!;
  const hash = sha256(canonicalJson(p.suite.definition));
  if (hash !== p.suite.contentHash) return { ok: false, status: 400, error: `invalid run payload: suite.contentHash ${p.suite.contentHash} does not match its definition (${hash})` };
  const r = p.run;
  const out = storeShard(
    db,
    {
      sourceRunId: r.id,
      shard,
      suite: { name: p.suite.name, contentHash: p.suite.contentHash },
      commit: { hash: r.commitHash, branch: r.branch, dirty: r.dirty, subject: r.commitSubject, author: r.commitAuthor, date: r.commitDate ? new Date(r.commitDate) : null },
      machine: r.machine,
      machineKey: r.machineKey,
      machineClass: r.machineClass ?? r.machineKey,
      calibrationSeconds: r.calibrationSeconds,
      startedAt: new Date(r.startedAt),
      finishedAt: r.finishedAt ? new Date(r.finishedAt) : null,
      status: r.status,
      solverLabel: r.solverLabel,
      externalRepo: r.externalRepo,
      caseKeys: p.cases.map((c) => c.caseKey),
      tokenId,
    },
    (tx) => ensureSuite(tx, { name: p.suite.name, contentHash: p.suite.contentHash, definition: p.suite.definition, thresholds: p.suite.thresholds }),
    (tx, runId) => storePayloadCases(tx, runId, p),
  );
  if (!out.ok) return out;
  const detection = out.completed ? afterRun(db, out.runId) : null;
  return {
    ok: true,
    created: out.created,
    runId: out.runId,
    newRegressions: detection?.newRegressions ?? 0,
    shard: { index: shard.index, count: out.shardCount, in: out.shardsIn, completed: out.completed, status: out.status, note: out.note },
    detection,
    suiteName: p.suite.name,
  };
}
