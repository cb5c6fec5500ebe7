/**
 * Interleaved A/B jobs from the pages and, automatically, before a speed regression is reported.
 *
 * - `checkAbJob`: the field check every "ab" job passes before it is stored (POST /api/jobs, the
 *   buttons on regression, branch and commit pages): both commits in the repository, the suite in
 *   the checkout, the cases among the suite's.
 * - `alertOrConfirm`: after detection (the one call the command line makes instead of sending
 *   alerts itself). New speed regressions of a suite whose `abConfirm` threshold is on (default)
 *   get one "ab" job on their affected cases, baseline commit against flagged commit; their e-mail
 *   waits for its verdict. Every other new regression is e-mailed at once. When A/B cannot run
 *   (a commit not in the repository, an external solver, abConfirm off) the e-mail goes out now and
 *   says the slowdown is unconfirmed, and why. With `confirmNow` (the command line's `--confirm`,
 *   for CI runners) the A/B runs at once instead: a cleared slowdown is not mailed and does not
 *   count towards the exit code (`standing`).
 * - `afterAbJob`: the job worker's last step: store the verdict; a confirmed check sends the held
 *   e-mail with the evidence, a cleared one sends nothing, an unavailable one sends it marked
 *   unconfirmed.
 */
import fs from "node:fs";
import type { Db } from "~/db/client.server";
import { eq } from "drizzle-orm";
import { runs } from "~/db/schema";
import { abCheckOfJob, addJudged, closeScreening, commitOfRun, getAbCheck, insertAbCheck, affectedCases, regressionsAsFindings, settleAbCheck, standingOfCheck, undecidedOfCheck, type AbCheckView } from "~/models/ab-checks.server";
import { insertScreenedRegression, thresholdsOfRun, type Detection } from "~/models/detection.server";
import { enqueueJob, type JobSummary } from "~/models/jobs.server";
import { problemLibraryFor } from "~/models/library.server";
import { AB_CONFIRM_BLOCKS, abSaysSlower, fmtAbRatio, judgeRegression, type AbGroup, type AbJobPayload, type AbResultDoc } from "~/runs/ab-result";
import { groupKey, type SchemeSuspect } from "~/runs/pooled";
import type { Finding } from "~/runs/rules";
import { expandCases, loadSuite, suitePath } from "~/runs/suite";
import type { CommitMeta } from "~/runs/types";
import { sendRegressionAlerts, type AlertResult } from "./alerts.server";
import { repoRoot, resolveRef } from "./git.server";

export type AbJobCheck = { ok: true; payload: AbJobPayload & { cases: string[] } } | { ok: false; field: "base" | "head" | "suite" | "cases"; message: string };

/**
 * Resolves both commits to full hashes and the cases against the checkout's suite.
 *
 * `allowSameCommit` is for judging a regression whose baseline run was of the same commit (a
 * rerun: the baseline is the nearest run on the branch, the commit's own earlier run included).
 * Identical code on both sides is then an A/A comparison: two worker processes of the one commit,
 * interleaved, whose interval says how far this machine moves the case on its own. Without it a
 * rerun's speed finding could never be judged and, under `bench --confirm`, failed the build as
 * "unconfirmed" (seen 2026-12-04). A comparison asked for by hand still needs two commits.
 */
export async function checkAbJob(db: Db, payload: AbJobPayload, root = repoRoot(), opts: { allowSameCommit?: boolean } = {}): Promise<AbJobCheck> {
  const base = await resolveRef(payload.base, root);
  if (!base) return { ok: false, field: "base", message: `${payload.base} is not a commit in the repository (${root}).` };
  const head = await resolveRef(payload.head, root);
  if (!head) return { ok: false, field: "head", message: `${payload.head} is not a commit in the repository (${root}).` };
  if (base === head && !opts.allowSameCommit) return { ok: false, field: "head", message: "Base and head are the same commit: there is nothing to compare." };
  const file = suitePath(payload.suite, root);
  if (!fs.existsSync(file)) return { ok: false, field: "suite", message: `The checkout has no suite "${payload.suite}" (bench/suites/${payload.suite}.json).` };
  let keys: string[];
  try {
    const s = loadSuite(file);
    if (s.definition.solver.kind === "external") return { ok: false, field: "suite", message: `Suite "${payload.suite}" runs an external solver from its own repository; A/B compares commits of this repository.` };
    keys = expandCases(s.definition, problemLibraryFor(db, root)).map((c) => c.key);
  } catch (err) {
    return { ok: false, field: "suite", message: (err as Error).message };
  }
  const cases = payload.cases?.length ? payload.cases : keys;
  const unknown = cases.filter((k) => !keys.includes(k));
  if (unknown.length) return { ok: false, field: "cases", message: `Not cases of suite ${payload.suite}: ${unknown.slice(0, 5).join(", ")}${unknown.length > 5 ? ` and ${unknown.length - 5} more` : ""}.` };
  return { ok: true, payload: { ...payload, base, head, cases } };
}

/** Stores the job and its check together (the payload must have passed `checkAbJob`). */
export function queueAbJob(db: Db, payload: AbJobPayload & { cases: string[] }, userId: number | null, extra: { regressionIds?: number[]; runId?: string | null; auto?: boolean; alertsHeld?: boolean } = {}): { job: JobSummary; check: AbCheckView } {
  return db.transaction(() => {
    const job = enqueueJob(db, { kind: "ab", payload }, userId);
    const check = insertAbCheck(db, { jobId: job.id, suiteName: payload.suite, base: payload.base, head: payload.head, cases: payload.cases, ...extra });
    return { job, check };
  });
}

export interface AlertOrConfirmInput {
  runId: string;
  suiteName: string;
  commit: CommitMeta;
  detection: Detection;
  baseUrl?: string;
  root?: string;
  /** Send e-mail (default true); false still confirms when `confirmNow` is given. */
  alerts?: boolean;
  /**
   * Run the interleaved A/B at once (the command line's `--confirm`) instead of queuing an "ab"
   * job: the exit code and the e-mail then wait for its verdict.
   */
  confirmNow?: (payload: AbJobPayload & { cases: string[] }) => Promise<AbResultDoc>;
}

export interface AlertOrConfirmResult extends AlertResult {
  /** The first A/B job queued to confirm the speed and drift regressions (their e-mail waits for it). */
  abJobId: number | null;
  /** Every such job: one per base commit (the run's baseline; each drift's last run before its change point). */
  abJobIds: number[];
  /** Why speed or drift regressions were not put to an A/B, when there were some. */
  unconfirmed: string | null;
  /** The first A/B check run at once (the run's baseline's when there is one), settled. */
  check: AbCheckView | null;
  /** Every A/B check run at once, one per base commit. */
  checks: AbCheckView[];
  /** New regressions that stand: all of them, less the speed ones an A/B run at once cleared, plus screened ones it confirmed. */
  standing: number;
  /** Regressions found by screening (`--confirm`): schemes no rule flagged that the A/B found slower. */
  screened: { id: number; finding: Finding }[];
}

/**
 * Timing findings wait for an interleaved A/B: a speed regression (against the run's baseline) and
 * a drift regression (against its own last run before the change point). Drift was e-mailed and
 * failed `bench --confirm` at once until 2026-12-04: twelve runs of unchanged code (empty commits,
 * the e2e suite) flagged drift ×1.14–1.24 in runs 6, 7 and 8 and exited 3 each time, since PELT's σ
 * from first differences of the medians (0.013–0.04 in ln units) misses how far whole runs move.
 */
const isTimed = (f: Finding) => f.direction === "regression" && (f.kind === "speed" || f.kind === "drift");

export async function alertOrConfirm(db: Db, input: AlertOrConfirmInput): Promise<AlertOrConfirmResult> {
  const fresh = input.detection.inserted.filter((i) => i.finding.direction === "regression");
  const timed = fresh.filter((i) => isTimed(i.finding));
  const rest = fresh.filter((i) => !isTimed(i.finding));
  // Screening: with an A/B run at once, schemes that moved past the pooled floor without a finding are put to it too.
  const suspects = input.confirmNow ? (input.detection.suspects ?? []) : [];
  const mail = input.alerts !== false;
  const out: AlertOrConfirmResult = { sent: [], errors: [], abJobId: null, abJobIds: [], unconfirmed: null, check: null, checks: [], standing: fresh.length, screened: [] };
  const send = async (items: typeof fresh, note?: string) => {
    if (!items.length || !mail) return;
    const r = await sendRegressionAlerts(db, { runId: input.runId, suiteName: input.suiteName, commit: input.commit, regressions: items, baseUrl: input.baseUrl, note });
    out.sent.push(...r.sent);
    out.errors.push(...r.errors);
  };
  // One A/B sitting per base commit: the run's baseline (speed findings and screening) and each
  // drift's last run before its change point; the run's own commit is the head of all of them.
  const runBase = input.detection.baselineCommit;
  const sittings = new Map<string | null, typeof fresh>();
  if (suspects.length) sittings.set(runBase, []);
  for (const i of timed) {
    const base = i.finding.kind === "drift" && i.finding.baselineRunId ? commitOfRun(db, i.finding.baselineRunId) : runBase;
    const list = sittings.get(base);
    if (list) list.push(i);
    else sittings.set(base, [i]);
  }
  const confirmedNow: { items: typeof fresh; note: string }[] = [];
  const whyNot: string[] = [];
  const t = thresholdsOfRun(db, input.runId);
  for (const [base, items] of sittings) {
    const screen = base === runBase ? suspects : [];
    let why: string | null = null;
    if (!t.abConfirm) why = `A/B confirmation is off for suite ${input.suiteName}`;
    else if (!base) why = "there is no baseline commit";
    else if (input.commit.dirty) why = "the run measured uncommitted changes";
    else {
      const ids = items.map((s) => s.id);
      // The verdicts the A/B is for, each against its own floor: it runs more blocks while one is unclear.
      const groups: AbGroup[] = [
        ...items.map((i) => ({ cases: affectedCases(db, [i.id]), clearBelow: i.finding.scope && i.finding.scope !== "case" ? t.pooledSpeedRatio : t.speedRatio })),
        ...screen.map((x) => ({ cases: x.members.map((m) => m.caseKey), clearBelow: t.pooledSpeedRatio })),
      ].filter((g) => g.cases.length > 0);
      const cases = [...new Set(groups.flatMap((g) => g.cases))];
      const checked = await checkAbJob(db, { base, head: input.commit.commitHash, suite: input.suiteName, cases, blocks: AB_CONFIRM_BLOCKS.blocks, maxBlocks: t.confirmMaxBlocks, groups }, input.root ?? repoRoot(), { allowSameCommit: true });
      if (!checked.ok) why = checked.message;
      else if (input.confirmNow) {
        const check = insertAbCheck(db, { jobId: null, suiteName: checked.payload.suite, base: checked.payload.base, head: checked.payload.head, cases: checked.payload.cases, regressionIds: ids, runId: input.runId, auto: true, alertsHeld: mail });
        let outcome: { result: AbResultDoc } | { error: string };
        try {
          outcome = { result: await input.confirmNow(checked.payload) };
        } catch (err) {
          outcome = { error: (err as Error).message };
        }
        let settled = settleAbCheck(db, check.id, outcome);
        // Screened schemes the A/B found slower become group regressions of the run, judged in the same check.
        if ("result" in outcome && screen.length) {
          const found = screenSuspects(db, check.id, input, screen, outcome.result);
          out.screened = found;
          if (found.length) settled = getAbCheck(db, check.id);
          else if (!ids.length) settled = closeScreening(db, check.id, screen.length);
          out.standing += found.length;
          items.push(...found);
        }
        if (settled) out.checks.push(settled);
        const stand = settled ? standingOfCheck(settled) : ids;
        out.standing -= ids.length - stand.filter((id) => ids.includes(id)).length;
        // Undecided ones do not fail the run but are still e-mailed, marked unconfirmed.
        const mailed = settled ? [...stand, ...undecidedOfCheck(settled)] : ids;
        if (mailed.length && settled) confirmedNow.push({ items: items.filter((i) => mailed.includes(i.id)), note: heldNote(settled) });
      } else if (mail && ids.length) {
        const own = groups.slice(0, items.length);
        const { job } = queueAbJob(db, { ...checked.payload, cases: [...new Set(own.flatMap((g) => g.cases))], groups: own }, null, { regressionIds: ids, runId: input.runId, auto: true, alertsHeld: true });
        out.abJobIds.push(job.id);
      }
    }
    if (why && items.length) {
      whyNot.push(why);
      rest.push(...items);
    }
  }
  out.check = out.checks[0] ?? null;
  out.abJobId = out.abJobIds[0] ?? null;
  out.unconfirmed = whyNot.length ? [...new Set(whyNot)].join("; ") : null;
  // Sorted as found: the e-mail lists groups first by itself.
  rest.sort((a, b) => a.id - b.id);
  await send(rest, out.unconfirmed ? `Speed findings are unconfirmed: interleaved A/B could not run (${out.unconfirmed}).` : undefined);
  for (const c of confirmedNow) await send(c.items, c.note);
  return out;
}

/**
 * The suspects whose members the A/B judged slower against the pooled floor: each stored as a
 * group regression of the run (`insertScreenedRegression`) and added to the check with its verdict.
 */
function screenSuspects(db: Db, checkId: number, input: AlertOrConfirmInput, suspects: SchemeSuspect[], result: AbResultDoc): { id: number; finding: Finding }[] {
  const t = thresholdsOfRun(db, input.runId);
  const out: { id: number; finding: Finding }[] = [];
  for (const x of suspects) {
    const keys = x.members.map((m) => m.caseKey);
    const j = judgeRegression(result, 0, keys, t.pooledSpeedRatio);
    if (j.verdict !== "slower" || j.ratio === null || j.low === null || j.high === null) continue;
    const note = `confirmed by interleaved A/B (run at once by the command line): ${input.commit.commitHash.slice(0, 10)} against ${input.detection.baselineCommit!.slice(0, 10)}, its ${keys.length} cases pooled: ${fmtAbRatio(j.ratio, j.low, j.high)} (${result.blocks} blocks).`;
    const id = insertScreenedRegression(db, { runId: input.runId, baselineRunId: input.detection.baselineRunId, commitHash: input.commit.commitHash }, x, { ratio: j.ratio, low: j.low, high: j.high, note });
    addJudged(db, checkId, { ...j, regressionId: id }, `scheme ${x.scheme}`);
    out.push({
      id,
      finding: { caseKey: groupKey("scheme", x.scheme), problemId: x.members[0]!.problemId, kind: "speed", direction: "regression", metric: "pooled_median_ratio", before: null, after: null, ratio: j.ratio, pValue: null, ciLow: j.low, ciHigh: j.high, detail: `${x.scheme}, all ${keys.length} cases: found by screening, ${note}`, scope: "scheme", members: x.members.map((m) => ({ caseKey: m.caseKey, problemId: m.problemId, ratio: m.ratio })) },
    });
  }
  return out;
}

/** The job worker's last step for an "ab" job: the verdict, then the e-mail it held back. */
export async function afterAbJob(db: Db, jobId: number, outcome: { result: AbResultDoc } | { error: string }, baseUrl?: string): Promise<AbCheckView | null> {
  const c = abCheckOfJob(db, jobId);
  if (!c) return null;
  const settled = settleAbCheck(db, c.id, outcome);
  if (!settled || !settled.alertsHeld || settled.state === "cleared" || settled.state === "awaiting") return settled;
  const full = getAbCheck(db, c.id);
  if (!full?.runId) return settled;
  // Only the regressions the verdict leaves standing or undecided (a cleared one is not mailed).
  const items = regressionsAsFindings(db, [...standingOfCheck(settled), ...undecidedOfCheck(settled)]);
  const commit = commitMetaOfRun(db, full.runId);
  if (!items.length || !commit) return settled;
  await sendRegressionAlerts(db, { runId: full.runId, suiteName: settled.suiteName, commit, regressions: items, baseUrl, note: heldNote(settled) });
  return settled;
}

/** The line a held e-mail carries: the A/B evidence, per regression where the check judged each. */
function heldNote(c: AbCheckView): string {
  const judged = c.result?.judged ?? [];
  const list = (v: string) => judged.filter((j) => j.verdict === v).map((j) => `${j.cases.length > 1 ? `${j.cases.length} cases pooled` : j.cases[0]} ${fmtAbRatio(j.ratio, j.low, j.high)}`);
  const undecided = list("unclear");
  const also = undecided.length ? ` Not decided (interval too wide to confirm or clear; unconfirmed): ${undecided.join("; ")}.` : "";
  if (c.state !== "confirmed") return `Speed findings are unconfirmed: ${c.note ?? "interleaved A/B could not decide"}`.replace(/\.?$/, ".");
  const slower = list("slower");
  if (slower.length) return `Confirmed by interleaved A/B: the flagged commit against its baseline, run alternately in one sitting: ${slower.join("; ")}.${also}`;
  const s = c.result ? abSaysSlower(c.result) : null;
  return `Confirmed by interleaved A/B: the flagged commit against its baseline, run alternately in one sitting: ${fmtAbRatio(s?.ratio ?? null, s?.low ?? null, s?.high ?? null)}.`;
}

export function commitMetaOfRun(db: Db, runId: string): CommitMeta | null {
  const r = db.select({ commitHash: runs.commitHash, branch: runs.branch, subject: runs.commitSubject, author: runs.commitAuthor, date: runs.commitDate, dirty: runs.dirty }).from(runs).where(eq(runs.id, runId)).get();
  return r ?? null;
}
