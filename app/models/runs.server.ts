/**
 * Runs: the paged, sorted, filtered table; one run with its case matrix; ingestion of runs
 * posted by CI runners (stored by `storeRunPayload` and checked by `afterRun`, the functions a
 * command-line run uses, so an upload and a command-line run are stored and judged alike).
 *
 * Sorting, filtering and pagination happen in SQL. Case counts come from one grouped
 * sub-query over case_results (index case_results_run_case_unique starts with run_id).
 */
import { and, asc, desc, eq, inArray, like, or, sql, type SQL } from "drizzle-orm";
import { z } from "zod";
import type { Db } from "~/db/client.server";
import { caseResults, regressions, runs, suites, RUN_STATUSES, type RunRow } from "~/db/schema";
import { runPayloadSchema } from "~/runs/payload";
import { SOLVED_STATUSES } from "~/runs/types";
import { afterRun, type Detection } from "./detection.server";
import { storeRunPayload } from "./recording.server";
import { ingestShard, shardProgress } from "./run-groups.server";

export const RUN_SORT_KEYS = ["startedAt", "commit", "branch", "suite", "machine", "duration", "solved", "failed", "regressions", "status"] as const;
export type RunSortKey = (typeof RUN_SORT_KEYS)[number];

export const runListQuery = z.object({
  sort: z.enum(RUN_SORT_KEYS).catch("startedAt"),
  dir: z.enum(["asc", "desc"]).catch("desc"),
  page: z.coerce.number().int().min(1).max(1_000_000).catch(1),
  pageSize: z.coerce.number().int().min(1).max(500).catch(25),
  branch: z.string().trim().max(300).optional().catch(undefined),
  suite: z.string().trim().max(64).optional().catch(undefined),
  status: z.enum(RUN_STATUSES).optional().catch(undefined),
  /** Commit prefix or text in the commit subject. */
  q: z.string().trim().max(200).optional().catch(undefined),
  demo: z.enum(["include", "exclude", "only"]).catch("include"),
});
export type RunListQuery = z.infer<typeof runListQuery>;

/** Parses URL search parameters into a query (bad values fall back to defaults, never throw). */
export function parseRunListQuery(params: URLSearchParams): RunListQuery {
  const raw: Record<string, string> = {};
  for (const [k, v] of params) if (v !== "") raw[k] = v;
  return runListQuery.parse(raw);
}

export interface RunListItem {
  id: string;
  commitHash: string;
  commitSubject: string | null;
  branch: string | null;
  suite: string;
  machine: string;
  machineKey: string;
  status: string;
  startedAt: number;
  durationSeconds: number | null;
  cases: number;
  solved: number;
  failed: number;
  regressions: number;
  improvements: number;
  isDemo: boolean;
  jobId: number | null;
}

const solvedList = sql.raw([...SOLVED_STATUSES].map((s) => `'${s}'`).join(", "));

/** Per-run counts, computed once per listed page (ids are bounded by pageSize). */
function caseCounts(db: Db, ids: string[]) {
  if (ids.length === 0) return new Map<string, { cases: number; solved: number }>();
  const rows = db
    .select({ runId: caseResults.runId, cases: sql<number>`count(*)`, solved: sql<number>`sum(case when ${caseResults.status} in (${solvedList}) then 1 else 0 end)` })
    .from(caseResults)
    .where(inArray(caseResults.runId, ids))
    .groupBy(caseResults.runId)
    .all();
  return new Map(rows.map((r) => [r.runId, { cases: r.cases, solved: r.solved ?? 0 }]));
}

function regressionCounts(db: Db, ids: string[]) {
  if (ids.length === 0) return new Map<string, { regressions: number; improvements: number }>();
  const rows = db
    .select({
      runId: regressions.runId,
      regressions: sql<number>`sum(case when ${regressions.direction} = 'regression' then 1 else 0 end)`,
      improvements: sql<number>`sum(case when ${regressions.direction} = 'improvement' then 1 else 0 end)`,
    })
    .from(regressions)
    .where(inArray(regressions.runId, ids))
    .groupBy(regressions.runId)
    .all();
  return new Map(rows.map((r) => [r.runId, { regressions: r.regressions ?? 0, improvements: r.improvements ?? 0 }]));
}

function machineLabel(m: unknown): string {
  const o = (m ?? {}) as { cpuModel?: unknown; cpu?: unknown; cores?: unknown; hostLabel?: unknown };
  const cpu = typeof o.cpuModel === "string" ? o.cpuModel : typeof o.cpu === "string" ? o.cpu : "unknown CPU";
  const cores = typeof o.cores === "number" ? ` × ${o.cores}` : "";
  return `${cpu}${cores}`;
}

function filters(q: RunListQuery): SQL | undefined {
  const c: SQL[] = [];
  if (q.branch) c.push(eq(runs.branch, q.branch));
  if (q.suite) c.push(eq(suites.name, q.suite));
  if (q.status) c.push(eq(runs.status, q.status));
  if (q.demo === "exclude") c.push(eq(runs.isDemo, false));
  if (q.demo === "only") c.push(eq(runs.isDemo, true));
  if (q.q) {
    const text = q.q.replace(/[%_\\]/g, (ch) => `\\${ch}`);
    c.push(or(like(runs.commitHash, `${text.toLowerCase()}%`), sql`${runs.commitSubject} like ${`%${text}%`} escape '\\'`)!);
  }
  return c.length ? and(...c) : undefined;
}

const durationExpr = sql<number>`(${runs.finishedAt} - ${runs.startedAt})`;
const solvedExpr = sql<number>`(select count(*) from case_results c where c.run_id = ${runs.id} and c.status in (${solvedList}))`;
const failedExpr = sql<number>`(select count(*) from case_results c where c.run_id = ${runs.id} and c.status not in (${solvedList}))`;
const regressionExpr = sql<number>`(select count(*) from regressions r where r.run_id = ${runs.id} and r.direction = 'regression')`;

function orderFor(key: RunSortKey): SQL | typeof runs.startedAt {
  switch (key) {
    case "commit": return sql`${runs.commitHash}`;
    case "branch": return sql`${runs.branch}`;
    case "suite": return sql`${suites.name}`;
    case "machine": return sql`${runs.machineKey}`;
    case "duration": return durationExpr;
    case "solved": return solvedExpr;
    case "failed": return failedExpr;
    case "regressions": return regressionExpr;
    case "status": return sql`${runs.status}`;
    default: return runs.startedAt;
  }
}

export function listRuns(db: Db, q: RunListQuery): { rows: RunListItem[]; total: number; page: number; pageSize: number; pages: number } {
  const where = filters(q);
  const total = db.select({ n: sql<number>`count(*)` }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(where).get()?.n ?? 0;
  const pages = Math.max(1, Math.ceil(total / q.pageSize));
  const page = Math.min(q.page, pages);
  const order = orderFor(q.sort);
  const base = db
    .select({
      id: runs.id,
      commitHash: runs.commitHash,
      commitSubject: runs.commitSubject,
      branch: runs.branch,
      suite: suites.name,
      machineJson: runs.machineJson,
      machineKey: runs.machineKey,
      status: runs.status,
      startedAt: runs.startedAt,
      finishedAt: runs.finishedAt,
      isDemo: runs.isDemo,
      jobId: runs.jobId,
    })
    .from(runs)
    .innerJoin(suites, eq(runs.suiteId, suites.id))
    .where(where)
    .orderBy(q.dir === "asc" ? asc(order) : desc(order), q.dir === "asc" ? asc(runs.id) : desc(runs.id))
    .limit(q.pageSize)
    .offset((page - 1) * q.pageSize)
    .all();
  const ids = base.map((r) => r.id);
  const cc = caseCounts(db, ids);
  const rc = regressionCounts(db, ids);
  const rows = base.map((r) => {
    const c = cc.get(r.id) ?? { cases: 0, solved: 0 };
    const g = rc.get(r.id) ?? { regressions: 0, improvements: 0 };
    return {
      id: r.id,
      commitHash: r.commitHash,
      commitSubject: r.commitSubject,
      branch: r.branch,
      suite: r.suite,
      machine: machineLabel(r.machineJson),
      machineKey: r.machineKey,
      status: r.status,
      startedAt: r.startedAt.getTime(),
      durationSeconds: r.finishedAt ? (r.finishedAt.getTime() - r.startedAt.getTime()) / 1000 : null,
      cases: c.cases,
      solved: c.solved,
      failed: c.cases - c.solved,
      regressions: g.regressions,
      improvements: g.improvements,
      isDemo: r.isDemo,
      jobId: r.jobId,
    };
  });
  return { rows, total, page, pageSize: q.pageSize, pages };
}

/** Distinct values for the filter pickers. */
export function runFilterOptions(db: Db): { branches: string[]; suites: string[] } {
  const branches = db.selectDistinct({ b: runs.branch }).from(runs).orderBy(asc(runs.branch)).all().map((r) => r.b).filter((b): b is string => !!b);
  const suiteNames = db.selectDistinct({ n: suites.name }).from(suites).orderBy(asc(suites.name)).all().map((r) => r.n);
  return { branches, suites: suiteNames };
}

export interface MatrixCell {
  id: number;
  caseKey: string;
  problemId: string;
  scheme: string;
  intervals: number;
  degree: number | null;
  status: string;
  solved: boolean;
  objective: number | null;
  objectiveErrorRel: number | null;
  stateError: number | null;
  controlError: number | null;
  resimMiss: number | null;
  constraintViolation: number | null;
  iterations: number | null;
  medianSeconds: number | null;
  message: string | null;
}

export interface RunDetail {
  run: Omit<RunRow, "machineJson" | "startedAt" | "finishedAt" | "commitDate" | "createdAt"> & { startedAt: number; finishedAt: number | null; commitDate: number | null; machine: Record<string, unknown> };
  suite: string;
  cases: MatrixCell[];
  regressions: { id: number; caseKey: string; kind: string; direction: string; metric: string; before: number | null; after: number | null; ratio: number | null; status: string }[];
}

export function getRun(db: Db, id: string): RunDetail | null {
  const row = db.select({ run: runs, suite: suites.name }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(eq(runs.id, id)).get();
  if (!row) return null;
  const cases = db
    .select({
      id: caseResults.id,
      caseKey: caseResults.caseKey,
      problemId: caseResults.problemId,
      scheme: caseResults.scheme,
      intervals: caseResults.intervals,
      degree: caseResults.degree,
      status: caseResults.status,
      objective: caseResults.objective,
      objectiveErrorRel: caseResults.objectiveErrorRel,
      stateError: caseResults.stateError,
      controlError: caseResults.controlError,
      resimMiss: caseResults.resimMiss,
      constraintViolation: caseResults.constraintViolation,
      iterations: caseResults.iterations,
      medianSeconds: caseResults.medianSeconds,
      message: caseResults.message,
    })
    .from(caseResults)
    .where(eq(caseResults.runId, id))
    .orderBy(asc(caseResults.problemId), asc(caseResults.scheme), asc(caseResults.intervals))
    .all()
    .map((c) => ({ ...c, solved: SOLVED_STATUSES.has(c.status) }));
  const regs = db
    .select({ id: regressions.id, caseKey: regressions.caseKey, kind: regressions.kind, direction: regressions.direction, metric: regressions.metric, before: regressions.before, after: regressions.after, ratio: regressions.ratio, status: regressions.status })
    .from(regressions)
    .where(eq(regressions.runId, id))
    .all();
  const { machineJson, startedAt, finishedAt, commitDate, createdAt: _c, ...rest } = row.run;
  return {
    run: { ...rest, startedAt: startedAt.getTime(), finishedAt: finishedAt?.getTime() ?? null, commitDate: commitDate?.getTime() ?? null, machine: (machineJson ?? {}) as Record<string, unknown> },
    suite: row.suite,
    cases,
    regressions: regs,
  };
}

// ---------------------------------------------------------------------------------------
// Ingestion
// ---------------------------------------------------------------------------------------

/** Largest accepted upload body (bytes). A quick-suite run with trajectories is about 2 MB. */
export const MAX_INGEST_BYTES = 32 * 1024 * 1024;

export type IngestOutcome =
  | {
      ok: true;
      created: boolean;
      runId: string;
      newRegressions: number;
      shard?: { index: number; count: number; in: number; completed: boolean; status: string; note: string | null };
      /** The check's findings, for the step after it (alerts, A/B); not part of the HTTP answer. */
      detection?: Detection | null;
      suiteName?: string;
    }
  | { ok: false; status: 400 | 403 | 409 | 413; error: string; issues?: { path: string; message: string }[] };

/** Reads a request body up to `limit` bytes; null when it is larger. */
export async function readLimited(request: Request, limit = MAX_INGEST_BYTES): Promise<string | null> {
  const declared = Number(request.headers.get("content-length") ?? "0");
  if (declared > limit) return null;
  if (!request.body) return "";
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.byteLength;
    if (size > limit) {
      await reader.cancel();
      return null;
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks).toString("utf8");
}

/**
 * Validates and stores an uploaded run. The same run id posted again is answered with
 * `created: false` and stores nothing (the check and the insert share one transaction in
 * `ingestRunPayload`, and better-sqlite3 runs one transaction at a time, so two concurrent
 * posts of one id store it once). New complete runs are checked for regressions against main.
 * A payload naming a shard (`run.shard`) becomes part of its group's run (run-groups.server.ts).
 */
export function ingestRun(db: Db, text: string, by: { tokenId?: number | null; suiteName?: string | null } = {}): IngestOutcome {
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch {
    return { ok: false, status: 400, error: "The body must be JSON (an arcwatch-run/1 payload)." };
  }
  const parsed = runPayloadSchema.safeParse(body);
  if (!parsed.success) {
    return { ok: false, status: 400, error: "Invalid run payload.", issues: parsed.error.issues.slice(0, 50).map((i) => ({ path: i.path.join(".") || "(root)", message: i.message })) };
  }
  if (by.suiteName && parsed.data.suite.name !== by.suiteName) {
    return { ok: false, status: 403, error: `This token may only upload runs of the suite "${by.suiteName}", not "${parsed.data.suite.name}".` };
  }
  if (parsed.data.run.shard) return ingestShard(db, parsed.data, by.tokenId ?? null);
  const id = parsed.data.run.id;
  if (db.select({ id: runs.id }).from(runs).where(eq(runs.id, id)).get()) return { ok: true, created: false, runId: id, newRegressions: 0 };
  try {
    storeRunPayload(db, parsed.data);
    db.update(runs).set({ uploadedByTokenId: by.tokenId ?? null, machineClass: parsed.data.run.machineClass ?? parsed.data.run.machineKey }).where(eq(runs.id, id)).run();
  } catch (err) {
    const msg = (err as Error).message;
    if (/already uploaded/.test(msg)) return { ok: true, created: false, runId: id, newRegressions: 0 };
    if (/^invalid run payload/.test(msg)) return { ok: false, status: 400, error: msg };
    throw err;
  }
  const detection = afterRun(db, id);
  return { ok: true, created: true, runId: id, newRegressions: detection?.newRegressions ?? 0, detection, suiteName: parsed.data.suite.name };
}

// ---------------------------------------------------------------------------------------
// Overview: the state of main and of each active branch
// ---------------------------------------------------------------------------------------

export interface OverviewState {
  branches: { branch: string; runId: string; suite: string; commitHash: string; commitSubject: string | null; status: string; startedAt: number; cases: number; solved: number; regressions: number; isDemo: boolean }[];
  openByKind: { kind: string; total: number; small: number; medium: number; large: number }[];
  health: { runId: string; commitHash: string; startedAt: number; cases: number; solved: number; regressions: number }[];
  healthBranch: string;
  inProgress: { runId: string; suite: string; branch: string | null; commitHash: string; startedAt: number; cases: number; jobId: number | null; shards: { in: number; count: number } | null }[];
}

/**
 * Last run per branch (the 8 most recently active), open regressions by kind and size
 * (|ln ratio| < ln 1.5, < ln 3, larger; unknown ratios count as small), solved share over the
 * last 20 runs of main (or of the most recent branch when main has none), runs still running.
 */
export function overviewState(db: Db): OverviewState {
  const latestPerBranch = db.all<{ id: string }>(sql`select id from (select id, row_number() over (partition by branch order by started_at desc) rn, started_at from runs where branch is not null) where rn = 1 order by started_at desc limit 8`);
  const ids = latestPerBranch.map((r) => r.id);
  const meta = ids.length
    ? db.select({ id: runs.id, branch: runs.branch, suite: suites.name, commitHash: runs.commitHash, commitSubject: runs.commitSubject, status: runs.status, startedAt: runs.startedAt, isDemo: runs.isDemo }).from(runs).innerJoin(suites, eq(suites.id, runs.suiteId)).where(inArray(runs.id, ids)).all()
    : [];
  const cc = caseCounts(db, ids);
  const rc = regressionCounts(db, ids);
  const branches = ids
    .map((id) => meta.find((m) => m.id === id)!)
    .map((m) => ({ branch: m.branch!, runId: m.id, suite: m.suite, commitHash: m.commitHash, commitSubject: m.commitSubject, status: m.status, startedAt: m.startedAt.getTime(), cases: cc.get(m.id)?.cases ?? 0, solved: cc.get(m.id)?.solved ?? 0, regressions: rc.get(m.id)?.regressions ?? 0, isDemo: m.isDemo }));
  const openByKind = db.all<{ kind: string; total: number; small: number; medium: number; large: number }>(sql`
    select kind, count(*) total,
      sum(case when ratio is null or ratio <= 0 or abs(ln(ratio)) < ln(1.5) then 1 else 0 end) small,
      sum(case when ratio > 0 and abs(ln(ratio)) >= ln(1.5) and abs(ln(ratio)) < ln(3) then 1 else 0 end) medium,
      sum(case when ratio > 0 and abs(ln(ratio)) >= ln(3) then 1 else 0 end) large
    from regressions where status = 'open' and direction = 'regression' group by kind order by total desc`);
  const healthBranch = db.select({ b: runs.branch }).from(runs).where(eq(runs.branch, "main")).limit(1).get() ? "main" : (branches[0]?.branch ?? "main");
  const recent = db.select({ id: runs.id, commitHash: runs.commitHash, startedAt: runs.startedAt }).from(runs).where(and(eq(runs.branch, healthBranch), eq(runs.status, "complete"))).orderBy(desc(runs.startedAt)).limit(20).all().reverse();
  const hc = caseCounts(db, recent.map((r) => r.id));
  const hr = regressionCounts(db, recent.map((r) => r.id));
  const health = recent.map((r) => ({ runId: r.id, commitHash: r.commitHash, startedAt: r.startedAt.getTime(), cases: hc.get(r.id)?.cases ?? 0, solved: hc.get(r.id)?.solved ?? 0, regressions: hr.get(r.id)?.regressions ?? 0 }));
  const running = db.select({ id: runs.id, suite: suites.name, branch: runs.branch, commitHash: runs.commitHash, startedAt: runs.startedAt, jobId: runs.jobId }).from(runs).innerJoin(suites, eq(suites.id, runs.suiteId)).where(eq(runs.status, "running")).orderBy(desc(runs.startedAt)).limit(10).all();
  const rcc = caseCounts(db, running.map((r) => r.id));
  const sp = shardProgress(db, running.map((r) => r.id));
  const inProgress = running.map((r) => ({ runId: r.id, suite: r.suite, branch: r.branch, commitHash: r.commitHash, startedAt: r.startedAt.getTime(), cases: rcc.get(r.id)?.cases ?? 0, jobId: r.jobId, shards: sp.get(r.id) ?? null }));
  return { branches, openByKind, health, healthBranch, inProgress };
}

/** Number of cases a run has recorded so far. */
export function caseCountOfRun(db: Db, runId: string): number {
  return db.select({ n: sql<number>`count(*)` }).from(caseResults).where(eq(caseResults.runId, runId)).get()?.n ?? 0;
}
