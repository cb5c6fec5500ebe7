/**
 * The benchmark run, as a library: the command line (bench/run.ts, which the server's job worker
 * also runs) and tests call `runSuite`. It reads the suite, records the commit and the machine,
 * calibrates, runs every case in worker threads (./pool.ts), stores each finished case through the
 * one recording path (app/models/recording.server.ts), calibrates again, marks the run complete
 * (or interrupted when `signal` aborts), runs the detection every stored run gets
 * (app/models/detection.server.ts `afterRun`) and sends the alerts.
 */
import path from "node:path";
import { fileURLToPath } from "node:url";
import type { Db } from "../../app/db/client.server";
import type { ProblemLibrary } from "../../app/engine/problem/library";
import { afterRun, type Detection } from "../../app/models/detection.server";
import { problemLibraryFor } from "../../app/models/library.server";
import { ensureSuite, finishRun, insertCase, insertRun } from "../../app/models/recording.server";
import { caseRecordFromOutcome } from "../../app/runs/record";
import { expandCases, suitePath, type LoadedSuite } from "../../app/runs/suite";
import { loadSuiteWithChanges } from "../../app/models/suite-changes.server";
import type { CaseOutcome, CommitMeta } from "../../app/runs/types";
import { alertOrConfirm, type AlertOrConfirmResult as AlertResult } from "../../app/services/ab-confirm.server";
import { abResultSchema, type AbGroup } from "../../app/runs/ab-result";
import { calibrate, machineInfo, machineKey, type Calibration } from "./machine";
import { commitMeta, resolveCommit } from "./git-meta";
import { runCases } from "./pool";
import { eq } from "drizzle-orm";
import { runs } from "../../app/db/schema";
import { claimRun, markDeadRuns, startHeartbeat } from "../../app/models/run-liveness.server";
import { machineClassOf, runMachineKey, shardPlanForSuite } from "./shard-plan";
import { Progress, type ProgressEvents } from "./progress";

export interface RunSuiteOptions {
  /** Suite name (bench/suites/<name>.json under root) or a path to a suite file. */
  suite: string;
  db: Db;
  /** Checkout being measured (problems/, bench/suites/); default the working directory. */
  root?: string;
  /** `--baseline <commit|branch>`; default: latest complete run on "main". */
  baseline?: string;
  /** Overrides the suite's `jobs`. */
  jobs?: number;
  signal?: AbortSignal;
  /** Progress bar stream (default stderr); null for none. */
  progress?: NodeJS.WriteStream | null;
  /** Machine-readable progress (JSON lines, see ./progress.ts), e.g. for the job worker. */
  events?: ProgressEvents | null;
  /** Send e-mail alerts for new regressions (default true). */
  alerts?: boolean;
  /** Base URL used in alert links. */
  baseUrl?: string;
  jobId?: number | null;
  onCase?: (outcome: CaseOutcome) => void;
  /** Run only part `index` of `count` of the suite (app/runs/shards.ts); no local regression check on a part. */
  shard?: { index: number; count: number } | null;
  /** A machine class label: the run is stored and compared under `class:<label>` (./shard-plan.ts). */
  machineClass?: string | null;
  /**
   * Put new speed regressions to an interleaved A/B at once (./ab.ts) before deciding the exit
   * code (`--confirm`): a slowdown the A/B clears is recorded with its verdict and raises nothing.
   */
  confirm?: boolean;
  /** Progress of the A/B run by `confirm`. */
  onConfirmTrial?: (info: { key: string; block: number; side: "A" | "B"; done: number; total: number }) => void;
}

export interface RunSummary {
  runId: string;
  status: "complete" | "interrupted" | "failed";
  suite: { name: string; file: string; contentHash: string; cases: number };
  /** The shard run, when sharded: its index of count and how many cases the whole suite has. */
  shard: { index: number; count: number; suiteCases: number } | null;
  machineClass: string;
  commit: CommitMeta;
  machineKey: string;
  calibration: { before: number; after: number | null };
  solver: { kind: string; label: string | null; repository: string | null };
  outcomes: CaseOutcome[];
  detection: Detection | null;
  alerts: AlertResult | null;
  elapsedSeconds: number;
  /** 0 ok, 3 new regression(s), 130 interrupted. */
  exitCode: number;
}

export const EXIT_REGRESSION = 3;
export const EXIT_INTERRUPTED = 130;

interface SolverPlan {
  executorModule: string;
  options: Record<string, unknown>;
  kind: string;
  label: string | null;
  repository: string | null;
}

function planSolver(suite: LoadedSuite, budgetSeconds: number): SolverPlan {
  const s = suite.definition.solver;
  const here = (f: string) => fileURLToPath(new URL(f, import.meta.url));
  const suiteDir = path.dirname(suite.file);
  if (s.kind === "external") {
    const repository = path.resolve(suiteDir, s.repository);
    return { executorModule: here("./external-executor.ts"), options: { command: s.command, repository, timeoutSeconds: budgetSeconds }, kind: "external", label: s.label, repository };
  }
  if (s.kind === "module") {
    return { executorModule: path.resolve(suiteDir, s.module), options: s.options, kind: "module", label: s.label ?? null, repository: null };
  }
  return { executorModule: here("./builtin-executor.ts"), options: {}, kind: "builtin", label: null, repository: null };
}

/** Stores one finished case with its problem's facts from the library. */
function recordOutcome(db: Db, runId: string, outcome: CaseOutcome, library: ProblemLibrary): void {
  const facts = library.facts(outcome.spec.problemId);
  insertCase(db, runId, caseRecordFromOutcome(outcome), facts ? { ...facts, versionHash: outcome.report?.versionHash ?? "unknown" } : null);
}

export async function runSuite(opts: RunSuiteOptions): Promise<RunSummary> {
  const t0 = Date.now();
  const root = path.resolve(opts.root ?? process.cwd());
  const library = problemLibraryFor(opts.db, root);
  // the suite file with the problems added or removed in the browser (suite_changes)
  const suite = loadSuiteWithChanges(opts.db, suitePath(opts.suite, root));
  const def = suite.definition;
  const allCases = expandCases(def, library);
  let cases = allCases;
  if (opts.shard) {
    const part = shardPlanForSuite(opts.db, opts.suite, opts.shard.count, opts.machineClass ?? null, root).plan.shards[opts.shard.index - 1]!;
    const keep = new Set(part);
    cases = allCases.filter((c) => keep.has(c.key));
  }
  // The previous run of this database whose process died is shown as interrupted from now on.
  markDeadRuns(opts.db);
  const plan = planSolver(suite, def.timeBudgetSeconds);
  const measuredRepo = plan.repository ?? root;
  const commit = await commitMeta(measuredRepo);

  let baseline: { commit?: string | null; branch?: string | null } = { branch: "main" };
  if (opts.baseline) {
    const full = await resolveCommit(measuredRepo, opts.baseline);
    // A ref that is a branch name stays a branch query (its latest run, not one commit's run).
    const isBranch = await resolveCommit(measuredRepo, `refs/heads/${opts.baseline}`);
    baseline = isBranch || !full ? { branch: opts.baseline } : { commit: full };
  }

  const jobs = opts.jobs ?? def.jobs;
  if (def.clock === "cpu" && jobs !== 1) throw new Error(`suite ${def.name}: clock "cpu" needs jobs = 1, got ${jobs}`);
  const machine = machineInfo();
  const key = runMachineKey(opts.machineClass);
  const machineClass = machineClassOf(opts.machineClass);
  const calBefore: Calibration = calibrate();
  const db = opts.db;
  const suiteId = ensureSuite(db, { name: def.name, contentHash: suite.contentHash, definition: def, thresholds: suite.thresholds });
  const runId = insertRun(db, {
    suiteId,
    commitHash: commit.commitHash,
    branch: commit.branch,
    dirty: commit.dirty,
    commitSubject: commit.subject,
    commitAuthor: commit.author,
    commitDate: commit.date,
    machine: { ...machine, fingerprint: machineKey(machine), calibration: { before: calBefore.seconds, kernel: calBefore.kernel }, suiteFile: path.relative(root, suite.file), solver: plan.kind, clock: def.clock, jobs },
    machineKey: key,
    calibrationSeconds: calBefore.seconds,
    solverLabel: plan.label,
    externalRepo: plan.repository,
    jobId: opts.jobId ?? null,
  });

  db.update(runs).set({ machineClass, statusNote: opts.shard ? `Shard ${opts.shard.index} of ${opts.shard.count}: ${cases.length} of the suite's ${allCases.length} cases (the server merges the shards into one run).` : null }).where(eq(runs.id, runId)).run();
  claimRun(db, runId);
  const stopHeartbeat = startHeartbeat(db, runId);
  const progress = new Progress(cases.length, opts.progress === undefined ? process.stderr : opts.progress, opts.events ?? null);
  progress.begin(runId, cases.map((c) => c.key));
  let recordError: Error | null = null;
  const outcomes = await runCases(cases, {
    jobs,
    clock: def.clock,
    budgetSeconds: def.timeBudgetSeconds,
    repeats: def.repeats,
    warmup: def.warmup,
    executorModule: plan.executorModule,
    context: { root, libraryRoots: [...library.roots], problemsDir: library.roots[0], options: plan.options },
    signal: opts.signal,
    onStart: (spec) => progress.start(spec.key),
    onDone: (outcome) => {
      try {
        recordOutcome(db, runId, outcome, library);
      } catch (err) {
        recordError ??= err as Error;
      }
      progress.finish(outcome.spec.key, outcome.status);
      opts.onCase?.(outcome);
    },
  });
  progress.end();
  stopHeartbeat();
  if (recordError) {
    finishRun(db, runId, "failed");
    throw recordError;
  }

  const interrupted = !!opts.signal?.aborted;
  const calAfter = interrupted ? null : calibrate();
  const allFailed = outcomes.length > 0 && outcomes.every((o) => o.status === "error" && o.message?.startsWith("executor failed to load"));
  const status = interrupted ? "interrupted" : allFailed ? "failed" : "complete";
  finishRun(db, runId, status, { calibration: { before: calBefore.seconds, after: calAfter?.seconds ?? null, kernel: calBefore.kernel } });

  let detection: Detection | null = null;
  let alerts: AlertResult | null = null;
  // A part of a suite is not judged alone: the server checks the merged run once all parts are in.
  detection = opts.shard ? null : afterRun(db, runId, { baseline });
  if (detection && (detection.newRegressions > 0 || (opts.confirm && detection.suspects?.length)) && !interrupted && (opts.alerts !== false || opts.confirm)) {
    // Speed findings wait for an interleaved A/B verdict (a queued "ab" job, or with `confirm` one
    // run here and now); the rest are e-mailed at once.
    const confirmNow = opts.confirm
      ? async (p: { base: string; head: string; suite: string; cases: string[]; blocks?: number; maxBlocks?: number; groups?: AbGroup[] }) => {
          // Cases of the speed regressions and of the screened schemes (app/services/ab-confirm.server.ts).
          const { runAb } = await import("./ab");
          const r = await runAb({ db, root, base: p.base, head: p.head, suite: suite.file, cases: p.cases, blocks: p.blocks, maxBlocks: p.maxBlocks, groups: p.groups, signal: opts.signal, onTrial: opts.onConfirmTrial });
          // JSON has no NaN: the stored document is what `bench --ab --json` prints.
          return abResultSchema.parse(JSON.parse(JSON.stringify(r)));
        }
      : undefined;
    alerts = await alertOrConfirm(db, { runId, suiteName: def.name, commit, detection, baseUrl: opts.baseUrl, root, alerts: opts.alerts !== false, confirmNow });
  }
  const standing = alerts ? alerts.standing : (detection?.newRegressions ?? 0);
  const exitCode = interrupted ? EXIT_INTERRUPTED : standing > 0 ? EXIT_REGRESSION : 0;
  return {
    runId,
    status,
    suite: { name: def.name, file: suite.file, contentHash: suite.contentHash, cases: cases.length },
    shard: opts.shard ? { ...opts.shard, suiteCases: allCases.length } : null,
    machineClass,
    commit,
    machineKey: key,
    calibration: { before: calBefore.seconds, after: calAfter?.seconds ?? null },
    solver: { kind: plan.kind, label: plan.label, repository: plan.repository },
    outcomes,
    detection,
    alerts,
    elapsedSeconds: (Date.now() - t0) / 1000,
    exitCode,
  };
}

export { tally } from "./table";
