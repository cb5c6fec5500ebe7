/**
 * The commit a run measures, read with simple-git: hash, branch, dirty flag, subject, author, date.
 * Outside a git repository every field but the hash is null and the hash is "unknown".
 */
import { simpleGit } from "simple-git";

import type { CommitMeta } from "../../app/runs/types";

export type { CommitMeta };

export async function commitMeta(dir: string): Promise<CommitMeta> {
  const git = simpleGit({ baseDir: dir });
  if (!(await git.checkIsRepo().catch(() => false))) {
    return { commitHash: "unknown", branch: null, dirty: false, subject: null, author: null, date: null };
  }
  const log = await git.log({ maxCount: 1 }).catch(() => null);
  const head = log?.latest ?? null;
  const status = await git.status().catch(() => null);
  let branch: string | null = null;
  try {
    const b = (await git.revparse(["--abbrev-ref", "HEAD"])).trim();
    branch = b && b !== "HEAD" ? b : null;
  } catch {
    branch = null;
  }
  return {
    commitHash: head?.hash ?? "unknown",
    branch,
    dirty: status ? !status.isClean() : false,
    subject: head?.message ?? null,
    author: head ? `${head.author_name} <${head.author_email}>` : null,
    date: head?.date ? new Date(head.date) : null,
  };
}

/** Full hash of a commit-ish (abbreviated hash, branch, tag) in `dir`, or null if unknown. */
export async function resolveCommit(dir: string, ref: string): Promise<string | null> {
  try {
    return (await simpleGit({ baseDir: dir }).revparse(["--verify", "--quiet", `${ref}^{commit}`])).trim() || null;
  } catch {
    return null;
  }
}
