/**
 * Interleaved A/B checks (table ab_checks): one row per "ab" job, with the regressions it judges
 * and, once the job ends, its verdict. Queries and writes only; queuing and alerting live in
 * app/services/ab-confirm.server.ts.
 */
import { desc, eq, inArray, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { abChecks, regressionEvents, regressionMembers, regressions, runs, type AbCheckState } from "~/db/schema";
import { abSaysSlower, fmtAbRatio, type AbResultDoc } from "~/runs/ab-result";
import type { Finding } from "~/runs/rules";

export interface AbCheckView {
  id: number;
  jobId: number | null;
  suiteName: string;
  base: string;
  head: string;
  cases: string[];
  regressionIds: number[];
  auto: boolean;
  alertsHeld: boolean;
  state: AbCheckState;
  result: AbResultDoc | null;
  note: string | null;
  createdAt: number;
  finishedAt: number | null;
}

type Row = typeof abChecks.$inferSelect;

const view = (r: Row): AbCheckView => ({
  id: r.id,
  jobId: r.jobId,
  suiteName: r.suiteName,
  base: r.baseCommit,
  head: r.headCommit,
  cases: r.casesJson,
  regressionIds: r.regressionIds,
  auto: r.auto,
  alertsHeld: r.alertsHeld,
  state: r.state,
  result: (r.resultJson ?? null) as AbResultDoc | null,
  note: r.note,
  createdAt: r.createdAt.getTime(),
  finishedAt: r.finishedAt?.getTime() ?? null,
});

export interface NewAbCheck {
  jobId: number;
  suiteName: string;
  base: string;
  head: string;
  cases: string[];
  regressionIds?: number[];
  runId?: string | null;
  auto?: boolean;
  alertsHeld?: boolean;
}

export function insertAbCheck(db: Db, c: NewAbCheck): AbCheckView {
  const row = db
    .insert(abChecks)
    .values({ jobId: c.jobId, suiteName: c.suiteName, baseCommit: c.base, headCommit: c.head, casesJson: c.cases, regressionIds: c.regressionIds ?? [], runId: c.runId ?? null, auto: !!c.auto, alertsHeld: !!c.alertsHeld })
    .returning()
    .get();
  for (const id of c.regressionIds ?? []) {
    db.insert(regressionEvents)
      .values({ regressionId: id, userId: null, fromStatus: null, toStatus: null, note: `${c.auto ? "Awaiting" : "Queued"} interleaved A/B (job ${c.jobId}): ${c.head.slice(0, 10)} against ${c.base.slice(0, 10)} on ${c.cases.length} case(s)${c.alertsHeld ? "; its e-mail waits for the verdict" : ""}.` })
      .run();
  }
  return view(row);
}

export function abCheckOfJob(db: Db, jobId: number): AbCheckView | null {
  const r = db.select().from(abChecks).where(eq(abChecks.jobId, jobId)).get();
  return r ? view(r) : null;
}

export function getAbCheck(db: Db, id: number): (AbCheckView & { runId: string | null }) | null {
  const r = db.select().from(abChecks).where(eq(abChecks.id, id)).get();
  return r ? { ...view(r), runId: r.runId } : null;
}

/** Every check that judges regression `id`, newest first. */
export function abChecksOfRegression(db: Db, id: number): AbCheckView[] {
  return db
    .select()
    .from(abChecks)
    .where(sql`exists (select 1 from json_each(${abChecks.regressionIds}) where json_each.value = ${id})`)
    .orderBy(desc(abChecks.id))
    .all()
    .map(view);
}

/** Checks whose head (or base) is `commit` (full hash), newest first. */
export function abChecksOfCommit(db: Db, commit: string): AbCheckView[] {
  return db
    .select()
    .from(abChecks)
    .where(sql`${abChecks.headCommit} = ${commit} or ${abChecks.baseCommit} = ${commit}`)
    .orderBy(desc(abChecks.id))
    .limit(20)
    .all()
    .map(view);
}

/**
 * The cases a set of regressions concerns: a group regression's member cases, a case
 * regression's own key, in first-seen order without repeats.
 */
export function affectedCases(db: Db, regressionIds: number[]): string[] {
  if (!regressionIds.length) return [];
  const rows = db.select({ id: regressions.id, caseKey: regressions.caseKey, scope: regressions.scope }).from(regressions).where(inArray(regressions.id, regressionIds)).all();
  const members = db.select({ regressionId: regressionMembers.regressionId, caseKey: regressionMembers.caseKey }).from(regressionMembers).where(inArray(regressionMembers.regressionId, regressionIds)).all();
  const out: string[] = [];
  for (const id of regressionIds) {
    const r = rows.find((x) => x.id === id);
    if (!r) continue;
    const keys = r.scope === "case" ? [r.caseKey] : members.filter((m) => m.regressionId === id).map((m) => m.caseKey);
    for (const k of keys) if (!out.includes(k)) out.push(k);
  }
  return out;
}

/** Baseline and flagged commits of a regression (null when its baseline run is gone). */
export function commitsOfRegression(db: Db, id: number): { base: string | null; head: string; suiteName: string } | null {
  const r = db
    .select({ head: runs.commitHash, baselineRunId: regressions.baselineRunId, suiteName: sql<string>`(select name from suites where suites.id = ${runs.suiteId})` })
    .from(regressions)
    .innerJoin(runs, eq(runs.id, regressions.runId))
    .where(eq(regressions.id, id))
    .get();
  if (!r) return null;
  const base = r.baselineRunId ? (db.select({ c: runs.commitHash }).from(runs).where(eq(runs.id, r.baselineRunId)).get()?.c ?? null) : null;
  return { base, head: r.head, suiteName: r.suiteName };
}

/**
 * Stores the verdict of a finished check (or why there is none) and writes it into the history
 * of each regression it judges. "confirmed": the comparison says slower; "cleared": it does not;
 * "unavailable": the job failed, was cancelled or timed nothing.
 */
export function settleAbCheck(db: Db, id: number, outcome: { result: AbResultDoc } | { error: string }): AbCheckView | null {
  const c = getAbCheck(db, id);
  if (!c || c.state !== "awaiting") return c;
  let state: AbCheckState;
  let note: string;
  if ("error" in outcome) {
    state = "unavailable";
    note = `Interleaved A/B could not decide: ${outcome.error}`;
  } else {
    const s = abSaysSlower(outcome.result);
    if (!s) {
      state = "unavailable";
      note = "Interleaved A/B timed no case (every trial failed).";
    } else {
      state = s.slower ? "confirmed" : "cleared";
      const scope = outcome.result.pooled ? `all ${outcome.result.pooled.cases} cases pooled` : outcome.result.cases[0]?.key ?? "";
      note = `${state === "confirmed" ? "Confirmed" : "Cleared"} by interleaved A/B (job ${c.jobId}): ${c.head.slice(0, 10)} against ${c.base.slice(0, 10)}, ${scope}: ${fmtAbRatio(s.ratio, s.low, s.high)} (${outcome.result.blocks} blocks).`;
    }
  }
  db.transaction((tx) => {
    tx.update(abChecks)
      .set({ state, note, finishedAt: new Date(), resultJson: "result" in outcome ? outcome.result : null })
      .where(eq(abChecks.id, id))
      .run();
    for (const rid of c.regressionIds) tx.insert(regressionEvents).values({ regressionId: rid, userId: null, fromStatus: null, toStatus: null, note }).run();
  });
  return getAbCheck(db, id);
}

/** Stored regressions as findings again (for an e-mail held until an A/B verdict). */
export function regressionsAsFindings(db: Db, ids: number[]): { id: number; finding: Finding }[] {
  if (!ids.length) return [];
  const rows = db.select().from(regressions).where(inArray(regressions.id, ids)).all();
  const members = db.select().from(regressionMembers).where(inArray(regressionMembers.regressionId, ids)).all();
  return rows.map((r) => {
    const first = db.select({ note: regressionEvents.note }).from(regressionEvents).where(eq(regressionEvents.regressionId, r.id)).orderBy(regressionEvents.id).limit(1).get();
    const note = first?.note ?? "";
    const detail = note.includes(": ") ? note.slice(note.indexOf(": ") + 2) : note;
    const mine = members.filter((m) => m.regressionId === r.id).map((m) => ({ caseKey: m.caseKey, problemId: m.problemId, ratio: m.ratio }));
    const finding: Finding = {
      caseKey: r.caseKey,
      problemId: mine[0]?.problemId ?? r.caseKey.split("/")[0]!,
      kind: r.kind,
      direction: r.direction,
      metric: r.metric,
      before: r.before,
      after: r.after,
      ratio: r.ratio,
      pValue: r.pValue,
      ciLow: r.ciLow,
      ciHigh: r.ciHigh,
      detail,
      scope: r.scope,
      ...(mine.length ? { members: mine } : {}),
    };
    return { id: r.id, finding };
  });
}
