/**
 * Interleaved A/B checks (table ab_checks): one row per "ab" job, with the regressions it judges
 * and, once the job ends, its verdict. Queries and writes only; queuing and alerting live in
 * app/services/ab-confirm.server.ts.
 */
import { desc, eq, inArray, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { abChecks, regressionEvents, regressionMembers, regressions, runs, suites, type AbCheckState } from "~/db/schema";
import type { Thresholds } from "~/runs/types";
import { effectiveThresholds } from "./settings.server";
import { abSaysSlower, fmtAbRatio, judgeRegression, type AbJudged, type AbResultDoc } from "~/runs/ab-result";
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
  const base = r.baselineRunId ? commitOfRun(db, r.baselineRunId) : null;
  return { base, head: r.head, suiteName: r.suiteName };
}

/** The commit a run measured, or null when there is no such run. */
export function commitOfRun(db: Db, runId: string): string | null {
  return db.select({ c: runs.commitHash }).from(runs).where(eq(runs.id, runId)).get()?.c ?? null;
}

/**
 * The slowdown an A/B must exclude to clear a finding: the suite's per-case speed floor for a case
 * regression, its pooled floor for a group (a group is flagged from that size on).
 */
function clearBelowOf(db: Db, c: { suiteName: string; runId: string | null }): { case: number; group: number } {
  const fromRun = c.runId ? db.select({ t: suites.thresholdsJson }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(eq(runs.id, c.runId)).get() : undefined;
  const fromSuite = fromRun ?? db.select({ t: suites.thresholdsJson }).from(suites).where(eq(suites.name, c.suiteName)).orderBy(desc(suites.id)).limit(1).get();
  const t = effectiveThresholds(db, c.suiteName, (fromSuite?.t ?? {}) as Partial<Thresholds>);
  return { case: t.speedRatio, group: t.pooledSpeedRatio };
}

/** A check that only screened schemes and found none slower: "cleared", whatever the pooled verdict of all its cases. */
export function closeScreening(db: Db, id: number, schemes: number): AbCheckView | null {
  const c = getAbCheck(db, id);
  if (!c || c.state === "unavailable") return c;
  db.update(abChecks)
    .set({ state: "cleared", note: `Screening: interleaved A/B found none of the ${schemes} scheme(s) that moved slower against the suite's pooled floor. ${c.note ?? ""}`.trim() })
    .where(eq(abChecks.id, id))
    .run();
  return getAbCheck(db, id);
}

/**
 * Adds a regression found by screening to a settled check with its verdict (slower): the check
 * then judges it like the others, and is "confirmed".
 */
export function addJudged(db: Db, id: number, j: AbJudged, what: string): void {
  const c = getAbCheck(db, id);
  if (!c || !c.result) return;
  const result = { ...c.result, judged: [...(c.result.judged ?? []), j] };
  // The check's note says what made it confirmed, before what it said of the findings.
  const note = `Screening: ${what} confirmed slower, its ${j.cases.length} cases pooled: ${fmtAbRatio(j.ratio, j.low, j.high)}. ${c.note ?? ""}`.trim();
  db.update(abChecks)
    .set({ regressionIds: [...c.regressionIds, j.regressionId], resultJson: result, state: j.verdict === "slower" ? "confirmed" : c.state, note })
    .where(eq(abChecks.id, id))
    .run();
}

const VERDICT_WORD = { slower: "Confirmed", faster: "Cleared", same: "Cleared", unclear: "Not decided" } as const;

/**
 * Stores the verdict of a finished check (or why there is none) and writes it into the history
 * of each regression it judges. Each regression is judged on its own cases (a group's members
 * pooled; app/runs/ab-result.ts `judgeRegression`) against the suite's speed floor, stored in the
 * result as `judged`. "confirmed": at least one judged regression is slower (a check without
 * regressions: the comparison says slower); "cleared": every judged one is the same or faster,
 * its interval excluding a slowdown of the floor's size; "unavailable" (could not decide): the job
 * failed, was cancelled or timed nothing, or no regression was confirmed and some interval was too
 * wide to clear it.
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
    const floors = clearBelowOf(db, c);
    const scopes = new Map(c.regressionIds.length ? db.select({ id: regressions.id, scope: regressions.scope }).from(regressions).where(inArray(regressions.id, c.regressionIds)).all().map((r) => [r.id, r.scope] as const) : []);
    const floorOf = (rid: number) => (scopes.get(rid) && scopes.get(rid) !== "case" ? floors.group : floors.case);
    const judged = c.regressionIds.map((rid) => judgeRegression(outcome.result, rid, affectedCases(db, [rid]), floorOf(rid)));
    result = { ...outcome.result, judged };
    const floor = floors.case;
    const s = abSaysSlower(outcome.result, floor);
    const timed = judged.filter((j) => j.verdict !== null);
    if (c.regressionIds.length ? timed.length === 0 : !s) {
      state = "unavailable";
      note = "Interleaved A/B timed no case (every trial failed).";
    } else {
      const verdicts = c.regressionIds.length ? timed.map((j) => j.verdict!) : [s!.slower ? "slower" : s!.unclear ? "unclear" : "same"];
      state = verdicts.includes("slower") ? "confirmed" : verdicts.includes("unclear") ? "unavailable" : "cleared";
      const head =
        c.head === c.base
          ? `interleaved A/A (${byWhom(c.jobId)}): ${c.head.slice(0, 10)} against itself, the baseline being a run of the same commit`
          : `interleaved A/B (${byWhom(c.jobId)}): ${c.head.slice(0, 10)} against ${c.base.slice(0, 10)}`;
      const scope = outcome.result.pooled ? `all ${outcome.result.pooled.cases} cases pooled` : outcome.result.cases[0]?.key ?? "";
      const tail = (ratio: number | null, low: number | null, high: number | null, v: string, f = floor) =>
        `${fmtAbRatio(ratio, low, high)} (${outcome.result.blocks} blocks)${v === "unclear" ? `: the interval neither lies above 1 nor excludes the suite's ×${f} speed floor; the finding stays open` : ""}.`;
      const word = state === "confirmed" ? "Confirmed" : state === "cleared" ? "Cleared" : "Not decided";
      // The check's line quotes the judged regression that decided its state (all cases pooled only without regressions).
      const decisive = judged.find((j) => j.verdict === (state === "confirmed" ? "slower" : "unclear"));
      note = decisive
        ? `${word} by ${head}, ${decisive.cases.length > 1 ? `${decisive.cases.length} cases pooled` : decisive.cases[0]}: ${tail(decisive.ratio, decisive.low, decisive.high, decisive.verdict!, floorOf(decisive.regressionId))}`
        : `${word} by ${head}, ${scope}: ${tail(s?.ratio ?? null, s?.low ?? null, s?.high ?? null, state === "unavailable" ? "unclear" : "")}`;
      for (const j of judged) {
        const what = j.cases.length > 1 ? `its ${j.cases.length} cases pooled` : (j.cases[0] ?? "no case timed");
        perRegression.set(j.regressionId, j.verdict === null ? `Interleaved A/B timed none of its cases (${byWhom(c.jobId)}).` : `${VERDICT_WORD[j.verdict]} by ${head}, ${what}: ${tail(j.ratio, j.low, j.high, j.verdict, floorOf(j.regressionId))}`);
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

/**
 * The regressions of a settled check that stand (count in the command line's exit code): judged
 * slower, or not judged at all (the A/B failed: unconfirmed). One the A/B could not decide on
 * (`undecidedOfCheck`) stays open and is e-mailed as unconfirmed, but does not fail the run: a
 * sequential flag that an interleaved comparison of the same commits cannot confirm is weak
 * evidence on a shared machine.
 */
export function standingOfCheck(c: AbCheckView): number[] {
  if (c.state === "awaiting") return c.regressionIds;
  const judged = c.result?.judged;
  if (!judged) return c.state === "cleared" ? [] : c.regressionIds;
  return c.regressionIds.filter((rid) => {
    const j = judged.find((x) => x.regressionId === rid);
    return !j || j.verdict === null || j.verdict === "slower";
  });
}

/** The regressions of a settled check whose A/B interval was too wide to confirm or clear them. */
export function undecidedOfCheck(c: AbCheckView): number[] {
  const judged = c.result?.judged ?? [];
  return c.regressionIds.filter((rid) => judged.find((x) => x.regressionId === rid)?.verdict === "unclear");
}

/** The verdict on one regression of a check: its own judged shift, else the check's. */
export function abOfRegression(c: { state: AbCheckState; result: AbResultDoc | null }, rid: number): { state: AbCheckState; ratio: number | null; low: number | null; high: number | null } {
  const j = c.result?.judged?.find((x) => x.regressionId === rid);
  if (j) return { state: j.verdict === null || j.verdict === "unclear" ? "unavailable" : j.verdict === "slower" ? "confirmed" : "cleared", ratio: j.ratio, low: j.low, high: j.high };
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

/** The A/B verdict on one regression, as lists and detection read it. */
export type RegressionAb = ReturnType<typeof abOfRegression>;

/** The latest A/B check of each regression among `ids` (one query over ab_checks' id lists). */
export function latestAbOf(db: Db, ids: readonly number[]): Map<number, RegressionAb> {
  const out = new Map<number, RegressionAb>();
  if (!ids.length) return out;
  const rows = db.all<{ rid: number; state: AbCheckState; result: string | null }>(
    sql`select json_each.value as rid, ${abChecks.state} as state, ${abChecks.resultJson} as result from ${abChecks}, json_each(${abChecks.regressionIds})
        where json_each.value in (${sql.join(ids.map((i) => sql`${i}`), sql`, `)}) order by ${abChecks.id} desc`,
  );
  for (const row of rows) {
    if (out.has(row.rid)) continue;
    out.set(row.rid, abOfRegression({ state: row.state, result: row.result ? (JSON.parse(row.result) as AbResultDoc) : null }, row.rid));
  }
  return out;
}

/**
 * The automatic A/B confirmation of a run's speed and drift regressions (the checks queued by its
 * detection, one per base commit, read as one), as `bench --upload --confirm` polls it through
 * GET /api/runs/:id: its state and which of its regressions stand (count), were cleared, or could
 * not be decided.
 */
export function confirmationOfRun(db: Db, runId: string): { state: AbCheckState; jobId: number | null; note: string | null; regressionIds: number[]; standing: number[]; undecided: number[] } | null {
  // A run has one automatic check per base commit (its baseline; each drift's run before its change
  // point): awaiting while any is, else confirmed if any is, else not decided if any is, else cleared.
  const rows = db.select().from(abChecks).where(sql`${abChecks.runId} = ${runId} and ${abChecks.auto} = 1`).orderBy(abChecks.id).all();
  if (!rows.length) return null;
  const cs = rows.map(view);
  const order: AbCheckState[] = ["awaiting", "confirmed", "unavailable", "cleared"];
  const state = order.find((s) => cs.some((c) => c.state === s)) ?? cs[cs.length - 1]!.state;
  const lead = cs.find((c) => c.state === state)!;
  return {
    state,
    jobId: lead.jobId,
    note: cs.length === 1 ? lead.note : cs.map((c) => c.note).filter(Boolean).join(" ") || null,
    regressionIds: cs.flatMap((c) => c.regressionIds),
    standing: cs.flatMap((c) => standingOfCheck(c)),
    undecided: cs.flatMap((c) => (c.state === "awaiting" ? [] : undecidedOfCheck(c))),
  };
}
