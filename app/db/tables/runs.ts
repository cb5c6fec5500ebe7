/** Runs and results: runs, cases, shards and shard plans, timing samples. Conventions: app/db/schema.ts. */
import { sql } from "drizzle-orm";
import { check, index, integer, real, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";
import { RUN_STATUSES, SHARD_STATES, inList, createdAt } from "./common";
import { apiTokens } from "./people";
import { problems, suites } from "./problems";
import { jobs } from "./work";

export const runs = sqliteTable(
  "runs",
  {
    /** UUID (crypto.randomUUID()). */
    id: text("id").primaryKey(),
    suiteId: integer("suite_id")
      .notNull()
      .references(() => suites.id, { onDelete: "restrict" }),
    commitHash: text("commit_hash").notNull(),
    branch: text("branch"),
    /** True when the work tree had uncommitted changes. */
    dirty: integer("dirty", { mode: "boolean" }).notNull().default(false),
    commitSubject: text("commit_subject"),
    commitAuthor: text("commit_author"),
    commitDate: integer("commit_date", { mode: "timestamp_ms" }),
    /** CPU model, cores, memory, OS, Node version... as recorded by the runner. */
    machineJson: text("machine_json", { mode: "json" }).$type<unknown>().notNull(),
    /** Hex SHA-256 of the fields of `machine_json` that make timings comparable. */
    machineKey: text("machine_key").notNull(),
    startedAt: integer("started_at", { mode: "timestamp_ms" }).notNull(),
    finishedAt: integer("finished_at", { mode: "timestamp_ms" }),
    status: text("status", { enum: RUN_STATUSES }).notNull().default("running"),
    /** Seconds taken by the fixed calibration workload on this machine at run start. */
    calibrationSeconds: real("calibration_seconds"),
    /** Label of the solver under test when it is not Arcwatch's own (external repository runs). */
    solverLabel: text("solver_label"),
    externalRepo: text("external_repo"),
    /** Demo data seeded by `npm start`, never mixed into real baselines. */
    isDemo: integer("is_demo", { mode: "boolean" }).notNull().default(false),
    /** The job that produced this run, when started from the browser. */
    jobId: integer("job_id").references(() => jobs.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    /** The API token that uploaded this run (an upload token may read back its own runs). */
    uploadedByTokenId: integer("uploaded_by_token_id").references(() => apiTokens.id, { onDelete: "set null" }),
    /**
     * Sharded runs: `<commit>:<suite content hash>:<pipeline id>`; every shard upload with this key
     * becomes a part of this one run (see run_shards). Null for a run recorded in one piece.
     */
    groupKey: text("group_key"),
    /** Number of shards the run was split into (null: not sharded). */
    shardCount: integer("shard_count"),
    /** A sharded run still waiting after this time is closed as incomplete, naming the missing shards. */
    shardDeadlineAt: integer("shard_deadline_at", { mode: "timestamp_ms" }),
    /** Machine class timings are compared within: a label set by the runner, else the machine key. */
    machineClass: text("machine_class"),
    /** False when the shards of a merged run came from different machine classes: accuracy is checked, timings are not compared. */
    timingsCompared: integer("timings_compared", { mode: "boolean" }).notNull().default(true),
    /** Where the recording process runs (host name and pid), for the heartbeat check; never shown to viewers as more than "host". */
    runnerHost: text("runner_host"),
    runnerPid: integer("runner_pid"),
    /** Refreshed by a running recorder; a "running" run whose heartbeat stopped is marked interrupted. */
    heartbeatAt: integer("heartbeat_at", { mode: "timestamp_ms" }),
    /** Why a run ended as it did when the status alone does not say (heartbeat lost, shards missing). */
    statusNote: text("status_note"),
  },
  (t) => [
    uniqueIndex("runs_group_key_unique").on(t.groupKey).where(sql`${t.groupKey} is not null`),
    index("runs_suite_machine_started_idx").on(t.suiteId, t.machineKey, t.startedAt),
    index("runs_commit_idx").on(t.commitHash),
    index("runs_started_idx").on(t.startedAt),
    index("runs_status_idx").on(t.status),
    check("runs_status_check", sql`${t.status} in (${inList(RUN_STATUSES)})`),
  ],
);

/** One case = one (problem, scheme, intervals, degree) solved in one run. */
export const caseResults = sqliteTable(
  "case_results",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    problemId: text("problem_id")
      .notNull()
      .references(() => problems.id, { onDelete: "restrict" }),
    problemVersionHash: text("problem_version_hash").notNull(),
    /** Stable key across runs: `<problemId>/<scheme>/<intervals>[x<degree>]`. */
    caseKey: text("case_key").notNull(),
    scheme: text("scheme").notNull(),
    intervals: integer("intervals").notNull(),
    degree: integer("degree"),
    /** NLP status (optimal, acceptable, infeasible, ...) or a runner status such as "error" / "timeout". */
    status: text("status").notNull(),
    objective: real("objective"),
    objectiveErrorAbs: real("objective_error_abs"),
    objectiveErrorRel: real("objective_error_rel"),
    finalTime: real("final_time"),
    finalTimeError: real("final_time_error"),
    stateError: real("state_error"),
    controlError: real("control_error"),
    /** Terminal miss when the recovered controls are re-simulated by an adaptive integrator. */
    resimMiss: real("resim_miss"),
    constraintViolation: real("constraint_violation"),
    iterations: integer("iterations"),
    medianSeconds: real("median_seconds"),
    meanSeconds: real("mean_seconds"),
    stddevSeconds: real("stddev_seconds"),
    minSeconds: real("min_seconds"),
    sampleCount: integer("sample_count").notNull().default(0),
    arcsJson: text("arcs_json", { mode: "json" }).$type<unknown>(),
    trajectoryJson: text("trajectory_json", { mode: "json" }).$type<unknown>(),
    iterationLogJson: text("iteration_log_json", { mode: "json" }).$type<unknown>(),
    message: text("message"),
    createdAt: createdAt(),
    /**
     * Largest per-interval relative error estimate of the final mesh (app/engine/mesh/estimate.ts:
     * Betts 2010 §4.7.2 for local schemes, Patterson–Hager–Rao 2015 for LGR); null when the solve did
     * not converge or the runner gave none.
     */
    meshErrorMax: real("mesh_error_max"),
    /** The estimate per interval, { method, t: breakpoints in time (N + 1), error: per interval (N) }. */
    meshErrorJson: text("mesh_error_json", { mode: "json" }).$type<unknown>(),
    /** Adaptive refinement: the tolerance asked for; null for a uniform mesh. */
    meshTolerance: real("mesh_tolerance"),
    /** Adaptive refinement: number of solves (passes). */
    meshPasses: integer("mesh_passes"),
    /** Mesh points of the final mesh (intervals + 1; LGR Σ K_s + 1). */
    meshPoints: integer("mesh_points"),
    /** Adaptive refinement: whether the final largest estimate is within the tolerance. */
    meshToleranceMet: integer("mesh_tolerance_met", { mode: "boolean" }),
    /** Adaptive refinement: one entry per pass { intervals, points, status, iterations, seconds, maxEstimate }. */
    refinementJson: text("refinement_json", { mode: "json" }).$type<unknown>(),
  },
  (t) => [
    uniqueIndex("case_results_run_case_unique").on(t.runId, t.caseKey),
    index("case_results_case_key_idx").on(t.caseKey),
    index("case_results_problem_scheme_idx").on(t.problemId, t.scheme),
    /** Solved/failed counts per run (runs table, sorted by them) read from this index alone. */
    index("case_results_run_status_idx").on(t.runId, t.status),
    check("case_results_intervals_check", sql`${t.intervals} > 0`),
    check("case_results_sample_count_check", sql`${t.sampleCount} >= 0`),
  ],
);

/**
 * One shard of a sharded run: which part of the suite (index of count), the machine it ran on and
 * its own timing, and the client's run id (a second upload of the same shard is recognised by it
 * or by the index and stores nothing).
 */
export const runShards = sqliteTable(
  "run_shards",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    /** 1-based. */
    shardIndex: integer("shard_index").notNull(),
    shardCount: integer("shard_count").notNull(),
    state: text("state", { enum: SHARD_STATES }).notNull().default("received"),
    /** The run id the shard had on its runner (payload run.id). */
    sourceRunId: text("source_run_id"),
    machineJson: text("machine_json", { mode: "json" }).$type<unknown>(),
    machineKey: text("machine_key"),
    machineClass: text("machine_class"),
    startedAt: integer("started_at", { mode: "timestamp_ms" }),
    finishedAt: integer("finished_at", { mode: "timestamp_ms" }),
    /** The shard's own status as its runner ended it (complete, interrupted, failed). */
    sourceStatus: text("source_status"),
    caseCount: integer("case_count").notNull().default(0),
    calibrationSeconds: real("calibration_seconds"),
    tokenId: integer("token_id").references(() => apiTokens.id, { onDelete: "set null" }),
    receivedAt: createdAt("received_at"),
  },
  (t) => [
    uniqueIndex("run_shards_run_index_unique").on(t.runId, t.shardIndex),
    check("run_shards_state_check", sql`${t.state} in (${inList(SHARD_STATES)})`),
    check("run_shards_index_check", sql`${t.shardIndex} >= 1 and ${t.shardIndex} <= ${t.shardCount}`),
  ],
);

/**
 * A shard plan frozen the first time it was made, so that a case stays in its shard while the
 * suite (its content hash and the cases it expands to) and the machine class do not change.
 */
export const shardPlans = sqliteTable(
  "shard_plans",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    suiteContentHash: text("suite_content_hash").notNull(),
    /** SHA-256 of the sorted case keys the suite expanded to. */
    caseSetHash: text("case_set_hash").notNull(),
    machineClass: text("machine_class").notNull(),
    shardCount: integer("shard_count").notNull(),
    /** `{ shards: string[][], expectedSeconds: Record<caseKey, number>, basis: Record<caseKey, "history" | "mesh"> }`. */
    planJson: text("plan_json", { mode: "json" }).$type<unknown>().notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("shard_plans_key_unique").on(t.suiteContentHash, t.caseSetHash, t.machineClass, t.shardCount)],
);

/**
 * Raw wall-clock samples of one case, one row per case with a JSON array of seconds.
 * Samples are only ever read all together (rank tests, bootstrap intervals) and never
 * filtered one by one, so a row per sample would multiply rows and insert cost for nothing.
 */
export const timingSamples = sqliteTable("timing_samples", {
  caseResultId: integer("case_result_id")
    .primaryKey()
    .references(() => caseResults.id, { onDelete: "cascade" }),
  samplesJson: text("samples_json", { mode: "json" }).$type<number[]>().notNull(),
});
