/**
 * Detection after a run, the same for every run however it arrived (command line, job, upload):
 * find the baseline, load both runs' cases, apply the rules (app/runs/rules.ts), look for drift
 * along each case's history, write the new findings as regression rows and resolve the open
 * regressions an improvement fixes. `afterRun` is the entry point; it takes the thresholds and
 * the reference arcs from the database (the suite row and the problem versions the run solved),
 * so its answer depends only on what is stored.
 *
 * Besides the per-case rules, pooled group findings (app/runs/pooled.ts) judge each scheme, problem
 * and the suite from all their cases; a group row carries its member cases (regression_members).
 *
 * A finding is "new" unless a row with the same case, kind, metric and direction already exists
 * for a run of the same commit (reruns of one commit do not re-alert). A regression already open
 * (open, acknowledged or expected) for the same case, kind, metric and direction on an earlier run
 * of the same branch, suite and machine is the SAME regression seen on a later commit: the run is
 * added to its sightings (regression_sightings) with a note, no new row is opened, and its triage
 * (status, assignee, reason) carries over, unless an interleaved A/B cleared it or could not
 * decide (the new sighting then opens a row of its own, which gets its own A/B). Each new row gets a first regression_events row
 * carrying the evidence in words, and its first sighting. An improvement of the same case, kind
 * and metric marks earlier open regressions of the suite on the machine "fixed" (fixing_commit =
 * this one).
 */
import { and, desc, eq, inArray, ne } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, problemVersions, regressionEvents, regressionMembers, regressions, regressionSightings, runs, suites, timingSamples } from "~/db/schema";
import { referenceArcsOfJson } from "~/engine/problem/library";
import { groupKey, pooledFindings, schemeSuspects, type SchemeSuspect } from "~/runs/pooled";
import { caseCalibration, compareCases, driftFinding, type CaseSnapshot, type DriftPoint, type Finding, type ReferenceArcs } from "~/runs/rules";
import { isSolved, type Thresholds } from "~/runs/types";
import { effectiveThresholds } from "./settings.server";
import { ancestry, repositoryOf } from "./commit-order.server";
import { latestAbOf } from "./ab-checks.server";

export interface Detection {
  baselineRunId: string | null;
  baselineCommit: string | null;
  findings: Finding[];
  /** Findings written as new regression rows (direction "regression" ones make the command fail). */
  inserted: { id: number; finding: Finding }[];
  newRegressions: number;
  /** Open regressions of earlier runs that this run's improvements resolve (marked "fixed"). */
  fixed: number[];
  /** Findings folded into a regression already open on the branch (seen again, triage kept). */
  carried: { id: number; finding: Finding }[];
  /** Schemes that moved past the pooled floor without a finding: `bench --confirm` screens them by A/B. */
  suspects?: SchemeSuspect[];
}

type RunRow = typeof runs.$inferSelect;

/** Which run to compare with: a commit's, or the latest of a branch (default "main"). */
export interface BaselineChoice {
  commit?: string | null;
  branch?: string | null;
}

export interface BaselineQuery extends BaselineChoice {
  runId: string;
  suiteName: string;
  /** Null: any machine (a run whose timings are not compared: accuracy checks only). */
  machineKey: string | null;
  /** The run's commit and repository: a branch baseline is its nearest ancestor with a run. */
  runCommit?: string | null;
  externalRepo?: string | null;
}

/**
 * The baseline: the complete, non-demo run of the suite on the machine at the commit, or on the
 * branch. On a branch the run of the nearest ancestor of the run's commit in the repository wins
 * (git ancestry, app/models/commit-order.server.ts); when git does not know the commits, the run
 * the server stored last (its own clock, never a client's dates).
 */
export function findBaseline(db: Db, q: BaselineQuery): RunRow | null {
  const conds = [
    eq(suites.name, q.suiteName),
    eq(runs.status, "complete"),
    eq(runs.isDemo, false),
    ne(runs.id, q.runId),
    q.commit ? eq(runs.commitHash, q.commit) : eq(runs.branch, q.branch ?? "main"),
  ];
  if (q.machineKey !== null) conds.push(eq(runs.machineKey, q.machineKey));
  const candidates = db
    .select({ run: runs })
    .from(runs)
    .innerJoin(suites, eq(runs.suiteId, suites.id))
    .where(and(...conds))
    .orderBy(desc(runs.createdAt), desc(runs.id))
    .limit(500)
    .all()
    .map((r) => r.run);
  if (candidates.length === 0) return null;
  if (!q.commit && q.runCommit) {
    const order = ancestry(repositoryOf(q.externalRepo), q.runCommit);
    if (order) {
      let best: RunRow | null = null;
      let bestDistance = Infinity;
      for (const c of candidates) {
        const d = order.get(c.commitHash);
        if (d !== undefined && d < bestDistance) {
          best = c;
          bestDistance = d;
        }
      }
      if (best) return best;
    }
  }
  return candidates[0]!;
}

/** The cases of a run as the rules read them, by case key. */
export function loadCases(db: Db, runId: string): Map<string, CaseSnapshot> {
  const rows = db
    .select({
      id: caseResults.id,
      caseKey: caseResults.caseKey,
      problemId: caseResults.problemId,
      status: caseResults.status,
      scheme: caseResults.scheme,
      iterations: caseResults.iterations,
      objectiveErrorRel: caseResults.objectiveErrorRel,
      finalTimeError: caseResults.finalTimeError,
      stateError: caseResults.stateError,
      controlError: caseResults.controlError,
      medianSeconds: caseResults.medianSeconds,
      arcsJson: caseResults.arcsJson,
      meshTolerance: caseResults.meshTolerance,
      meshPasses: caseResults.meshPasses,
      meshPoints: caseResults.meshPoints,
      meshToleranceMet: caseResults.meshToleranceMet,
      log: caseResults.iterationLogJson,
      samples: timingSamples.samplesJson,
    })
    .from(caseResults)
    .leftJoin(timingSamples, eq(timingSamples.caseResultId, caseResults.id))
    .where(eq(caseResults.runId, runId))
    .all();
  return new Map(rows.map(({ log, ...r }) => [r.caseKey, { ...r, samples: r.samples ?? [], calibration: caseCalibration(log) }]));
}

/**
 * Expected arc signatures ("upper|singular|lower") of the problem versions a run solved, from the
 * stored problem.json of each version (validated by the loader's schema).
 */
export function referenceArcsOfRun(db: Db, runId: string): ReferenceArcs {
  const rows = db
    .selectDistinct({ problemId: caseResults.problemId, json: problemVersions.json })
    .from(caseResults)
    .innerJoin(problemVersions, and(eq(problemVersions.problemId, caseResults.problemId), eq(problemVersions.contentHash, caseResults.problemVersionHash)))
    .where(eq(caseResults.runId, runId))
    .all();
  const out: ReferenceArcs = new Map();
  for (const r of rows) {
    const arcs = referenceArcsOfJson(r.json);
    if (arcs) out.set(r.problemId, arcs.join("|"));
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
    const pts: DriftPoint[] = [];
    for (const r of seq) {
      const c = perRun.get(r.id);
      if (!c || c.median === null || !(c.median > 0) || !isSolved(c.status)) continue;
      pts.push({ runId: r.id, y: Math.log(c.median), problemId: c.problemId });
    }
    if (pts.length === 0 || pts[pts.length - 1]!.runId !== run.id) continue;
    const drift = driftFinding(key, pts, t);
    if (!drift) continue;
    const already = db
      .select({ id: regressions.id })
      .from(regressions)
      .where(and(eq(regressions.caseKey, key), eq(regressions.kind, "drift"), inArray(regressions.runId, drift.segmentRuns)))
      .get();
    if (!already) out.push(drift.finding);
  }
  return out;
}

export interface DetectOptions {
  thresholds: Thresholds;
  baseline?: BaselineChoice;
  /** Default: from the stored problem versions of the run (referenceArcsOfRun). */
  referenceArcs?: ReferenceArcs;
}

/**
 * Compares `runId` with its baseline, looks for drift, writes new findings as regression rows
 * (one transaction) and returns them. Does nothing but report when no baseline exists.
 */
export function detectRegressions(db: Db, runId: string, options: DetectOptions): Detection {
  const t = options.thresholds;
  const runRow = db.select({ run: runs, suiteName: suites.name }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(eq(runs.id, runId)).get();
  if (!runRow) throw new Error(`detectRegressions: run ${runId} not found`);
  const { run, suiteName } = runRow;
  // A merged run from shards of different machine classes: accuracy, robustness and structure
  // against a baseline of any machine; no timing rule (speed, drift) at all.
  const timings = run.timingsCompared;
  const baseline = findBaseline(db, { runId, suiteName, machineKey: timings ? run.machineKey : null, commit: options.baseline?.commit, branch: options.baseline?.branch, runCommit: run.commitHash, externalRepo: run.externalRepo });
  const findings: Finding[] = [];
  let suspects: SchemeSuspect[] = [];
  if (baseline) {
    const now = loadCases(db, runId);
    const base = loadCases(db, baseline.id);
    if (timings) suspects = schemeSuspects(now, base, t);
    // Group findings first: pages and e-mails show them before their member cases. A merged run whose
    // shards came from different machine classes keeps its accuracy checks only.
    findings.push(...pooledFindings(now, base, t).filter((f) => timings || f.kind !== "speed"));
    findings.push(...compareCases(now, base, t, options.referenceArcs ?? referenceArcsOfRun(db, runId)).filter((f) => timings || f.kind !== "speed"));
  }
  const speedFlagged = new Set(findings.filter((f) => f.kind === "speed").map((f) => f.caseKey));
  if (timings) findings.push(...detectDrift(db, run, suiteName, t, speedFlagged));

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
  const carried: { id: number; finding: Finding }[] = [];
  const sight = (tx: Pick<Db, "insert">, regressionId: number, f: Finding) =>
    tx.insert(regressionSightings).values({ regressionId, runId, commitHash: run.commitHash, ratio: finiteOrNull(f.ratio), ciLow: f.ciLow, ciHigh: f.ciHigh, pValue: f.pValue }).onConflictDoNothing().run();
  const inserted = db.transaction((tx) => {
    const rows: { id: number; finding: Finding }[] = [];
    for (const f of fresh) {
      const open = f.direction === "regression" && run.branch ? openOnBranch(tx as unknown as Db, { runId, branch: run.branch, suiteName, machineKey: run.machineKey }, f) : null;
      if (open) {
        sight(tx, open, f);
        tx.insert(regressionEvents)
          .values({ regressionId: open, userId: null, fromStatus: null, toStatus: null, note: `Seen again by run ${runId} at ${run.commitHash.slice(0, 10)} on ${run.branch}: ${f.detail}` })
          .run();
        carried.push({ id: open, finding: f });
        continue;
      }
      const row = tx
        .insert(regressions)
        .values({
          runId,
          baselineRunId: f.baselineRunId ?? baseline?.id ?? null,
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
          scope: f.scope ?? "case",
        })
        .returning({ id: regressions.id })
        .get();
      for (const m of f.members ?? []) tx.insert(regressionMembers).values({ regressionId: row.id, caseKey: m.caseKey, problemId: m.problemId, ratio: finiteOrNull(m.ratio) }).run();
      sight(tx, row.id, f);
      // The evidence in words (statuses, medians, interval, change point) as the first triage event.
      tx.insert(regressionEvents)
        .values({ regressionId: row.id, userId: null, fromStatus: null, toStatus: f.direction === "improvement" ? "acknowledged" : "open", note: `Found by run ${runId} at ${run.commitHash.slice(0, 10)}: ${f.detail}` })
        .run();
      rows.push({ id: row.id, finding: f });
    }
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
    carried,
    // Schemes already found slower are not screened again.
    suspects: suspects.filter((x) => !findings.some((f) => f.kind === "speed" && f.direction === "regression" && f.caseKey === groupKey("scheme", x.scheme))),
  };
}

/**
 * A scheme slowdown that screening put to an interleaved A/B and the A/B confirmed (`bench
 * --confirm`; app/services/ab-confirm.server.ts): stored as a group regression of the run, with the
 * A/B's paired ratio and interval as its evidence (no sequential p-value: the run alone did not
 * flag it) and its member cases.
 */
export function insertScreenedRegression(db: Db, at: { runId: string; baselineRunId: string | null; commitHash: string }, s: SchemeSuspect, ab: { ratio: number; low: number; high: number; note: string }): number {
  return db.transaction((tx) => {
    const row = tx
      .insert(regressions)
      .values({ runId: at.runId, baselineRunId: at.baselineRunId, caseKey: groupKey("scheme", s.scheme), kind: "speed", direction: "regression", metric: "pooled_median_ratio", before: null, after: null, ratio: ab.ratio, pValue: null, ciLow: ab.low, ciHigh: ab.high, status: "open", scope: "scheme" })
      .returning({ id: regressions.id })
      .get();
    for (const m of s.members) tx.insert(regressionMembers).values({ regressionId: row.id, caseKey: m.caseKey, problemId: m.problemId, ratio: finiteOrNull(m.ratio) }).run();
    tx.insert(regressionSightings).values({ regressionId: row.id, runId: at.runId, commitHash: at.commitHash, ratio: ab.ratio, ciLow: ab.low, ciHigh: ab.high, pValue: null }).onConflictDoNothing().run();
    tx.insert(regressionEvents)
      .values({ regressionId: row.id, userId: null, fromStatus: null, toStatus: "open", note: `Found by screening in run ${at.runId} at ${at.commitHash.slice(0, 10)}: ${s.scheme}, all ${s.members.length} cases moved ×${s.ratio.toFixed(2)} against the baseline${s.relative !== null ? ` (×${s.relative.toFixed(2)} against the run's other schemes)` : ""}, below the evidence a finding needs; ${ab.note}` })
      .run();
    return row.id;
  });
}

const finiteOrNull = (v: number | null) => (v !== null && Number.isFinite(v) ? v : null);

/**
 * The regression still open (open, acknowledged or expected) for the finding's case, kind, metric
 * and direction on an earlier run of the same branch, suite and machine; null when there is none.
 */
export function openOnBranch(db: Db, at: { runId: string; branch: string; suiteName: string; machineKey: string }, f: Pick<Finding, "caseKey" | "kind" | "metric" | "direction">): number | null {
  const rows = db
    .select({ id: regressions.id })
    .from(regressions)
    .innerJoin(runs, eq(runs.id, regressions.runId))
    .innerJoin(suites, eq(suites.id, runs.suiteId))
    .where(
      and(
        eq(regressions.caseKey, f.caseKey),
        eq(regressions.kind, f.kind),
        eq(regressions.metric, f.metric),
        eq(regressions.direction, f.direction),
        inArray(regressions.status, ["open", "acknowledged", "expected"]),
        eq(runs.branch, at.branch),
        eq(suites.name, at.suiteName),
        eq(runs.machineKey, at.machineKey),
        ne(regressions.runId, at.runId),
      ),
    )
    .orderBy(desc(regressions.id))
    .limit(20)
    .all();
  // A regression an interleaved A/B cleared (or could not decide on) is not folded into: a later
  // sighting would inherit that verdict and never be put to an A/B of its own, so a real slowdown
  // after a false alarm on the same case would be missed. It opens a row of its own instead.
  const ab = latestAbOf(db, rows.map((r) => r.id));
  return rows.find((r) => { const st = ab.get(r.id)?.state; return st !== "cleared" && st !== "unavailable"; })?.id ?? null;
}

/**
 * The thresholds a run is judged by: the defaults, then the suite row's (as recorded with the run),
 * then the suite's saved settings (app/models/settings.server.ts).
 */
export function thresholdsOfRun(db: Db, runId: string): Thresholds {
  const row = db.select({ name: suites.name, t: suites.thresholdsJson }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(eq(runs.id, runId)).get();
  if (!row) throw new Error(`run ${runId} not found`);
  return effectiveThresholds(db, row.name, (row.t ?? {}) as Partial<Thresholds>);
}

/**
 * What happens after a run is stored, wherever it came from: nothing for a run that is not
 * complete; otherwise detection against the baseline (default: the latest complete run on main)
 * with the thresholds and reference arcs read from the database.
 */
export function afterRun(db: Db, runId: string, options: { baseline?: BaselineChoice } = {}): Detection | null {
  const run = db.select({ status: runs.status }).from(runs).where(eq(runs.id, runId)).get();
  if (!run) throw new Error(`run ${runId} not found`);
  if (run.status !== "complete") return null;
  return detectRegressions(db, runId, { thresholds: thresholdsOfRun(db, runId), baseline: options.baseline ?? { branch: "main" } });
}
