/**
 * Commit order from git, for choosing baselines by the repository's history rather than by the
 * dates a client sent: the ancestors of a commit, nearest first (`git rev-list`, which lists a
 * commit's ancestry newest first along parents). The repository is the run's external solver
 * repository when it has one, else ARCWATCH_REPO (default: the working directory). Null when git
 * does not know the commit there (an upload from a repository this server cannot see).
 */
import { spawnSync } from "node:child_process";
import path from "node:path";

/** How far back the ancestry is read: far beyond any baseline worth comparing with. */
const MAX_ANCESTORS = 5000;

export function repositoryOf(externalRepo: string | null | undefined): string {
  return path.resolve(externalRepo || process.env.ARCWATCH_REPO?.trim() || process.cwd());
}

/** Commit hash → distance (0 = the commit itself), or null when the commit is unknown to `repo`. */
export function ancestry(repo: string, commit: string): Map<string, number> | null {
  if (!/^[0-9a-f]{7,64}$/i.test(commit)) return null;
  const r = spawnSync("git", ["-C", repo, "rev-list", `--max-count=${MAX_ANCESTORS}`, commit, "--"], { encoding: "utf8", timeout: 10_000 });
  if (r.status !== 0 || !r.stdout) return null;
  const out = new Map<string, number>();
  r.stdout
    .trim()
    .split("\n")
    .forEach((h, i) => out.set(h.trim(), i));
  return out;
}
