/**
 * Shard plans (app/runs/shards.ts) made from this database's history and frozen: the first plan
 * made for a (suite content hash, case set, machine class, shard count) is stored in
 * shard_plans and returned from then on, so a case keeps its shard while the suite does not
 * change however the history grows.
 */
import { and, desc, eq, inArray, isNull, or } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, runs, shardPlans } from "~/db/schema";
import { caseSetHash, planShards, type PlanCase, type ShardPlan } from "~/runs/shards";

/**
 * Expected seconds of each case from its latest complete, non-demo run on `machineClass` (a
 * runner's label, or the machine key when it set none): (warm-up + timed repeats) × the median
 * solve time, the part of a case that grows with the problem.
 */
export function caseHistorySeconds(db: Db, machineClass: string, keys: string[], solvesPerCase: number): Map<string, number> {
  const out = new Map<string, number>();
  if (keys.length === 0) return out;
  const rows = db
    .select({ key: caseResults.caseKey, median: caseResults.medianSeconds })
    .from(caseResults)
    .innerJoin(runs, eq(runs.id, caseResults.runId))
    .where(
      and(
        inArray(caseResults.caseKey, keys),
        eq(runs.status, "complete"),
        eq(runs.isDemo, false),
        or(eq(runs.machineClass, machineClass), and(isNull(runs.machineClass), eq(runs.machineKey, machineClass))),
      ),
    )
    .orderBy(desc(runs.startedAt))
    .all();
  for (const r of rows) {
    if (out.has(r.key) || r.median === null || !(r.median > 0)) continue;
    out.set(r.key, r.median * Math.max(1, solvesPerCase));
  }
  return out;
}

export interface ShardPlanRequest {
  suiteContentHash: string;
  cases: PlanCase[];
  machineClass: string;
  count: number;
  /** Warm-up plus timed repeats of the suite. */
  solvesPerCase: number;
}

/** The frozen plan for this suite version and class, made now from history when there is none. */
export function shardPlanFor(db: Db, req: ShardPlanRequest): ShardPlan & { frozenAt: Date; reused: boolean } {
  const setHash = caseSetHash(req.cases.map((c) => c.key));
  const where = and(
    eq(shardPlans.suiteContentHash, req.suiteContentHash),
    eq(shardPlans.caseSetHash, setHash),
    eq(shardPlans.machineClass, req.machineClass),
    eq(shardPlans.shardCount, req.count),
  );
  const existing = db.select().from(shardPlans).where(where).get();
  if (existing) return { ...(existing.planJson as ShardPlan), frozenAt: existing.createdAt, reused: true };
  const history = caseHistorySeconds(db, req.machineClass, req.cases.map((c) => c.key), req.solvesPerCase);
  const plan = planShards(req.cases, req.count, history);
  db.insert(shardPlans)
    .values({ suiteContentHash: req.suiteContentHash, caseSetHash: setHash, machineClass: req.machineClass, shardCount: req.count, planJson: plan })
    .onConflictDoNothing()
    .run();
  const stored = db.select().from(shardPlans).where(where).get()!;
  return { ...(stored.planJson as ShardPlan), frozenAt: stored.createdAt, reused: false };
}
