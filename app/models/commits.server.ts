/**
 * The commit page's data: the commit from git (message, parents, diff), the runs recorded at it
 * with what they found, the regressions it is blamed for (found by a run at this commit, or seen
 * there on a branch) and the A/B checks that compared it.
 */
import { and, desc, eq, inArray } from "drizzle-orm";
import { simpleGit } from "simple-git";
import type { Db } from "~/db/client.server";
import { regressions, regressionSightings, runs, suites } from "~/db/schema";
import { parseDiff, type ParsedDiff } from "~/services/diff-view.server";
import { repoRoot, resolveRef } from "~/services/git.server";

export const SHA = /^[0-9a-f]{7,40}$/;

export interface CommitHeader {
  hash: string;
  parents: string[];
  subject: string;
  body: string;
  author: string;
  date: string;
}

/** The commit named by `sha` (7–40 hex digits), or null when it is not in the repository. */
export async function commitHeader(sha: string, root = repoRoot()): Promise<CommitHeader | null> {
  if (!SHA.test(sha)) return null;
  const hash = await resolveRef(sha, root);
  if (!hash) return null;
  const out = await simpleGit(root).raw(["show", "-s", "--format=%H%x00%P%x00%s%x00%an%x00%cI%x00%b", hash, "--"]);
  const [h, parents, subject, author, date, ...body] = out.split("\0");
  return { hash: h!.trim(), parents: (parents ?? "").split(" ").filter(Boolean), subject: subject ?? "", author: author ?? "", date: date ?? "", body: body.join("\0").trim() };
}

/** The diff against the first parent (a root commit: against nothing), cut at `limit` lines. */
export async function commitDiff(c: CommitHeader, limit: number, root = repoRoot()): Promise<ParsedDiff> {
  const git = simpleGit(root);
  const args = ["--no-color", "--no-ext-diff", "-M", "--unified=3"];
  const text = c.parents[0] ? await git.raw(["diff", ...args, c.parents[0], c.hash, "--"]) : await git.raw(["show", ...args, "--format=", "--root", c.hash, "--"]);
  return parseDiff(text, limit);
}

export interface CommitRun {
  id: string;
  suite: string;
  status: string;
  branch: string | null;
  startedAt: number;
  isDemo: boolean;
  regressions: number;
  improvements: number;
}

export interface BlamedRegression {
  id: number;
  caseKey: string;
  kind: string;
  metric: string;
  ratio: number | null;
  status: string;
  /** "found" here, or "seen" here again (a later commit of the branch). */
  how: "found" | "seen";
}

export function runsAtCommit(db: Db, hash: string): CommitRun[] {
  const rows = db
    .select({ id: runs.id, suite: suites.name, status: runs.status, branch: runs.branch, startedAt: runs.startedAt, isDemo: runs.isDemo })
    .from(runs)
    .innerJoin(suites, eq(suites.id, runs.suiteId))
    .where(eq(runs.commitHash, hash))
    .orderBy(desc(runs.startedAt))
    .limit(50)
    .all();
  const ids = rows.map((r) => r.id);
  const found = ids.length ? db.select({ runId: regressions.runId, direction: regressions.direction }).from(regressions).where(inArray(regressions.runId, ids)).all() : [];
  return rows.map((r) => ({
    ...r,
    startedAt: r.startedAt.getTime(),
    isDemo: !!r.isDemo,
    regressions: found.filter((f) => f.runId === r.id && f.direction === "regression").length,
    improvements: found.filter((f) => f.runId === r.id && f.direction === "improvement").length,
  }));
}

export function regressionsBlamedOn(db: Db, hash: string): BlamedRegression[] {
  const cols = { id: regressions.id, caseKey: regressions.caseKey, kind: regressions.kind, metric: regressions.metric, ratio: regressions.ratio, status: regressions.status };
  const found = db.select(cols).from(regressions).innerJoin(runs, eq(runs.id, regressions.runId)).where(and(eq(runs.commitHash, hash), eq(regressions.direction, "regression"))).orderBy(desc(regressions.id)).all();
  const seen = db.select(cols).from(regressionSightings).innerJoin(regressions, eq(regressions.id, regressionSightings.regressionId)).where(eq(regressionSightings.commitHash, hash)).all();
  const out: BlamedRegression[] = found.map((r) => ({ ...r, how: "found" }));
  for (const r of seen) if (!out.some((o) => o.id === r.id)) out.push({ ...r, how: "seen" });
  return out;
}
