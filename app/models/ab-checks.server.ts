/**
 * Interleaved A/B checks (table ab_checks): one row per "ab" job, with the regressions it judges
 * and, once the job ends, its verdict. Queries and writes only; queuing and alerting live in
 * app/services/ab-confirm.server.ts.
 */
import { desc, eq, inArray, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { abChecks, regressionEvents, regressionMembers, regressions, runs, type AbCheckState } from "~/db/schema";
import { abSaysSlower, fmtAbRatio, judgeRegression, type AbResultDoc } from "~/runs/ab-result";
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

const byWhom = (jobId: number | null) => (jobId === null ? "run at once by the command line" : `job ${jobId}`);

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
  /** The "ab" job that runs it; null when the command line runs it at once (`bench --confirm`). */
  jobId: number | null;
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
      .values({ regressionId: id, userId: null, fromStatus: null, toStatus: null, note: `${c.auto ? "Awaiting" : "Queued"} interleaved A/B (${byWhom(c.jobId)}): ${c.head.slice(0, 10)} against ${c.base.slice(0, 10)} on ${c.cases.length} case(s)${c.alertsHeld ? "; its e-mail waits for the verdict" : ""}.` })
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

/** Every check that judges regression `id`, newest first, each with its verdict on that regression. */
export function abChecksOfRegression(db: Db, id: number): AbCheckView[] {
  return db
    .select()
    .from(abChecks)
    .where(sql`exists (select 1 from json_each(${abChecks.regressionIds}) where json_each.value = ${id})`)
    .orderBy(desc(abChecks.id))
    .all()
    .map(view)
    .map((c) => ({ ...c, state: abOfRegression(c, id).state }));
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
 * of each regression it judges. Each regression is judged on its own cases (a group's members
 * pooled; app/runs/ab-result.ts `judgeRegression`), stored in the result as `judged`.
 * "confirmed": at least one judged regression is slower (a check without regressions: the
 * comparison says slower); "cleared": none is; "unavailable": the job failed, was cancelled or
 * timed nothing.
 */
export function settleAbCheck(db: Db, id: number, outcome: { result: AbResultDoc } | { error: string }): AbCheckView | null {
  const c = getAbCheck(db, id);
  if (!c || c.state !== "awaiting") return c;
  let state: AbCheckState;
  let note: string;
  const perRegression = new Map<number, string>();
  let result: AbResultDoc | null = null;
  if ("error" in outcome) {
    state = "unavailable";
    note = `Interleaved A/B could not decide: ${outcome.error}`;
  } else {
    const judged = c.regressionIds.map((rid) => judgeRegression(outcome.result, rid, affectedCases(db, [rid])));
    result = { ...outcome.result, judged };
    const s = abSaysSlower(outcome.result);
    const timed = judged.filter((j) => j.verdict !== null);
    if (c.regressionIds.length ? timed.length === 0 : !s) {
      state = "unavailable";
      note = "Interleaved A/B timed no case (every trial failed).";
    } else {
      state = c.regressionIds.length ? (timed.some((j) => j.verdict === "slower") ? "confirmed" : "cleared") : s!.slower ? "confirmed" : "cleared";
      const head = `interleaved A/B (${byWhom(c.jobId)}): ${c.head.slice(0, 10)} against ${c.base.slice(0, 10)}`;
      const scope = outcome.result.pooled ? `all ${outcome.result.pooled.cases} cases pooled` : outcome.result.cases[0]?.key ?? "";
      note = `${state === "confirmed" ? "Confirmed" : "Cleared"} by ${head}, ${scope}: ${fmtAbRatio(s?.ratio ?? null, s?.low ?? null, s?.high ?? null)} (${outcome.result.blocks} blocks).`;
      for (const j of judged) {
        const what = j.cases.length > 1 ? `its ${j.cases.length} cases pooled` : (j.cases[0] ?? "no case timed");
        perRegression.set(j.regressionId, j.verdict === null ? `Interleaved A/B timed none of its cases (${byWhom(c.jobId)}).` : `${j.verdict === "slower" ? "Confirmed" : "Cleared"} by ${head}, ${what}: ${fmtAbRatio(j.ratio, j.low, j.high)} (${outcome.result.blocks} blocks).`);
      }
    }
  }
  db.transaction((tx) => {
    tx.update(abChecks)
      .set({ state, note, finishedAt: new Date(), resultJson: result })
      .where(eq(abChecks.id, id))
      .run();
    for (const rid of c.regressionIds) tx.insert(regressionEvents).values({ regressionId: rid, userId: null, fromStatus: null, toStatus: null, note: perRegression.get(rid) ?? note }).run();
  });
  return getAbCheck(db, id);
}

/** The regressions of a settled check that stand: judged slower, or not judged (unconfirmed). */
export function standingOfCheck(c: AbCheckView): number[] {
  if (c.state === "awaiting") return c.regressionIds;
  const judged = c.result?.judged;
  if (!judged) return c.state === "cleared" ? [] : c.regressionIds;
  return c.regressionIds.filter((rid) => {
    const j = judged.find((x) => x.regressionId === rid);
    return !j || j.verdict === null || j.verdict === "slower";
  });
}

/** The verdict on one regression of a check: its own judged shift, else the check's. */
export function abOfRegression(c: { state: AbCheckState; result: AbResultDoc | null }, rid: number): { state: AbCheckState; ratio: number | null; low: number | null; high: number | null } {
  const j = c.result?.judged?.find((x) => x.regressionId === rid);
  if (j) return { state: j.verdict === null ? "unavailable" : j.verdict === "slower" ? "confirmed" : "cleared", ratio: j.ratio, low: j.low, high: j.high };
  const s = c.result ? abSaysSlower(c.result) : null;
  return { state: c.state, ratio: s?.ratio ?? null, low: s?.low ?? null, high: s?.high ?? null };
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
