/**
 * Regression detection: one run against a baseline run, plus change points along a case's history.
 *
 * Rules (thresholds from the suite, bench/runner/types.ts `Thresholds`):
 *  accuracy    both solved; an error metric e (objective_error_rel, final_time_error, state_error,
 *              control_error) with e_now > accuracyFactor · e_base and e_now > accuracyFloor.
 *              Improvement: e_base > accuracyFactor · e_now and e_base > accuracyFloor.
 *  robustness  solved before and not now (metric "status"); iterations up by more than
 *              iterationShare and by at least iterationMin (metric "iterations"). Reverse = improvement.
 *  speed       both solved with ≥ 3 samples each; r = median(x/c) / median(y), x the current
 *              samples, y the baseline's, c = calibration_now / calibration_base from the
 *              case-level calibrations measured beside each case (run-level ones when missing;
 *              1 when calibration is off); flagged when r > speedRatio AND (one-sided Mann–Whitney
 *              p < alpha on x/c vs y OR the bootstrap interval of r lies above 1).
 *              Improvement: r < 1/speedRatio with the mirrored evidence.
 *  structure   the arc signature changed (reports carrying `arcs.signature`); an improvement when
 *              the new one equals the problem's reference arcs and the old one did not.
 *  drift       PELT (app/engine/stats/change-point.ts) on ln(median / calibration) over the case's
 *              history on the same branch and machine; flagged when the latest segment starts
 *              within the history, contains the current run, shifted by ≥ driftMinShift, and no
 *              drift row already exists for a run of that segment.
 *
 * A finding is "new" unless a row with the same case, kind, metric and direction already exists
 * for a run of the same commit (reruns of one commit do not re-alert). Each new row gets a first
 * regression_events row carrying the evidence in words. An improvement of the same case, kind and
 * metric marks earlier open regressions of the suite on the machine "fixed" (fixing_commit = this one).
 */
import { and, desc, eq, inArray, ne } from "drizzle-orm";
import type { Db } from "../../app/db/client.server";
import { caseResults, regressionEvents, regressions, runs, suites, timingSamples, type RegressionDirection, type RegressionKind } from "../../app/db/schema";
import { mannWhitneyU } from "../../app/engine/stats/mann-whitney";
import { bootstrapMedianRatio } from "../../app/engine/stats/bootstrap";
import { latestStepChange } from "../../app/engine/stats/change-point";
import { median } from "../../app/engine/stats/summary";
import { isSolved, type Thresholds } from "./types";

export interface Finding {
  caseKey: string;
  problemId: string;
  kind: RegressionKind;
  direction: RegressionDirection;
  metric: string;
  before: number | null;
  after: number | null;
  ratio: number | null;
  pValue: number | null;
  ciLow: number | null;
  ciHigh: number | null;
  /** Human summary of the evidence (used in the summary table and e-mails). */
  detail: string;
}

export interface Detection {
  baselineRunId: string | null;
  baselineCommit: string | null;
  findings: Finding[];
  /** Findings written as new regression rows (direction "regression" ones make the command fail). */
  inserted: { id: number; finding: Finding }[];
  newRegressions: number;
  /** Open regressions of earlier runs that this run's improvements resolve (marked "fixed"). */
  fixed: number[];
}

type RunRow = typeof runs.$inferSelect;

/** Calibration seconds of a run: mean of the before/after measurements when both exist. */
export function runCalibration(run: Pick<RunRow, "calibrationSeconds" | "machineJson">): number | null {
  const cal = (run.machineJson as { calibration?: { before?: number; after?: number } } | null)?.calibration;
  const vals = [cal?.before ?? run.calibrationSeconds, cal?.after].filter((v): v is number => typeof v === "number" && v > 0);
  return vals.length ? vals.reduce((a, b) => a + b, 0) / vals.length : null;
}

export interface BaselineQuery {
  runId: string;
  suiteName: string;
  machineKey: string;
  /** Full commit hash (from --baseline <commit>) or a branch (default "main"). */
  commit?: string | null;
  branch?: string | null;
}

/** The latest complete, non-demo run of the suite on the machine at the commit / on the branch. */
export function findBaseline(db: Db, q: BaselineQuery): RunRow | null {
  const conds = [
    eq(suites.name, q.suiteName),
    eq(runs.machineKey, q.machineKey),
    eq(runs.status, "complete"),
    eq(runs.isDemo, false),
    ne(runs.id, q.runId),
    q.commit ? eq(runs.commitHash, q.commit) : eq(runs.branch, q.branch ?? "main"),
  ];
  const row = db
    .select({ run: runs })
    .from(runs)
    .innerJoin(suites, eq(runs.suiteId, suites.id))
    .where(and(...conds))
    .orderBy(desc(runs.startedAt))
    .limit(1)
    .get();
  return row?.run ?? null;
}

interface CaseRow {
  id: number;
  caseKey: string;
  problemId: string;
  status: string;
  iterations: number | null;
  objectiveErrorRel: number | null;
  finalTimeError: number | null;
  stateError: number | null;
  controlError: number | null;
  medianSeconds: number | null;
  arcsJson: unknown;
  samples: number[];
  /** Case-level calibration seconds (measured beside the case), if recorded. */
  calibration?: number | null;
}

function loadCases(db: Db, runId: string): Map<string, CaseRow> {
  const rows = db
    .select({
      id: caseResults.id,
      caseKey: caseResults.caseKey,
      problemId: caseResults.problemId,
      status: caseResults.status,
      iterations: caseResults.iterations,
      objectiveErrorRel: caseResults.objectiveErrorRel,
      finalTimeError: caseResults.finalTimeError,
      stateError: caseResults.stateError,
      controlError: caseResults.controlError,
      medianSeconds: caseResults.medianSeconds,
      arcsJson: caseResults.arcsJson,
      log: caseResults.iterationLogJson,
      samples: timingSamples.samplesJson,
    })
    .from(caseResults)
    .leftJoin(timingSamples, eq(timingSamples.caseResultId, caseResults.id))
    .where(eq(caseResults.runId, runId))
    .all();
  return new Map(
    rows.map(({ log, ...r }) => {
      const cal = (log as { extra?: { calibrationSeconds?: unknown } } | null)?.extra?.calibrationSeconds;
      return [r.caseKey, { ...r, samples: r.samples ?? [], calibration: typeof cal === "number" && cal > 0 ? cal : null }];
    }),
  );
}

const ACCURACY_METRICS = [
  ["objective_error_rel", "objectiveErrorRel"],
  ["final_time_error", "finalTimeError"],
  ["state_error", "stateError"],
  ["control_error", "controlError"],
] as const;

/** Deterministic 32-bit seed from a case key (FNV-1a), so intervals are reproducible. */
function seedOf(key: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < key.length; i++) h = Math.imul(h ^ key.charCodeAt(i), 0x01000193);
  return h >>> 0;
}

const fmt = (v: number | null, digits = 3) => (v === null ? "—" : Math.abs(v) >= 1e-3 && Math.abs(v) < 1e4 ? v.toPrecision(digits) : v.toExponential(digits - 1));

function signatureOf(arcs: unknown): string | null {
  if (arcs && typeof arcs === "object" && typeof (arcs as { signature?: unknown }).signature === "string") return (arcs as { signature: string }).signature;
  return null;
}

/** Pairwise comparison of two runs' cases (pure given the rows; exported for tests). */
export function compareCases(
  now: Map<string, CaseRow>,
  base: Map<string, CaseRow>,
  t: Thresholds,
  calibrationFactor: number,
  referenceArcs: Map<string, string> = new Map(),
): Finding[] {
  const out: Finding[] = [];
  for (const [key, cur] of now) {
    const old = base.get(key);
    if (!old) continue;
    const push = (f: Omit<Finding, "caseKey" | "problemId">) => out.push({ caseKey: key, problemId: cur.problemId, ...f });
    const solvedNow = isSolved(cur.status);
    const solvedBefore = isSolved(old.status);
    if (solvedBefore !== solvedNow) {
      push({
        kind: "robustness",
        direction: solvedBefore ? "regression" : "improvement",
        metric: "status",
        before: solvedBefore ? 1 : 0,
        after: solvedNow ? 1 : 0,
        ratio: null,
        pValue: null,
        ciLow: null,
        ciHigh: null,
        detail: `status ${old.status} → ${cur.status}`,
      });
      continue;
    }
    if (!solvedNow) continue;
    for (const [metric, field] of ACCURACY_METRICS) {
      const b = old[field];
      const a = cur[field];
      if (b === null || a === null) continue;
      const ratio = b > 0 ? a / b : null;
      if (a > t.accuracyFactor * b && a > t.accuracyFloor) {
        push({ kind: "accuracy", direction: "regression", metric, before: b, after: a, ratio, pValue: null, ciLow: null, ciHigh: null, detail: `${metric} ${fmt(b)} → ${fmt(a)}${ratio ? ` (×${fmt(ratio)})` : ""}` });
      } else if (b > t.accuracyFactor * a && b > t.accuracyFloor) {
        push({ kind: "accuracy", direction: "improvement", metric, before: b, after: a, ratio, pValue: null, ciLow: null, ciHigh: null, detail: `${metric} ${fmt(b)} → ${fmt(a)}${ratio ? ` (×${fmt(ratio)})` : ""}` });
      }
    }
    if (cur.iterations !== null && old.iterations !== null) {
      const up = cur.iterations - old.iterations;
      const ratio = old.iterations > 0 ? cur.iterations / old.iterations : null;
      const detail = `iterations ${old.iterations} → ${cur.iterations}`;
      if (up >= t.iterationMin && cur.iterations > old.iterations * (1 + t.iterationShare)) {
        push({ kind: "robustness", direction: "regression", metric: "iterations", before: old.iterations, after: cur.iterations, ratio, pValue: null, ciLow: null, ciHigh: null, detail });
      } else if (-up >= t.iterationMin && old.iterations > cur.iterations * (1 + t.iterationShare)) {
        push({ kind: "robustness", direction: "improvement", metric: "iterations", before: old.iterations, after: cur.iterations, ratio, pValue: null, ciLow: null, ciHigh: null, detail });
      }
    }
    if (cur.samples.length >= 3 && old.samples.length >= 3) {
      // Case-level calibration when both cases carry it, else the run-level factor.
      const factor = t.calibrate ? (cur.calibration && old.calibration ? cur.calibration / old.calibration : calibrationFactor) : 1;
      const x = cur.samples.map((v) => v / factor);
      const y = old.samples;
      const ratio = median(x) / median(y);
      const seed = seedOf(key);
      if (ratio > t.speedRatio || ratio < 1 / t.speedRatio) {
        const slower = ratio > 1;
        const mw = mannWhitneyU(x, y, { alternative: slower ? "greater" : "less" });
        const ci = bootstrapMedianRatio(x, y, { replicates: t.bootstrapReplicates, confidence: t.confidence, seed });
        const significant = mw.pValue < t.alpha || (slower ? ci.low > 1 : ci.high < 1);
        if (significant) {
          push({
            kind: "speed",
            direction: slower ? "regression" : "improvement",
            metric: "median_seconds",
            before: median(y),
            after: median(cur.samples),
            ratio,
            pValue: mw.pValue,
            ciLow: ci.low,
            ciHigh: ci.high,
            detail: `median ${fmt(median(y))} s → ${fmt(median(cur.samples))} s, ratio ${ratio.toFixed(3)}${factor !== 1 ? ` (calibrated ×${(1 / factor).toFixed(3)})` : ""}, Mann–Whitney p = ${fmt(mw.pValue, 2)}, ${Math.round(t.confidence * 100)} % CI [${ci.low.toFixed(3)}, ${ci.high.toFixed(3)}]`,
          });
        }
      }
    }
    const sa = signatureOf(cur.arcsJson);
    const sb = signatureOf(old.arcsJson);
    if (sa !== null && sb !== null && sa !== sb) {
      const ref = referenceArcs.get(cur.problemId);
      const direction: RegressionDirection = ref !== undefined && sa === ref && sb !== ref ? "improvement" : "regression";
      push({ kind: "structure", direction, metric: "arcs", before: null, after: null, ratio: null, pValue: null, ciLow: null, ciHigh: null, detail: `arcs ${sb} → ${sa}` });
    }
  }
  return out;
}

/** Drift findings from each case's history (runs of this suite on the same branch and machine). */
export function detectDrift(db: Db, run: RunRow, suiteName: string, t: Thresholds, exclude: Set<string>): Finding[] {
  const history = db
    .select({ run: runs })
    .from(runs)
    .innerJoin(suites, eq(runs.suiteId, suites.id))
    .where(and(eq(suites.name, suiteName), eq(runs.machineKey, run.machineKey), eq(runs.isDemo, false), inArray(runs.status, ["complete"]), run.branch ? eq(runs.branch, run.branch) : eq(runs.commitHash, run.commitHash), ne(runs.id, run.id)))
    .orderBy(desc(runs.startedAt))
    .limit(29)
    .all()
    .map((r) => r.run)
    .reverse();
  const seq = [...history, run];
  if (seq.length < t.driftMinHistory) return [];
  const ids = seq.map((r) => r.id);
  const rows = db
    .select({ runId: caseResults.runId, caseKey: caseResults.caseKey, problemId: caseResults.problemId, status: caseResults.status, median: caseResults.medianSeconds, log: caseResults.iterationLogJson })
    .from(caseResults)
    .where(inArray(caseResults.runId, ids))
    .all();
  const byCase = new Map<string, Map<string, { median: number | null; status: string; problemId: string; log: unknown }>>();
  for (const r of rows) {
    if (!byCase.has(r.caseKey)) byCase.set(r.caseKey, new Map());
    byCase.get(r.caseKey)!.set(r.runId, r);
  }
  const out: Finding[] = [];
  for (const [key, perRun] of byCase) {
    if (exclude.has(key)) continue;
    const pts: { runId: string; y: number; problemId: string }[] = [];
    for (const r of seq) {
      const c = perRun.get(r.id);
      const caseCal = (c?.log as { extra?: { calibrationSeconds?: unknown } } | null)?.extra?.calibrationSeconds;
      const cal = t.calibrate ? (typeof caseCal === "number" && caseCal > 0 ? caseCal : runCalibration(r)) : 1;
      if (!c || c.median === null || !(c.median > 0) || !isSolved(c.status) || !cal) continue;
      pts.push({ runId: r.id, y: Math.log(c.median / cal), problemId: c.problemId });
    }
    if (pts.length < t.driftMinHistory || pts[pts.length - 1].runId !== run.id) continue;
    const step = latestStepChange(
      pts.map((p) => p.y),
      { minSegment: 2, minShift: t.driftMinShift, sigmaFloor: 0.01 },
    );
    if (!step) continue;
    const segmentRuns = pts.slice(step.index).map((p) => p.runId);
    const already = db
      .select({ id: regressions.id })
      .from(regressions)
      .where(and(eq(regressions.caseKey, key), eq(regressions.kind, "drift"), inArray(regressions.runId, segmentRuns)))
      .get();
    if (already) continue;
    const ratio = Math.exp(step.shift);
    out.push({
      caseKey: key,
      problemId: pts[0].problemId,
      kind: "drift",
      direction: step.shift > 0 ? "regression" : "improvement",
      metric: "median_seconds",
      before: Math.exp(step.before),
      after: Math.exp(step.after),
      ratio,
      pValue: null,
      ciLow: null,
      ciHigh: null,
      detail: `change point ${pts.length - step.index} run(s) ago in ${pts.length} runs: calibrated time ×${ratio.toFixed(3)} (PELT, σ̂ = ${step.sigma.toFixed(3)} in ln units)`,
    });
  }
  return out;
}

/** Reference arc signatures ("a|b|c") of problems, from their files' `reference.arcs`. */
export type ReferenceArcs = Map<string, string>;

/**
 * Compares `runId` with its baseline, looks for drift, writes new findings as regression rows
 * (one transaction) and returns them. Does nothing but report when no baseline exists.
 */
export function detectRegressions(db: Db, runId: string, options: { thresholds: Thresholds; baseline?: { commit?: string | null; branch?: string | null }; referenceArcs?: ReferenceArcs }): Detection {
  const t = options.thresholds;
  const runRow = db.select({ run: runs, suiteName: suites.name }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(eq(runs.id, runId)).get();
  if (!runRow) throw new Error(`detectRegressions: run ${runId} not found`);
  const { run, suiteName } = runRow;
  const baseline = findBaseline(db, { runId, suiteName, machineKey: run.machineKey, commit: options.baseline?.commit, branch: options.baseline?.branch });
  const findings: Finding[] = [];
  if (baseline) {
    const calNow = runCalibration(run);
    const calBase = runCalibration(baseline);
    const factor = t.calibrate && calNow && calBase ? calNow / calBase : 1;
    findings.push(...compareCases(loadCases(db, runId), loadCases(db, baseline.id), t, factor, options.referenceArcs));
  }
  const speedFlagged = new Set(findings.filter((f) => f.kind === "speed").map((f) => f.caseKey));
  findings.push(...detectDrift(db, run, suiteName, t, speedFlagged));

  // Known already: same case/kind/metric/direction recorded for a run of the same commit.
  const sameCommitRuns = db.select({ id: runs.id }).from(runs).where(and(eq(runs.commitHash, run.commitHash), ne(runs.id, runId))).all().map((r) => r.id);
  const known = new Set(
    sameCommitRuns.length
      ? db
          .select({ caseKey: regressions.caseKey, kind: regressions.kind, metric: regressions.metric, direction: regressions.direction })
          .from(regressions)
          .where(inArray(regressions.runId, sameCommitRuns))
          .all()
          .map((r) => `${r.caseKey}|${r.kind}|${r.metric}|${r.direction}`)
      : [],
  );
  const fresh = findings.filter((f) => !known.has(`${f.caseKey}|${f.kind}|${f.metric}|${f.direction}`));
  const fixed: number[] = [];
  const inserted = db.transaction((tx) => {
    const rows = fresh.map((f) => {
      const row = tx
        .insert(regressions)
        .values({
          runId,
          baselineRunId: baseline?.id ?? null,
          caseKey: f.caseKey,
          kind: f.kind,
          direction: f.direction,
          metric: f.metric,
          before: f.before,
          after: f.after,
          ratio: f.ratio !== null && Number.isFinite(f.ratio) ? f.ratio : null,
          pValue: f.pValue,
          ciLow: f.ciLow,
          ciHigh: f.ciHigh,
          status: f.direction === "improvement" ? "acknowledged" : "open",
        })
        .returning({ id: regressions.id })
        .get();
      // The evidence in words (statuses, medians, interval, change point) as the first triage event.
      tx.insert(regressionEvents)
        .values({ regressionId: row.id, userId: null, fromStatus: null, toStatus: f.direction === "improvement" ? "acknowledged" : "open", note: `Found by run ${runId} at ${run.commitHash.slice(0, 10)}: ${f.detail}` })
        .run();
      return { id: row.id, finding: f };
    });
    // An improvement of the same case, kind and metric resolves the open regressions of earlier
    // runs of this suite on this machine: they become "fixed" with this commit as the fix.
    for (const f of findings) {
      if (f.direction !== "improvement" || f.kind === "drift") continue;
      const open = tx
        .select({ id: regressions.id })
        .from(regressions)
        .innerJoin(runs, eq(runs.id, regressions.runId))
        .where(and(eq(regressions.caseKey, f.caseKey), eq(regressions.kind, f.kind), eq(regressions.metric, f.metric), eq(regressions.direction, "regression"), inArray(regressions.status, ["open", "acknowledged"]), eq(runs.suiteId, run.suiteId), eq(runs.machineKey, run.machineKey), ne(regressions.runId, runId)))
        .all();
      for (const o of open) {
        const prev = tx.select({ status: regressions.status }).from(regressions).where(eq(regressions.id, o.id)).get();
        tx.update(regressions).set({ status: "fixed", fixingCommit: run.commitHash, updatedAt: new Date() }).where(eq(regressions.id, o.id)).run();
        tx.insert(regressionEvents).values({ regressionId: o.id, userId: null, fromStatus: prev?.status ?? null, toStatus: "fixed", note: `Resolved by run ${runId} at ${run.commitHash.slice(0, 10)}: ${f.detail}` }).run();
        fixed.push(o.id);
      }
    }
    return rows;
  });
  return {
    baselineRunId: baseline?.id ?? null,
    baselineCommit: baseline?.commitHash ?? null,
    findings,
    inserted,
    newRegressions: inserted.filter((i) => i.finding.direction === "regression").length,
    fixed,
  };
}
