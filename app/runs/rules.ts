/**
 * The regression rules: one run's cases against a baseline's, plus a change point along a case's
 * history. Pure: the rows come in, findings go out; reading and writing them is
 * app/models/detection.server.ts.
 *
 * Rules (thresholds from the suite, ./types.ts `Thresholds`):
 *  accuracy    both solved; an error metric e (objective_error_rel, final_time_error, state_error,
 *              control_error) with e_now > accuracyFactor · e_base and e_now > accuracyFloor.
 *              Improvement: e_base > accuracyFactor · e_now and e_base > accuracyFloor.
 *  robustness  solved before and not now (metric "status"); iterations up by more than
 *              iterationShare and by at least iterationMin (metric "iterations"). Reverse = improvement.
 *  speed       both solved with ≥ 3 samples each; r = median(x) / median(y), x the current
 *              samples, y the baseline's (raw: dividing by the calibration kernel measured beside
 *              each case was measured to add noise, DEVELOPERS.md); flagged when r > speedRatio
 *              AND (one-sided Mann–Whitney p < alpha on x vs y OR the bootstrap interval of r lies
 *              above 1).
 *              Improvement: r < 1/speedRatio with the mirrored evidence.
 *  refinement  adaptive cases (mesh_tolerance set in both, solved in both or in neither): ε met
 *              before and not now (robustness, metric "mesh_tolerance_met"; reverse = improvement);
 *              more passes (robustness, "mesh_passes", any increase); final mesh points up by more
 *              than iterationShare and by at least iterationMin (robustness, "mesh_points", the
 *              iteration rule's thresholds). More time is the speed rule (a refined case times every
 *              pass); iterations are those of all passes.
 *  structure   the arc signature changed (reports carrying `arcs.signature`); an improvement when
 *              the new one equals the problem's reference arcs and the old one did not.
 *  drift       PELT (app/engine/stats/change-point.ts) on ln(median) over the case's
 *              history on the same branch and machine; flagged when the latest segment starts
 *              within the history, contains the current run, shifted by ≥ driftMinShift, and no
 *              drift row already exists for a run of that segment. Its baseline is its own: the last
 *              run before the change point (`Finding.baselineRunId`), whose commit the confirming
 *              A/B compares with the run's (app/services/ab-confirm.server.ts).
 *
 * A finding is "new" unless a row with the same case, kind, metric and direction already exists
 * for a run of the same commit (reruns of one commit do not re-alert). Each new row gets a first
 * regression_events row carrying the evidence in words. An improvement of the same case, kind and
 * metric marks earlier open regressions of the suite on the machine "fixed" (fixing_commit = this one).
 */
import type { RegressionDirection, RegressionKind } from "../db/schema";
import { mannWhitneyU } from "../engine/stats/mann-whitney";
import { bootstrapMedianRatio } from "../engine/stats/bootstrap";
import { latestStepChange } from "../engine/stats/change-point";
import { median } from "../engine/stats/summary";
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
  /** "case" (default) or the group a pooled finding is about (./pooled.ts). */
  scope?: "case" | "scheme" | "problem" | "suite";
  /** A group finding's member cases with their own median ratios. */
  members?: { caseKey: string; problemId: string; ratio: number | null }[];
  /**
   * The run this finding compares against when it is not the run's pairwise baseline: a drift's
   * last run before its change point (the A/B that confirms it compares that run's commit).
   */
  baselineRunId?: string;
}

/** Calibration seconds of a run: mean of the before/after measurements when both exist. */
export function runCalibration(run: { calibrationSeconds: number | null; machineJson: unknown }): number | null {
  const cal = (run.machineJson as { calibration?: { before?: number; after?: number } } | null)?.calibration;
  const vals = [cal?.before ?? run.calibrationSeconds, cal?.after].filter((v): v is number => typeof v === "number" && v > 0);
  return vals.length ? vals.reduce((a, b) => a + b, 0) / vals.length : null;
}

/** Case-level calibration seconds (measured beside the case, kept in iterationLog.extra), if any. */
export function caseCalibration(iterationLog: unknown): number | null {
  const cal = (iterationLog as { extra?: { calibrationSeconds?: unknown } } | null)?.extra?.calibrationSeconds;
  return typeof cal === "number" && cal > 0 ? cal : null;
}

/** What the rules read of one recorded case. */
export interface CaseSnapshot {
  id: number;
  caseKey: string;
  problemId: string;
  /** The case's scheme (read from the key when absent). */
  scheme?: string;
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
  /** Adaptive refinement (null/absent for a uniform mesh): tolerance, passes, final mesh points, ε met. */
  meshTolerance?: number | null;
  meshPasses?: number | null;
  meshPoints?: number | null;
  meshToleranceMet?: boolean | null;
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
  now: Map<string, CaseSnapshot>,
  base: Map<string, CaseSnapshot>,
  t: Thresholds,
  referenceArcs: Map<string, string> = new Map(),
): Finding[] {
  const out: Finding[] = [];
  for (const [key, cur] of now) {
    const old = base.get(key);
    if (!old) continue;
    const push = (f: Omit<Finding, "caseKey" | "problemId">) => out.push({ caseKey: key, problemId: cur.problemId, ...f });
    const solvedNow = isSolved(cur.status);
    const solvedBefore = isSolved(old.status);
    // a case that stopped solving is the status rule's finding alone
    if (solvedBefore === solvedNow) out.push(...refinementFindings(key, cur, old, t));
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
      const x = cur.samples;
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
            detail: `median ${fmt(median(y))} s → ${fmt(median(cur.samples))} s, ratio ${ratio.toFixed(3)}, Mann–Whitney p = ${fmt(mw.pValue, 2)}, ${Math.round(t.confidence * 100)} % CI [${ci.low.toFixed(3)}, ${ci.high.toFixed(3)}]`,
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

/** The refinement rules of one adaptive case against its baseline (see the header); exported for tests. */
export function refinementFindings(key: string, cur: CaseSnapshot, old: CaseSnapshot, t: Thresholds): Finding[] {
  const out: Finding[] = [];
  if (cur.meshTolerance == null || old.meshTolerance == null) return out;
  const push = (f: Omit<Finding, "caseKey" | "problemId" | "kind" | "pValue" | "ciLow" | "ciHigh">) =>
    out.push({ caseKey: key, problemId: cur.problemId, kind: "robustness", pValue: null, ciLow: null, ciHigh: null, ...f });
  const metNow = cur.meshToleranceMet === true, metBefore = old.meshToleranceMet === true;
  if (metNow !== metBefore) {
    push({ direction: metBefore ? "regression" : "improvement", metric: "mesh_tolerance_met", before: metBefore ? 1 : 0, after: metNow ? 1 : 0, ratio: null, detail: `tolerance ${fmt(cur.meshTolerance, 2)} ${metBefore ? "met → no longer met" : "not met → met"}` });
    return out;
  }
  if (!metNow) return out;
  if (cur.meshPasses != null && old.meshPasses != null && cur.meshPasses !== old.meshPasses) {
    push({ direction: cur.meshPasses > old.meshPasses ? "regression" : "improvement", metric: "mesh_passes", before: old.meshPasses, after: cur.meshPasses, ratio: cur.meshPasses / old.meshPasses, detail: `refinement passes ${old.meshPasses} → ${cur.meshPasses}` });
  }
  if (cur.meshPoints != null && old.meshPoints != null) {
    const a = cur.meshPoints, b = old.meshPoints;
    const detail = `final mesh points ${b} → ${a}`;
    if (a - b >= t.iterationMin && a > b * (1 + t.iterationShare)) push({ direction: "regression", metric: "mesh_points", before: b, after: a, ratio: a / b, detail });
    else if (b - a >= t.iterationMin && b > a * (1 + t.iterationShare)) push({ direction: "improvement", metric: "mesh_points", before: b, after: a, ratio: a / b, detail });
  }
  return out;
}

/** Reference arc signatures ("a|b|c") of problems. */
export type ReferenceArcs = Map<string, string>;

/** One point of a case's history: a run and ln(median seconds). */
export interface DriftPoint {
  runId: string;
  y: number;
  problemId: string;
}

/**
 * The drift rule on one case's history (oldest first, the current run last): PELT's latest step
 * (app/engine/stats/change-point.ts) with at least `driftMinShift`; null when there is none.
 * Returns the finding and the runs of the latest segment (a drift already recorded for one of
 * them is not reported again).
 */
export function driftFinding(caseKey: string, pts: DriftPoint[], t: Thresholds): { finding: Finding; segmentRuns: string[] } | null {
  if (pts.length < t.driftMinHistory) return null;
  const step = latestStepChange(
    pts.map((p) => p.y),
    { minSegment: 2, minShift: t.driftMinShift, sigmaFloor: 0.01 },
  );
  if (!step) return null;
  const ratio = Math.exp(step.shift);
  return {
    segmentRuns: pts.slice(step.index).map((p) => p.runId),
    finding: {
      baselineRunId: pts[step.index - 1]!.runId,
      caseKey,
      problemId: pts[0]!.problemId,
      kind: "drift",
      direction: step.shift > 0 ? "regression" : "improvement",
      metric: "median_seconds",
      before: Math.exp(step.before),
      after: Math.exp(step.after),
      ratio,
      pValue: null,
      ciLow: null,
      ciHigh: null,
      detail: `change point ${pts.length - step.index} run(s) ago in ${pts.length} runs: time ×${ratio.toFixed(3)} (PELT, σ̂ = ${step.sigma.toFixed(3)} in ln units)`,
    },
  };
}
