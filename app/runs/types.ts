/**
 * Shapes of run data shared by the runner, its workers, the recorder (app/models/recording.server.ts)
 * and the regression rules (./rules.ts). Pure: no database, no HTTP, no file system.
 *
 * `CaseReport` is the part of the engine's `SolveReport` (app/engine/solve.ts) the runner stores;
 * an external solver's answer is mapped onto the same shape by the external executor, so
 * the recording and the regression rules do not care who solved the case.
 */
import type { SchemeId } from "../engine/schemes/types";

/** One case of a suite: a problem, a scheme and a mesh. */
export interface CaseSpec {
  /** Stable key across runs: `<problemId>/<scheme>/<intervals>[x<degree>]` (as case_results.case_key). */
  key: string;
  problemId: string;
  scheme: SchemeId;
  intervals: number;
  degree?: number;
  variant?: string;
  /** Adaptive mesh: refine from this mesh until every interval's error estimate is ≤ tolerance. */
  tolerance?: number;
}

export interface CaseErrors {
  objectiveAbs: number | null;
  objectiveRel: number | null;
  finalTimeAbs: number | null;
  stateMax: number | null;
  controlMax: number | null;
  costateMax?: number | null;
  switchingTimes?: number | null;
}

/** SolveReport-shaped result of one solve (fields the runner uses; extra fields are kept). */
export interface CaseReport {
  problemId: string;
  versionHash: string;
  scheme: string;
  intervals: number;
  degree?: number | null;
  variant?: string | null;
  status: string;
  message?: string | null;
  objective: number | null;
  finalTime: number | null;
  iterations: number | null;
  solveSeconds?: number | null;
  transcribeSeconds?: number | null;
  nlpSize?: unknown;
  resim?: { finalMiss: number | null; maxPathViolation?: number | null } | null;
  constraintViolation: number | null;
  errors: CaseErrors;
  arcs?: unknown;
  trajectory?: unknown;
  log?: unknown;
  /** Per-interval error estimate of the final mesh (app/engine/solve.ts MeshEstimateSummary). */
  meshEstimate?: { method: string; t: number[]; error: number[]; max: number } | null;
  /** Adaptive refinement record (app/engine/mesh/adaptive.ts RefinementSummary). */
  refinement?: {
    tolerance: number; met: boolean; passes: number; points: number;
    record: Array<{ pass: number; intervals: number; points: number; status: string; iterations: number; seconds: number; maxEstimate: number | null }>;
  } | null;
}

/** What a worker hands back for one case. */
export interface CaseOutcome {
  spec: CaseSpec;
  /** The report's status, or a runner status: "timeout", "error". */
  status: string;
  message: string | null;
  report: CaseReport | null;
  /** Wall-clock seconds of each timed repeat (tinybench samples), in sorted order. */
  samples: number[];
  /** Seconds from the case's start to its end, loading included. */
  wallSeconds: number;
  /** Seconds of the calibration kernel measured in the worker just before the timed repeats. */
  calibrationSeconds?: number | null;
}

/** Regression thresholds of a suite (defaults in ./suite.ts). */
export interface Thresholds {
  /** Accuracy: flag when an error grows by more than this factor... */
  accuracyFactor: number;
  /** ...and the new error is above this absolute floor. */
  accuracyFloor: number;
  /** Robustness: flag when iterations grow by more than this share (0.25 = 25 %)... */
  iterationShare: number;
  /** ...and by at least this many iterations. */
  iterationMin: number;
  /** Speed: flag when the median time ratio exceeds this... */
  speedRatio: number;
  /** ...and Mann–Whitney p < alpha (one-sided) or the bootstrap interval excludes 1. */
  alpha: number;
  /** Two-sided level of the bootstrap interval of the median ratio. */
  confidence: number;
  bootstrapReplicates: number;
  /** Drift: minimum |shift| of ln(time ratio) between the last two PELT segments. */
  driftMinShift: number;
  /** Drift: minimum number of runs in a case's history before PELT is tried. */
  driftMinHistory: number;
  /** Pooled speed rule (app/runs/pooled.ts): flag a scheme/problem/suite whose pooled ratio exceeds this... */
  pooledSpeedRatio: number;
  /** ...when it has at least this many timed cases (and its interval excludes 1). */
  pooledMinCases: number;
  /**
   * `--confirm` screening (app/runs/pooled.ts schemeSuspects): a scheme whose cases moved by more
   * than this ratio as a point estimate (against the baseline or the run's other schemes) is put to
   * the interleaved A/B; ≤ 1 puts every scheme whose estimate did not fall by as much; 0, every scheme.
   */
  screenSpeedRatio: number;
  /** The automatic A/B's rounds of 6 blocks run while a verdict is unclear, up to this many blocks. */
  confirmMaxBlocks: number;
  /**
   * Confirm a suspected speed regression by an interleaved A/B job before its e-mail goes out
   * (app/services/ab-confirm.server.ts); needs the commits in the server's repository.
   */
  abConfirm: boolean;
}

/** Statuses that count as "solved" for the robustness rule. */
export const SOLVED_STATUSES = new Set(["optimal", "acceptable", "solved", "success", "converged"]);

export const isSolved = (status: string | null | undefined) => !!status && SOLVED_STATUSES.has(status);

/** The commit a run measures (read with git by the runner; carried by an upload). */
export interface CommitMeta {
  commitHash: string;
  branch: string | null;
  dirty: boolean;
  subject: string | null;
  author: string | null;
  date: Date | null;
}
