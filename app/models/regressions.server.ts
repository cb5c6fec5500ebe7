/**
 * Regressions found by detection (app/models/detection.server.ts): the list, one regression's evidence
 * (before/after cases, timing samples, trajectories), the commits between baseline and flagged
 * commit (simple-git), and triage: acknowledge, assign, mark expected with a reason, link the
 * fixing commit, reopen. Every change is a regression_events row with who and when; comments
 * and per-problem e-mail subscriptions sit beside it.
 */
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import { simpleGit } from "simple-git";
import { z } from "zod";
import type { Db } from "~/db/client.server";
import { abChecks, apiTokens, caseResults, comments, problems, REGRESSION_KINDS, REGRESSION_STATUSES, regressionEvents, regressionMembers, regressions, regressionSightings, runs, subscriptions, timingSamples, users, type AbCheckState, type RegressionScope, type RegressionStatus } from "~/db/schema";
import type { AbResultDoc } from "~/runs/ab-result";
import { latestAbOf } from "./ab-checks.server";
import { parseGroupKey } from "~/runs/pooled";
import { getCaseTrajectory, type CaseTrajectory } from "~/models/cases.server";
import { repoRoot } from "~/services/git.server";
import { webProblemLibrary } from "./library.server";

/** The problem of a case key; a problem group's problem; the group key itself for other groups. */
export function problemOfCaseKey(key: string): string {
  const g = parseGroupKey(key);
  if (g) return g.scope === "problem" ? g.name : key;
  return key.split("/")[0] ?? key;
}

/** Group findings (a scheme, a problem, the suite) before the single cases they summarise. */
const groupsFirst = sql`case when ${regressions.scope} = 'case' then 1 else 0 end`;

export interface RegressionListItem {
  id: number;
  caseKey: string;
  problemId: string;
  kind: string;
  direction: string;
  metric: string;
  /** "case" or the group of a pooled finding ("scheme", "problem", "suite"). */
  scope: RegressionScope;
  before: number | null;
  after: number | null;
  ratio: number | null;
  pValue: number | null;
  status: RegressionStatus;
  assignee: string | null;
  runId: string;
  commitHash: string;
  commitSubject: string | null;
  createdAt: number;
  /** Found between demo commits (seeded data, never a real measurement). */
  isDemo: boolean;
  /** The latest interleaved A/B check judging it (null when none was run). */
  ab: { state: AbCheckState; ratio: number | null; low: number | null; high: number | null } | null;
}

export const regressionListQuery = z.object({
  status: z.enum(REGRESSION_STATUSES).optional().catch(undefined),
  kind: z.enum(REGRESSION_KINDS).optional().catch(undefined),
  direction: z.enum(["regression", "improvement"]).optional().catch(undefined),
  problem: z.string().regex(/^[A-Za-z0-9][A-Za-z0-9_.-]{0,127}$/).optional().catch(undefined),
  limit: z.coerce.number().int().min(1).max(500).default(200).catch(200),
  /** all (default), hide (real findings only) or only (demo findings only). */
  demo: z.enum(["all", "hide", "only"]).default("all").catch("all"),
});
export type RegressionListQuery = z.infer<typeof regressionListQuery>;

export function listRegressions(db: Db, q: Omit<RegressionListQuery, "demo"> & Partial<Pick<RegressionListQuery, "demo">>): RegressionListItem[] {
  const where = [
    q.status ? eq(regressions.status, q.status) : undefined,
    q.kind ? eq(regressions.kind, q.kind) : undefined,
    q.direction ? eq(regressions.direction, q.direction) : undefined,
    q.problem ? sql`${regressions.caseKey} like ${`${q.problem}/%`}` : undefined,
    q.demo === "hide" ? eq(runs.isDemo, false) : q.demo === "only" ? eq(runs.isDemo, true) : undefined,
  ].filter((w) => w !== undefined);
  const rows = db
    .select({ r: regressions, commitHash: runs.commitHash, commitSubject: runs.commitSubject, assignee: users.name, isDemo: runs.isDemo })
    .from(regressions)
    .innerJoin(runs, eq(runs.id, regressions.runId))
    .leftJoin(users, eq(users.id, regressions.assigneeId))
    .where(where.length ? and(...where) : undefined)
    .orderBy(desc(runs.startedAt), groupsFirst, desc(regressions.id))
    .limit(q.limit)
    .all();
  return toListItems(db, rows);
}

type ListRow = { r: typeof regressions.$inferSelect; commitHash: string; commitSubject: string | null; assignee: string | null; isDemo: boolean };

function toListItems(db: Db, rows: ListRow[]): RegressionListItem[] {
  const ab = latestAbOf(db, rows.map((x) => x.r.id));
  return rows.map(({ r, commitHash, commitSubject, assignee, isDemo }) => ({
    ab: ab.get(r.id) ?? null,
    isDemo,
    id: r.id,
    caseKey: r.caseKey,
    problemId: problemOfCaseKey(r.caseKey),
    kind: r.kind,
    direction: r.direction,
    metric: r.metric,
    scope: r.scope,
    before: r.before,
    after: r.after,
    ratio: r.ratio,
    pValue: r.pValue,
    status: r.status,
    assignee,
    runId: r.runId,
    commitHash,
    commitSubject,
    createdAt: new Date(r.createdAt).getTime(),
  }));
}

export interface SideCase {
  caseId: number;
  runId: string;
  commitHash: string;
  commitSubject: string | null;
  commitAuthor: string | null;
  status: string;
  objective: number | null;
  objectiveErrorRel: number | null;
  stateError: number | null;
  iterations: number | null;
  medianSeconds: number | null;
  samples: number[];
  trajectory: CaseTrajectory | null;
}

export interface RegressionEvent {
  id: number;
  at: number;
  user: string | null;
  /** The API token the change was made with, else null. */
  token: string | null;
  fromStatus: string | null;
  toStatus: string | null;
  note: string | null;
}

export interface RegressionDetail {
  regression: RegressionListItem & { ciLow: number | null; ciHigh: number | null; reason: string | null; fixingCommit: string | null; assigneeId: number | null; baselineRunId: string | null };
  before: SideCase | null;
  after: SideCase | null;
  events: RegressionEvent[];
  /** A group finding's member cases with their own median ratios. */
  members: { caseKey: string; problemId: string; ratio: number | null }[];
  /** The runs (commits) it was seen in, oldest first: the one that found it, then later commits of its branch. */
  sightings: { runId: string; commitHash: string; commitSubject: string | null; ratio: number | null; ciLow: number | null; ciHigh: number | null; at: number }[];
  /** `token`: the name of the API token the comment was posted with, else null. */
  comments: { id: number; user: string; token: string | null; body: string; at: number }[];
  assignable: { id: number; name: string }[];
  subscribed: boolean;
}

async function sideCase(db: Db, runId: string | null, caseKey: string): Promise<SideCase | null> {
  if (!runId) return null;
  // only the columns shown: the full rows carry JSON (iteration log, machine) parsed for nothing
  const row = db
    .select({
      c: { id: caseResults.id, status: caseResults.status, objective: caseResults.objective, objectiveErrorRel: caseResults.objectiveErrorRel, stateError: caseResults.stateError, iterations: caseResults.iterations, medianSeconds: caseResults.medianSeconds },
      run: { commitHash: runs.commitHash, commitSubject: runs.commitSubject, commitAuthor: runs.commitAuthor },
    })
    .from(caseResults)
    .innerJoin(runs, eq(runs.id, caseResults.runId))
    .where(and(eq(caseResults.runId, runId), eq(caseResults.caseKey, caseKey)))
    .get();
  if (!row) return null;
  const samples = db.select({ s: timingSamples.samplesJson }).from(timingSamples).where(eq(timingSamples.caseResultId, row.c.id)).get()?.s ?? [];
  let trajectory: CaseTrajectory | null = null;
  try {
    trajectory = await getCaseTrajectory(db, row.c.id);
  } catch {
    trajectory = null;
  }
  return {
    caseId: row.c.id,
    runId,
    commitHash: row.run.commitHash,
    commitSubject: row.run.commitSubject,
    commitAuthor: row.run.commitAuthor,
    status: row.c.status,
    objective: row.c.objective,
    objectiveErrorRel: row.c.objectiveErrorRel,
    stateError: row.c.stateError,
    iterations: row.c.iterations,
    medianSeconds: row.c.medianSeconds,
    samples: Array.isArray(samples) ? samples : [],
    trajectory,
  };
}

/** The regression page's data; the sides' trajectories need the problem's reference (compiled on a solver thread). */
export async function getRegressionDetail(db: Db, id: number, viewerId: number): Promise<RegressionDetail | null> {
  const [item] = listRegressionsById(db, [id]);
  const r = db.select().from(regressions).where(eq(regressions.id, id)).get();
  if (!item || !r) return null;
  const events = db
    .select({ e: regressionEvents, user: users.name, token: apiTokens.name })
    .from(regressionEvents)
    .leftJoin(users, eq(users.id, regressionEvents.userId))
    .leftJoin(apiTokens, eq(apiTokens.id, regressionEvents.apiTokenId))
    .where(eq(regressionEvents.regressionId, id))
    .orderBy(asc(regressionEvents.at), asc(regressionEvents.id))
    .all()
    .map(({ e, user, token }) => ({ id: e.id, at: new Date(e.at).getTime(), user, token, fromStatus: e.fromStatus, toStatus: e.toStatus, note: e.note }));
  const cs = db
    .select({ c: comments, user: users.name, token: apiTokens.name })
    .from(comments)
    .innerJoin(users, eq(users.id, comments.userId))
    .leftJoin(apiTokens, eq(apiTokens.id, comments.apiTokenId))
    .where(and(eq(comments.targetType, "regression"), eq(comments.targetId, String(id))))
    .orderBy(asc(comments.createdAt), asc(comments.id))
    .all()
    .map(({ c, user, token }) => ({ id: c.id, user, token, body: c.body, at: new Date(c.createdAt).getTime() }));
  const assignable = db
    .select({ id: users.id, name: users.name })
    .from(users)
    .where(and(inArray(users.role, ["engineer", "admin"]), sql`${users.disabledAt} is null`))
    .orderBy(asc(users.name))
    .all();
  const subscribed = !!db
    .select({ id: subscriptions.id })
    .from(subscriptions)
    .where(and(eq(subscriptions.userId, viewerId), eq(subscriptions.problemId, item.problemId)))
    .get();
  const members = db.select({ caseKey: regressionMembers.caseKey, problemId: regressionMembers.problemId, ratio: regressionMembers.ratio }).from(regressionMembers).where(eq(regressionMembers.regressionId, id)).orderBy(asc(regressionMembers.caseKey)).all();
  const sightings = db
    .select({ s: regressionSightings, subject: runs.commitSubject })
    .from(regressionSightings)
    .innerJoin(runs, eq(runs.id, regressionSightings.runId))
    .where(eq(regressionSightings.regressionId, id))
    .orderBy(asc(runs.startedAt))
    .all()
    .map(({ s, subject }) => ({ runId: s.runId, commitHash: s.commitHash, commitSubject: subject, ratio: s.ratio, ciLow: s.ciLow, ciHigh: s.ciHigh, at: new Date(s.seenAt).getTime() }));
  const [before, after] = [await sideCase(db, r.baselineRunId, r.caseKey), await sideCase(db, r.runId, r.caseKey)];
  return {
    regression: { ...item, ciLow: r.ciLow, ciHigh: r.ciHigh, reason: r.reason, fixingCommit: r.fixingCommit, assigneeId: r.assigneeId, baselineRunId: r.baselineRunId },
    members,
    sightings,
    before,
    after,
    events,
    comments: cs,
    assignable,
    subscribed,
  };
}

function listRegressionsById(db: Db, ids: number[]): RegressionListItem[] {
  if (ids.length === 0) return [];
  const rows = db
    .select({ r: regressions, commitHash: runs.commitHash, commitSubject: runs.commitSubject, assignee: users.name, isDemo: runs.isDemo })
    .from(regressions)
    .innerJoin(runs, eq(runs.id, regressions.runId))
    .leftJoin(users, eq(users.id, regressions.assigneeId))
    .where(inArray(regressions.id, ids))
    .all();
  return toListItems(db, rows);
}

// ---------------------------------------------------------------------------------------
// Commits between baseline and flagged commit
// ---------------------------------------------------------------------------------------

export interface CommitEntry {
  hash: string;
  subject: string;
  author: string;
  date: string;
  files: { status: string; path: string }[];
}

const HASH = /^[0-9a-f]{7,40}$/i;
/** Answers of `commitsBetween` for full hashes (oldest dropped first beyond the maximum). */
const commitsMemo = new Map<string, { commits: CommitEntry[]; note: string | null }>();
const COMMITS_MEMO_MAX = 256;

/**
 * `git log --name-status baseline..flagged` (newest first, at most `limit`), in ARCWATCH_REPO.
 * Null with a reason when either commit is unknown to the repository.
 */
export async function commitsBetween(baseline: string | null, flagged: string, limit = 50, root = repoRoot()): Promise<{ commits: CommitEntry[]; note: string | null }> {
  if (!HASH.test(flagged) || (baseline !== null && !HASH.test(baseline))) return { commits: [], note: "Not commit hashes." };
  // Full hashes name immutable history: the answer never changes, so it is kept (a git process
  // per page view was most of the regression page's time: bench/regression-page.bench.ts).
  const memoKey = `${root}\0${baseline ?? ""}\0${flagged}\0${limit}`;
  const full = flagged.length === 40 && (baseline === null || baseline.length === 40);
  const known = full ? commitsMemo.get(memoKey) : undefined;
  if (known) return known;
  const git = simpleGit(root);
  try {
    const range = baseline ? `${baseline}..${flagged}` : flagged;
    const out = await git.raw(["log", `--max-count=${limit}`, "--name-status", "--format=%x1e%H%x00%s%x00%an%x00%cI", range, "--"]);
    const commits = out
      .split("\x1e")
      .filter((b) => b.trim())
      .map((block) => {
        const [head, ...rest] = block.split("\n");
        const [hash, subject, author, date] = head!.split("\0");
        const files = rest
          .filter((l) => l.trim())
          .map((l) => {
            const [status, ...paths] = l.split("\t");
            return { status: status!, path: paths.join(" → ") };
          });
        return { hash: hash!, subject: subject ?? "", author: author ?? "", date: date ?? "", files };
      });
    const answer = { commits, note: commits.length === limit ? `Showing the newest ${limit} commits.` : null };
    if (full) {
      if (commitsMemo.size >= COMMITS_MEMO_MAX) commitsMemo.delete(commitsMemo.keys().next().value!);
      commitsMemo.set(memoKey, answer);
    }
    return answer;
  } catch {
    // not kept: the commits may be fetched into the repository later
    return { commits: [], note: "The commits are not in this server's repository." };
  }
}

export interface DiffSummary {
  hash: string;
  subject: string;
  author: string;
  date: string;
  body: string;
  files: { path: string; added: number | null; removed: number | null }[];
}

/** `git show --numstat` of one commit: message and lines added/removed per file. */
export async function diffSummary(sha: string, root = repoRoot()): Promise<DiffSummary | null> {
  if (!HASH.test(sha)) return null;
  try {
    const out = await simpleGit(root).raw(["show", "--numstat", "--format=%H%x00%s%x00%an%x00%cI%x00%b%x1e", sha, "--"]);
    const [head, stat] = out.split("\x1e");
    const [hash, subject, author, date, body] = head!.split("\0");
    const files = (stat ?? "")
      .split("\n")
      .filter((l) => l.trim())
      .map((l) => {
        const [a, r, ...p] = l.split("\t");
        return { path: p.join("\t"), added: a === "-" ? null : Number(a), removed: r === "-" ? null : Number(r) };
      });
    return { hash: hash!, subject: subject ?? "", author: author ?? "", date: date ?? "", body: (body ?? "").trim(), files };
  } catch {
    return null;
  }
}

// ---------------------------------------------------------------------------------------
// Triage, comments, subscriptions
// ---------------------------------------------------------------------------------------

export const triageSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("acknowledge"), note: z.string().trim().max(2000).optional() }),
  z.object({ intent: z.literal("assign"), assigneeId: z.coerce.number().int().min(0) }),
  z.object({ intent: z.literal("expected"), reason: z.string().trim().min(1, "Give the reason this change is expected.").max(2000) }),
  z.object({ intent: z.literal("fixed"), fixingCommit: z.string().trim().regex(HASH, "A commit hash (7 to 40 hex digits).") }),
  z.object({ intent: z.literal("reopen"), note: z.string().trim().max(2000).optional() }),
]);
export type TriageInput = z.infer<typeof triageSchema>;

export type TriageOutcome = { ok: true; status: RegressionStatus } | { ok: false; status: 400 | 404; errors: Record<string, string> };

/** Applies one triage change and records it as an event (one transaction). */
export function triageRegression(db: Db, id: number, userId: number, input: TriageInput, apiTokenId: number | null = null): TriageOutcome {
  const r = db.select().from(regressions).where(eq(regressions.id, id)).get();
  if (!r) return { ok: false, status: 404, errors: { form: "No such regression." } };
  const from = r.status;
  let to: RegressionStatus = from;
  const set: Partial<typeof regressions.$inferInsert> = { updatedAt: new Date() };
  let note: string;
  switch (input.intent) {
    case "acknowledge":
      to = "acknowledged";
      note = input.note ? `Acknowledged: ${input.note}` : "Acknowledged.";
      break;
    case "assign": {
      if (input.assigneeId === 0) {
        set.assigneeId = null;
        note = "Unassigned.";
        break;
      }
      const u = db.select({ id: users.id, name: users.name, role: users.role }).from(users).where(eq(users.id, input.assigneeId)).get();
      if (!u || u.role === "viewer") return { ok: false, status: 400, errors: { assigneeId: "Choose an engineer or admin." } };
      set.assigneeId = u.id;
      note = `Assigned to ${u.name}.`;
      break;
    }
    case "expected":
      to = "expected";
      set.reason = input.reason;
      note = `Marked expected: ${input.reason}`;
      break;
    case "fixed":
      to = "fixed";
      set.fixingCommit = input.fixingCommit.toLowerCase();
      note = `Fixed by ${input.fixingCommit.toLowerCase()}.`;
      break;
    case "reopen":
      to = "open";
      set.reason = null;
      set.fixingCommit = null;
      note = input.note ? `Reopened: ${input.note}` : "Reopened.";
      break;
  }
  set.status = to;
  db.transaction((tx) => {
    tx.update(regressions).set(set).where(eq(regressions.id, id)).run();
    tx.insert(regressionEvents).values({ regressionId: id, userId, apiTokenId, fromStatus: from, toStatus: to, note }).run();
  });
  return { ok: true, status: to };
}

export const commentSchema = z.object({ body: z.string().trim().min(1, "Write a comment first.").max(5000, "At most 5000 characters.") });

export function addRegressionComment(db: Db, id: number, userId: number, body: string, apiTokenId: number | null = null): boolean {
  if (!db.select({ id: regressions.id }).from(regressions).where(eq(regressions.id, id)).get()) return false;
  db.insert(comments).values({ userId, apiTokenId, targetType: "regression", targetId: String(id), body }).run();
  return true;
}

/** The problem a regression is about (from its case key), without the rest of the detail; null for an unknown id. */
export function problemOfRegression(db: Db, id: number): string | null {
  const r = db.select({ caseKey: regressions.caseKey }).from(regressions).where(eq(regressions.id, id)).get();
  return r ? problemOfCaseKey(r.caseKey) : null;
}

/** Subscribes (or not) a user to e-mail about regressions on one problem (the runner's alerts read it). */
export function setProblemSubscription(db: Db, userId: number, problemId: string, on: boolean): boolean {
  if (!on) {
    db.delete(subscriptions).where(and(eq(subscriptions.userId, userId), eq(subscriptions.problemId, problemId))).run();
    return true;
  }
  if (!db.select({ id: problems.id }).from(problems).where(eq(problems.id, problemId)).get()) {
    // title, description and tags as the schema reads the file, as the recorder stores them (no compiling)
    const p = webProblemLibrary().facts(problemId);
    if (!p) return false;
    db.insert(problems).values({ id: problemId, title: p.title, description: p.description, tagsJson: p.tags }).onConflictDoNothing().run();
  }
  db.insert(subscriptions).values({ userId, problemId }).onConflictDoNothing().run();
  return true;
}
