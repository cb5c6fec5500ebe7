/**
 * Git access for the "run a suite" page and the job worker (simple-git). The repository is
 * ARCWATCH_REPO (default: the working directory of the server). Worktrees for jobs live under
 * ARCWATCH_WORKTREES (default <server folder>/.arcwatch-worktrees, ignored by git through its
 * own .gitignore written on first use). It must lie under the folder holding node_modules: the
 * checked-out code finds its packages by Node's upward search.
 */
import fs from "node:fs";
import path from "node:path";
import { simpleGit } from "simple-git";

export function repoRoot(): string {
  return path.resolve(process.env.ARCWATCH_REPO?.trim() || process.cwd());
}

export function worktreesDir(): string {
  return path.resolve(process.env.ARCWATCH_WORKTREES?.trim() || path.join(process.cwd(), ".arcwatch-worktrees"));
}

export interface BranchInfo {
  name: string;
  commit: string;
  subject: string;
  date: string;
}

export interface CommitInfo {
  hash: string;
  subject: string;
  date: string;
  author: string;
}

/** Local branches with their tip commit, subject and date, most recently committed first. */
export async function listBranches(root = repoRoot()): Promise<BranchInfo[]> {
  const out = await simpleGit(root).raw(["for-each-ref", "--sort=-committerdate", "--format=%(refname:short)%00%(objectname)%00%(subject)%00%(committerdate:iso-strict)", "refs/heads"]);
  return out
    .split("\n")
    .filter(Boolean)
    .map((line) => {
      const [name, commit, subject, date] = line.split("\0");
      return { name: name!, commit: commit!, subject: subject ?? "", date: date ?? "" };
    });
}

/** The last `limit` commits of a branch (or any ref), newest first. */
export async function listCommits(ref: string, limit = 30, root = repoRoot()): Promise<CommitInfo[]> {
  if (!/^[A-Za-z0-9._\/-]{1,200}$/.test(ref) || ref.startsWith("-")) throw new Error(`not a ref name: ${ref}`);
  const out = await simpleGit(root).raw(["log", `--max-count=${limit}`, "--format=%H%x00%s%x00%cI%x00%an", ref, "--"]);
  return out
    .split("\n")
    .filter(Boolean)
    .map((line) => {
      const [hash, subject, date, author] = line.split("\0");
      return { hash: hash!, subject: subject ?? "", date: date ?? "", author: author ?? "" };
    });
}

/** Full hash of a branch name or commit prefix, or null when it names nothing. */
export async function resolveRef(ref: string, root = repoRoot()): Promise<string | null> {
  if (!/^[A-Za-z0-9._\/-]{1,200}$/.test(ref) || ref.startsWith("-")) return null;
  try {
    return (await simpleGit(root).raw(["rev-parse", "--verify", "--quiet", `${ref}^{commit}`])).trim() || null;
  } catch {
    return null;
  }
}

/** Checks `commit` out, detached, into a new worktree `<worktreesDir>/job-<id>`; returns its path. */
export async function addWorktree(jobId: number, commit: string, root = repoRoot()): Promise<string> {
  const base = worktreesDir();
  fs.mkdirSync(base, { recursive: true });
  const ignore = path.join(base, ".gitignore");
  if (!fs.existsSync(ignore)) fs.writeFileSync(ignore, "*\n");
  const dir = path.join(base, `job-${jobId}`);
  if (fs.existsSync(dir)) await removeWorktree(dir, root);
  await simpleGit(root).raw(["worktree", "add", "--detach", "--force", dir, commit]);
  return dir;
}

export async function removeWorktree(dir: string, root = repoRoot()): Promise<void> {
  try {
    await simpleGit(root).raw(["worktree", "remove", "--force", dir]);
  } catch {
    fs.rmSync(dir, { recursive: true, force: true });
    await simpleGit(root).raw(["worktree", "prune"]).catch(() => undefined);
  }
}

/** Suite names (bench/suites/*.json) at a commit of the repository. */
export async function listSuitesAt(ref: string, root = repoRoot()): Promise<string[]> {
  if (!/^[A-Za-z0-9._\/-]{1,200}$/.test(ref) || ref.startsWith("-")) return [];
  try {
    const out = await simpleGit(root).raw(["ls-tree", "--name-only", `${ref}:bench/suites`]);
    return out.split("\n").filter((f) => f.endsWith(".json")).map((f) => f.slice(0, -5)).sort();
  } catch {
    return [];
  }
}

/** Removes job worktrees left behind by a server that stopped mid-job (called at worker start). */
export async function pruneWorktrees(root = repoRoot()): Promise<void> {
  const base = worktreesDir();
  if (!fs.existsSync(base)) return;
  for (const name of fs.readdirSync(base)) if (/^job-\d+$/.test(name)) await removeWorktree(path.join(base, name), root);
}

/** Where `ref` leaves `onto` (their merge base), or null when they share no history or a name is unknown. */
export async function mergeBase(ref: string, onto = "main", root = repoRoot()): Promise<string | null> {
  const ok = (r: string) => /^[A-Za-z0-9._\/-]{1,200}$/.test(r) && !r.startsWith("-");
  if (!ok(ref) || !ok(onto)) return null;
  try {
    return (await simpleGit(root).raw(["merge-base", ref, onto])).trim() || null;
  } catch {
    return null;
  }
}
