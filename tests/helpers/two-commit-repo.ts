/**
 * A temporary git repository with pika-rover-dash, the given suites under bench/suites/, and two
 * commits ("one", then "two" adding notes.txt): what A/B checks and uploads resolve commits in.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";

const ROOT = path.resolve(import.meta.dirname, "..", "..");
const GIT_ENV = { ...process.env, GIT_AUTHOR_NAME: "T", GIT_AUTHOR_EMAIL: "t@example.com", GIT_COMMITTER_NAME: "T", GIT_COMMITTER_EMAIL: "t@example.com" };
const git = (cwd: string, ...args: string[]) => execFileSync("git", args, { cwd, encoding: "utf8", env: GIT_ENV }).trim();

export function twoCommitRepo(label: string, suites: Record<string, unknown>[]): { repo: string; c1: string; c2: string; remove: () => void } {
  const repo = fs.mkdtempSync(path.join(os.tmpdir(), `arcwatch-${label}-repo-`));
  fs.cpSync(path.join(ROOT, "problems", "pika-rover-dash"), path.join(repo, "problems", "pika-rover-dash"), { recursive: true });
  fs.mkdirSync(path.join(repo, "bench", "suites"), { recursive: true });
  for (const s of suites) fs.writeFileSync(path.join(repo, "bench", "suites", `${s.name as string}.json`), JSON.stringify(s));
  git(repo, "init", "-q", "-b", "main");
  git(repo, "add", "-A");
  git(repo, "commit", "-q", "-m", "one");
  const c1 = git(repo, "rev-parse", "HEAD");
  fs.writeFileSync(path.join(repo, "notes.txt"), "two\n");
  git(repo, "add", "-A");
  git(repo, "commit", "-q", "-m", "two");
  const c2 = git(repo, "rev-parse", "HEAD");
  return { repo, c1, c2, remove: () => fs.rmSync(repo, { recursive: true, force: true }) };
}
