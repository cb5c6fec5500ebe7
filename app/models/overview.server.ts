/** Counts shown on the overview page. */
import { count, desc, eq } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { regressions, runs, suites } from "~/db/schema";
import { libraryProblemCount } from "./problems.server";

export interface OverviewCounts {
  runs: number;
  demoRuns: number;
  problems: number;
  openRegressions: number;
  latestRun: { id: string; suite: string; commitHash: string; status: string; startedAt: Date; isDemo: boolean } | null;
}

export function overviewCounts(db: Db): OverviewCounts {
  const runCount = db.select({ n: count() }).from(runs).get()?.n ?? 0;
  const demoRuns = db.select({ n: count() }).from(runs).where(eq(runs.isDemo, true)).get()?.n ?? 0;
  // The library (problem folders), not the problems table, which only holds problems already run.
  const problemCount = libraryProblemCount();
  const open = db.select({ n: count() }).from(regressions).where(eq(regressions.status, "open")).get()?.n ?? 0;
  const latest = db
    .select({
      id: runs.id,
      suite: suites.name,
      commitHash: runs.commitHash,
      status: runs.status,
      startedAt: runs.startedAt,
      isDemo: runs.isDemo,
    })
    .from(runs)
    .innerJoin(suites, eq(runs.suiteId, suites.id))
    .orderBy(desc(runs.startedAt))
    .limit(1)
    .get();
  return { runs: runCount, demoRuns, problems: problemCount, openRegressions: open, latestRun: latest ?? null };
}
