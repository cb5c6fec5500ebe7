/**
 * Suites as they run: the suite file with the changes made in the browser applied on top
 * (app/runs/suite-changes.ts for the rules, `suite_changes` for the rows). Every place that
 * resolves a suite — the command-line runner (bench/runner/run-suite.ts), A/B, shard plans, the job
 * worker and the pages — loads it through `loadSuiteWithChanges`, so all of them see the same
 * problems. A runner on another machine that records into its own database does not see the
 * server's changes (it has no rows); its upload carries the definition it ran.
 */
import fs from "node:fs";
import path from "node:path";
import { and, asc, eq, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { suiteChanges } from "~/db/schema";
import type { ProblemLibrary } from "~/engine/problem/library";
import { suiteMembership, withSuiteChanges, type Membership, type SuiteChange, type SuiteChangeAction } from "~/runs/suite-changes";
import { loadSuite, type LoadedSuite } from "~/runs/suite";

/** The changes of one suite name, oldest first ([] on a database without the table). */
export function listSuiteChanges(db: Db, suiteName: string): SuiteChange[] {
  try {
    return db
      .select()
      .from(suiteChanges)
      .where(eq(suiteChanges.suiteName, suiteName))
      .orderBy(asc(suiteChanges.version))
      .all()
      .map((r) => ({ version: r.version, action: r.action, problemId: r.problemId, by: r.userLabel, at: r.createdAt.getTime(), note: r.note }));
  } catch (err) {
    // a database of a release before suite changes (a job running an old commit may open it read-only)
    if (/no such table/.test((err as Error).message)) return [];
    throw err;
  }
}

/** A suite file with the database's changes applied (definition, thresholds and content hash). */
export function loadSuiteWithChanges(db: Db, file: string): LoadedSuite & { changes: SuiteChange[] } {
  const suite = loadSuite(file);
  return withSuiteChanges(suite, listSuiteChanges(db, suite.definition.name));
}

export interface SuiteChangeInput {
  suiteName: string;
  action: SuiteChangeAction;
  problemId: string;
  user: { id: number; name: string; email: string };
  note?: string;
}

/** Appends one change as the suite's next version; returns it. */
export function recordSuiteChange(db: Db, input: SuiteChangeInput): SuiteChange {
  return db.transaction((tx) => {
    const top = tx.select({ v: sql<number | null>`max(${suiteChanges.version})` }).from(suiteChanges).where(eq(suiteChanges.suiteName, input.suiteName)).get();
    const version = Number(top?.v ?? 0) + 1;
    const row = tx
      .insert(suiteChanges)
      .values({ suiteName: input.suiteName, version, action: input.action, problemId: input.problemId, userId: input.user.id > 0 ? input.user.id : null, userLabel: input.user.name || input.user.email, note: (input.note ?? "").slice(0, 500) })
      .returning()
      .get();
    return { version: row.version, action: row.action, problemId: row.problemId, by: row.userLabel, at: row.createdAt.getTime(), note: row.note };
  });
}

/** The suite files of a checkout (`<root>/bench/suites/*.json`), by name. */
export function suiteFilesOf(root: string): { name: string; file: string }[] {
  const dir = path.join(root, "bench", "suites");
  try {
    return fs
      .readdirSync(dir)
      .filter((f) => f.endsWith(".json"))
      .sort()
      .map((f) => ({ name: f.slice(0, -5), file: path.join(dir, f) }));
  } catch {
    return [];
  }
}

export interface ProblemSuiteView {
  name: string;
  description: string;
  membership: Membership;
  /** Version of the suite's latest browser change (0: the file as committed). */
  version: number;
  /** The suite file did not load: why (the suite is listed, not resolved). */
  error: string | null;
}

/** Every suite of the checkout `root` and whether (and why) it runs `problemId`. */
export function suitesOfProblem(db: Db, root: string, problemId: string, library: ProblemLibrary): ProblemSuiteView[] {
  const tags = library.facts(problemId)?.tags ?? [];
  return suiteFilesOf(root).map(({ name, file }) => {
    try {
      const suite = loadSuite(file);
      const changes = listSuiteChanges(db, suite.definition.name);
      return { name: suite.definition.name, description: suite.definition.description, membership: suiteMembership(suite.definition, changes, problemId, tags), version: changes.at(-1)?.version ?? 0, error: null };
    } catch (err) {
      return { name, description: "", membership: { included: false, via: "not-selected" }, version: 0, error: (err as Error).message.split("\n")[0]!.slice(0, 300) };
    }
  });
}

/** The changes made to suites for one problem, newest first (for the problem page's history). */
export function suiteChangesOfProblem(db: Db, problemId: string): (SuiteChange & { suiteName: string })[] {
  try {
    return db
      .select()
      .from(suiteChanges)
      .where(and(eq(suiteChanges.problemId, problemId)))
      .orderBy(sql`${suiteChanges.createdAt} desc, ${suiteChanges.id} desc`)
      .limit(50)
      .all()
      .map((r) => ({ suiteName: r.suiteName, version: r.version, action: r.action, problemId: r.problemId, by: r.userLabel, at: r.createdAt.getTime(), note: r.note }));
  } catch (err) {
    if (/no such table/.test((err as Error).message)) return [];
    throw err;
  }
}
