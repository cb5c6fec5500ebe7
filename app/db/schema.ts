/**
 * Arcwatch database schema (SQLite through Drizzle ORM).
 *
 * Conventions
 * - Timestamps are integers in milliseconds since the Unix epoch (`mode: "timestamp_ms"`,
 *   read back as `Date`). Columns that have a creation time default to "now" both in
 *   TypeScript (`$defaultFn`) and in SQL (so raw inserts get it too).
 * - Columns whose name ends in `Json` hold JSON text; their TypeScript type is given with
 *   `$type<...>()` and Drizzle parses/serialises them (`mode: "json"`).
 * - Enumerations are text with a CHECK constraint; their values are exported as `as const`
 *   arrays so that zod schemas and UI pickers use the same list.
 * - Indexes live in the table definitions. Row types: `XRow = typeof x.$inferSelect`,
 *   `NewX = typeof x.$inferInsert`.
 *
 * Migrations are generated with `npx drizzle-kit generate` into drizzle/ and applied at
 * start-up by app/db/migrate.server.ts. Never edit a migration once it is committed.
 */
import { sql } from "drizzle-orm";
import {
  check,
  index,
  integer,
  real,
  sqliteTable,
  text,
  uniqueIndex,
} from "drizzle-orm/sqlite-core";

// ---------------------------------------------------------------------------------------
// Enumerations
// ---------------------------------------------------------------------------------------

/** viewer reads everything; engineer starts runs, triages, adds problems; admin manages users, roles, tokens, thresholds. */
export const ROLES = ["viewer", "engineer", "admin"] as const;
export type Role = (typeof ROLES)[number];

export const RUN_STATUSES = ["running", "complete", "interrupted", "failed"] as const;
export type RunStatus = (typeof RUN_STATUSES)[number];

export const REGRESSION_KINDS = ["accuracy", "robustness", "speed", "structure", "drift"] as const;
export type RegressionKind = (typeof REGRESSION_KINDS)[number];

/** Scope of a regression row: one case, or a pooled group of cases (app/runs/pooled.ts). */
export const REGRESSION_SCOPES = ["case", "scheme", "problem", "suite"] as const;
export type RegressionScope = (typeof REGRESSION_SCOPES)[number];

export const REGRESSION_DIRECTIONS = ["regression", "improvement"] as const;
export type RegressionDirection = (typeof REGRESSION_DIRECTIONS)[number];

export const REGRESSION_STATUSES = ["open", "acknowledged", "expected", "fixed"] as const;
export type RegressionStatus = (typeof REGRESSION_STATUSES)[number];

export const JOB_STATUSES = ["queued", "running", "done", "failed", "cancelled", "died"] as const;
export type JobStatus = (typeof JOB_STATUSES)[number];

/** "full": acts with its role everywhere; "upload": may only upload runs and read its own uploads (a CI runner). */
export const TOKEN_SCOPES = ["full", "upload"] as const;
export type TokenScope = (typeof TOKEN_SCOPES)[number];

/** States of one shard of a sharded run: uploaded, or never came before the group's deadline. */
export const SHARD_STATES = ["received", "missing"] as const;
export type ShardState = (typeof SHARD_STATES)[number];

export const COMMENT_TARGETS = ["regression", "run", "problem", "case"] as const;
export type CommentTarget = (typeof COMMENT_TARGETS)[number];

/** SQL `IN (...)` list for a CHECK constraint over one of the enumerations above. */
function inList(values: readonly string[]) {
  return sql.raw(values.map((v) => `'${v.replace(/'/g, "''")}'`).join(", "));
}

/** A NOT NULL millisecond timestamp defaulting to "now" in TypeScript and in SQL. */
const createdAt = (name = "created_at") =>
  integer(name, { mode: "timestamp_ms" })
    .notNull()
    .default(sql`(cast(unixepoch('subsec') * 1000 as integer))`)
    .$defaultFn(() => new Date());

// ---------------------------------------------------------------------------------------
// People and access
// ---------------------------------------------------------------------------------------

export const users = sqliteTable(
  "users",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** Stored lower-cased and trimmed; unique. */
    email: text("email").notNull(),
    name: text("name").notNull(),
    role: text("role", { enum: ROLES }).notNull().default("viewer"),
    /** PHC string from argon2id (`$argon2id$v=19$m=...`). */
    passwordHash: text("password_hash").notNull(),
    /** Bumped to invalidate every cookie session of this user (password change, role change, disable). */
    sessionVersion: integer("session_version").notNull().default(1),
    disabledAt: integer("disabled_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }),
    lastSignInAt: integer("last_sign_in_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    uniqueIndex("users_email_unique").on(t.email),
    check("users_role_check", sql`${t.role} in (${inList(ROLES)})`),
    check("users_email_check", sql`${t.email} = lower(trim(${t.email})) and instr(${t.email}, '@') > 1`),
  ],
);

/**
 * Failed sign-in counters, one row per throttle key: `account:<email>` or `ip:<address>`.
 * Sessions live in the `sessions` table below (the cookie carries only their id).
 */
export const authThrottle = sqliteTable("auth_throttle", {
  key: text("key").primaryKey(),
  /** Failures counted since `window_start`. */
  failures: integer("failures").notNull().default(0),
  windowStart: integer("window_start", { mode: "timestamp_ms" }).notNull(),
  lastFailureAt: integer("last_failure_at", { mode: "timestamp_ms" }).notNull(),
  /** While in the future, sign-in attempts for this key are refused without checking the password. */
  lockedUntil: integer("locked_until", { mode: "timestamp_ms" }),
});

/**
 * Server-side sign-in sessions. The cookie holds only a random 256-bit session id (signed);
 * the row is keyed by the id's SHA-256, so a copy of the database does not hand out live
 * sessions. Signing out deletes the row; a session ends at `expires_at` (absolute) or after
 * an idle period since `last_seen_at` (app/services/session.server.ts).
 */
export const sessions = sqliteTable(
  "sessions",
  {
    /** Hex SHA-256 of the session id in the cookie. */
    idHash: text("id_hash").primaryKey(),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    createdAt: createdAt(),
    /** Refreshed at most once a minute. */
    lastSeenAt: integer("last_seen_at", { mode: "timestamp_ms" }).notNull(),
    /** Absolute end of the session. */
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
    /** User-Agent at sign-in (at most 300 characters), to recognise the session in the list. */
    userAgent: text("user_agent"),
    /** Client address at sign-in. */
    address: text("address"),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
);

export const apiTokens = sqliteTable(
  "api_tokens",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    name: text("name").notNull(),
    /** Hex SHA-256 of the full token; the token itself is shown once and never stored. */
    tokenHash: text("token_hash").notNull(),
    /** First characters of the token (e.g. `aw_3f9c2e1a`), shown in lists to recognise it. */
    prefix: text("prefix").notNull(),
    /** The token acts with this role (never above its creator's role at creation). */
    role: text("role", { enum: ROLES }).notNull().default("engineer"),
    createdById: integer("created_by_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    lastUsedAt: integer("last_used_at", { mode: "timestamp_ms" }),
    revokedAt: integer("revoked_at", { mode: "timestamp_ms" }),
    /**
     * "upload": a runner token (uploads runs, reads its own uploads, nothing else). No CHECK here:
     * adding one would rebuild the table; tokens.server.ts writes only TOKEN_SCOPES values.
     */
    scope: text("scope", { enum: TOKEN_SCOPES }).notNull().default("full"),
    /** When set, an upload token may only upload runs of the suite with this name. */
    suiteName: text("suite_name"),
  },
  (t) => [
    uniqueIndex("api_tokens_hash_unique").on(t.tokenHash),
    check("api_tokens_role_check", sql`${t.role} in (${inList(ROLES)})`),
  ],
);

// ---------------------------------------------------------------------------------------
// Problems, references, suites
// ---------------------------------------------------------------------------------------

/** One row per problem folder; `id` is the folder name under problems/. */
export const problems = sqliteTable("problems", {
  id: text("id").primaryKey(),
  title: text("title").notNull(),
  description: text("description").notNull().default(""),
  tagsJson: text("tags_json", { mode: "json" }).$type<string[]>().notNull().default(sql`'[]'`),
  createdAt: createdAt(),
  updatedAt: integer("updated_at", { mode: "timestamp_ms" }),
});

/** Every distinct content of a problem file ever seen; results point at the version they solved. */
export const problemVersions = sqliteTable(
  "problem_versions",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    problemId: text("problem_id")
      .notNull()
      .references(() => problems.id, { onDelete: "cascade" }),
    /** Hex SHA-256 of the canonical problem JSON (plus reference files). */
    contentHash: text("content_hash").notNull(),
    json: text("json").notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("problem_versions_problem_hash_unique").on(t.problemId, t.contentHash),
    index("problem_versions_hash_idx").on(t.contentHash),
  ],
);

/** Trusted answers attached to one problem version. `source` tells where they came from. */
export const problemReferences = sqliteTable(
  "problem_references",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    problemVersionId: integer("problem_version_id")
      .notNull()
      .references(() => problemVersions.id, { onDelete: "cascade" }),
    /** "file" (from problem.json / reference.csv) or "refined" (computed by shooting), etc. */
    source: text("source").notNull().default("file"),
    objective: real("objective"),
    objectiveTolerance: real("objective_tolerance"),
    finalTime: real("final_time"),
    finalTimeTolerance: real("final_time_tolerance"),
    switchingTimesJson: text("switching_times_json", { mode: "json" }).$type<number[]>(),
    arcsJson: text("arcs_json", { mode: "json" }).$type<string[]>(),
    /** `{ t: number[], columns: Record<string, number[]> }` or similar; see the writer. */
    trajectoryJson: text("trajectory_json", { mode: "json" }).$type<unknown>(),
    /** Per-quantity provenance as in the problem file format (`{ objective: {kind, citation}, ... }`). */
    provenanceJson: text("provenance_json", { mode: "json" }).$type<unknown>(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("problem_references_version_source_unique").on(t.problemVersionId, t.source)],
);

/** A suite definition (which problems × schemes × meshes) as seen at one content hash. */
export const suites = sqliteTable(
  "suites",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    name: text("name").notNull(),
    contentHash: text("content_hash").notNull(),
    definitionJson: text("definition_json", { mode: "json" }).$type<unknown>().notNull(),
    thresholdsJson: text("thresholds_json", { mode: "json" }).$type<unknown>(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("suites_name_hash_unique").on(t.name, t.contentHash), index("suites_name_idx").on(t.name)],
);

/**
 * Changes to a suite made in the browser (app/runs/suite-changes.ts): add or remove one problem,
 * versioned per suite name, with who and when. Applied on top of the suite file wherever suites
 * are resolved (app/models/suite-changes.server.ts); never edited, only appended.
 */
export const suiteChanges = sqliteTable(
  "suite_changes",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    suiteName: text("suite_name").notNull(),
    /** 1, 2, … per suite name. */
    version: integer("version").notNull(),
    action: text("action", { enum: ["add", "remove"] }).notNull(),
    problemId: text("problem_id").notNull(),
    userId: integer("user_id").references(() => users.id, { onDelete: "set null" }),
    /** Who, as shown then (kept when the account is deleted). */
    userLabel: text("user_label").notNull(),
    note: text("note").notNull().default(""),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("suite_changes_suite_version_unique").on(t.suiteName, t.version), check("suite_changes_action_check", sql`${t.action} in ('add', 'remove')`)],
);

// ---------------------------------------------------------------------------------------
// Runs and results
// ---------------------------------------------------------------------------------------

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

// ---------------------------------------------------------------------------------------
// Regressions and triage
// ---------------------------------------------------------------------------------------

export const regressions = sqliteTable(
  "regressions",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    baselineRunId: text("baseline_run_id").references(() => runs.id, { onDelete: "set null" }),
    caseKey: text("case_key").notNull(),
    kind: text("kind", { enum: REGRESSION_KINDS }).notNull(),
    direction: text("direction", { enum: REGRESSION_DIRECTIONS }).notNull(),
    /** Which quantity moved: "objective_error_rel", "median_seconds", "status", "arcs", ... */
    metric: text("metric").notNull(),
    before: real("before"),
    after: real("after"),
    ratio: real("ratio"),
    pValue: real("p_value"),
    ciLow: real("ci_low"),
    ciHigh: real("ci_high"),
    status: text("status", { enum: REGRESSION_STATUSES }).notNull().default("open"),
    assigneeId: integer("assignee_id").references(() => users.id, { onDelete: "set null" }),
    reason: text("reason"),
    fixingCommit: text("fixing_commit"),
    createdAt: createdAt(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }),
    /** "case", or the group of a pooled finding ("scheme", "problem", "suite"; case_key is "<scope>:<name>"). */
    scope: text("scope", { enum: REGRESSION_SCOPES }).notNull().default("case"),
  },
  (t) => [
    index("regressions_status_idx").on(t.status),
    index("regressions_run_idx").on(t.runId),
    index("regressions_case_key_idx").on(t.caseKey),
    check("regressions_kind_check", sql`${t.kind} in (${inList(REGRESSION_KINDS)})`),
    check("regressions_direction_check", sql`${t.direction} in (${inList(REGRESSION_DIRECTIONS)})`),
    check("regressions_status_check", sql`${t.status} in (${inList(REGRESSION_STATUSES)})`),
    check("regressions_p_value_check", sql`${t.pValue} is null or (${t.pValue} >= 0 and ${t.pValue} <= 1)`),
  ],
);

/** The member cases of a group regression (scope ≠ "case"), each with its own median ratio. */
export const regressionMembers = sqliteTable(
  "regression_members",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    regressionId: integer("regression_id")
      .notNull()
      .references(() => regressions.id, { onDelete: "cascade" }),
    caseKey: text("case_key").notNull(),
    problemId: text("problem_id").notNull(),
    ratio: real("ratio"),
  },
  (t) => [uniqueIndex("regression_members_unique").on(t.regressionId, t.caseKey)],
);

/**
 * Every run a regression was seen in: the run that found it, and later runs of the same branch
 * (consecutive commits) whose same finding was folded into it instead of opening a new one, so
 * its triage carries over.
 */
export const regressionSightings = sqliteTable(
  "regression_sightings",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    regressionId: integer("regression_id")
      .notNull()
      .references(() => regressions.id, { onDelete: "cascade" }),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    commitHash: text("commit_hash").notNull(),
    ratio: real("ratio"),
    ciLow: real("ci_low"),
    ciHigh: real("ci_high"),
    pValue: real("p_value"),
    seenAt: createdAt("seen_at"),
  },
  (t) => [uniqueIndex("regression_sightings_unique").on(t.regressionId, t.runId), index("regression_sightings_run_idx").on(t.runId)],
);

/** Triage history: one row per status change or note on a regression. */
export const regressionEvents = sqliteTable(
  "regression_events",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    regressionId: integer("regression_id")
      .notNull()
      .references(() => regressions.id, { onDelete: "cascade" }),
    /** Null for changes made by the system (e.g. marked fixed by a later run). */
    userId: integer("user_id").references(() => users.id, { onDelete: "set null" }),
    /** The API token the change was made with (null: a browser session or the system). */
    apiTokenId: integer("api_token_id").references(() => apiTokens.id, { onDelete: "set null" }),
    at: createdAt("at"),
    fromStatus: text("from_status", { enum: REGRESSION_STATUSES }),
    toStatus: text("to_status", { enum: REGRESSION_STATUSES }),
    note: text("note"),
  },
  (t) => [
    index("regression_events_regression_idx").on(t.regressionId, t.at),
    check(
      "regression_events_status_check",
      sql`(${t.fromStatus} is null or ${t.fromStatus} in (${inList(REGRESSION_STATUSES)})) and (${t.toStatus} is null or ${t.toStatus} in (${inList(REGRESSION_STATUSES)}))`,
    ),
  ],
);

export const comments = sqliteTable(
  "comments",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    targetType: text("target_type", { enum: COMMENT_TARGETS }).notNull(),
    /** Regression id, run uuid, problem id or case result id, as text. */
    targetId: text("target_id").notNull(),
    body: text("body").notNull(),
    /** The API token the comment was posted with (null: a browser session). */
    apiTokenId: integer("api_token_id").references(() => apiTokens.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    editedAt: integer("edited_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    index("comments_target_idx").on(t.targetType, t.targetId, t.createdAt),
    check("comments_target_check", sql`${t.targetType} in (${inList(COMMENT_TARGETS)})`),
    check("comments_body_check", sql`length(trim(${t.body})) > 0`),
  ],
);

/** A user asks to be told (by e-mail) about regressions on one problem or one suite (by name). */
export const subscriptions = sqliteTable(
  "subscriptions",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    problemId: text("problem_id").references(() => problems.id, { onDelete: "cascade" }),
    suiteName: text("suite_name"),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("subscriptions_user_problem_unique").on(t.userId, t.problemId).where(sql`${t.problemId} is not null`),
    uniqueIndex("subscriptions_user_suite_unique").on(t.userId, t.suiteName).where(sql`${t.suiteName} is not null`),
    check("subscriptions_one_target_check", sql`(${t.problemId} is null) <> (${t.suiteName} is null)`),
  ],
);

// ---------------------------------------------------------------------------------------
// Mail and background work
// ---------------------------------------------------------------------------------------

export const outbox = sqliteTable(
  "outbox",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    to: text("to").notNull(),
    subject: text("subject").notNull(),
    body: text("body").notNull(),
    createdAt: createdAt(),
    sentAt: integer("sent_at", { mode: "timestamp_ms" }),
    attempts: integer("attempts").notNull().default(0),
    /** Last delivery error, if any. */
    error: text("error"),
  },
  (t) => [index("outbox_unsent_idx").on(t.sentAt, t.createdAt)],
);

export const jobs = sqliteTable(
  "jobs",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** "bench", "refine", ... */
    kind: text("kind").notNull(),
    payloadJson: text("payload_json", { mode: "json" }).$type<unknown>().notNull(),
    status: text("status", { enum: JOB_STATUSES }).notNull().default("queued"),
    /** Process id of the worker child while running (checked to detect a died job). */
    pid: integer("pid"),
    progressJson: text("progress_json", { mode: "json" }).$type<unknown>(),
    log: text("log").notNull().default(""),
    error: text("error"),
    createdById: integer("created_by_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    startedAt: integer("started_at", { mode: "timestamp_ms" }),
    heartbeatAt: integer("heartbeat_at", { mode: "timestamp_ms" }),
    finishedAt: integer("finished_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    index("jobs_status_created_idx").on(t.status, t.createdAt),
    check("jobs_status_check", sql`${t.status} in (${inList(JOB_STATUSES)})`),
  ],
);

// ---------------------------------------------------------------------------------------
// Settings
// ---------------------------------------------------------------------------------------

export const THRESHOLD_SETTING_STATUSES = ["proposed", "saved", "rejected", "superseded"] as const;
export type ThresholdSettingStatus = (typeof THRESHOLD_SETTING_STATUSES)[number];

/**
 * Regression thresholds of a suite set from the settings page: an engineer proposes a set
 * (status "proposed"), an admin saves it ("saved"; the previous saved set of that suite becomes
 * "superseded") or rejects it. The latest saved set overrides the suite file's `thresholds`
 * key by key (see app/models/settings.server.ts `effectiveThresholds`).
 */
export const thresholdSettings = sqliteTable(
  "threshold_settings",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    suiteName: text("suite_name").notNull(),
    /** Partial `Thresholds` (app/runs/types.ts): only the keys that differ from the file. */
    thresholdsJson: text("thresholds_json", { mode: "json" }).$type<Record<string, number | boolean>>().notNull(),
    status: text("status", { enum: THRESHOLD_SETTING_STATUSES }).notNull().default("proposed"),
    note: text("note"),
    proposedById: integer("proposed_by_id").references(() => users.id, { onDelete: "set null" }),
    decidedById: integer("decided_by_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    decidedAt: integer("decided_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    index("threshold_settings_suite_status_idx").on(t.suiteName, t.status, t.createdAt),
    check("threshold_settings_status_check", sql`${t.status} in (${inList(THRESHOLD_SETTING_STATUSES)})`),
  ],
);

// ---------------------------------------------------------------------------------------
// Interleaved A/B checks
// ---------------------------------------------------------------------------------------

export const AB_CHECK_STATES = ["awaiting", "confirmed", "cleared", "unavailable"] as const;
export type AbCheckState = (typeof AB_CHECK_STATES)[number];

/**
 * One interleaved A/B comparison of two commits (an "ab" job): asked for from a page, or queued
 * automatically to confirm a suspected speed regression before it is reported. `regressionIds`
 * are the regressions it judges; `resultJson` the verdict (app/runs/ab-result.ts); `alertsHeld`
 * whether their e-mail waits for this check.
 */
export const abChecks = sqliteTable(
  "ab_checks",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    jobId: integer("job_id").references(() => jobs.id, { onDelete: "set null" }),
    suiteName: text("suite_name").notNull(),
    baseCommit: text("base_commit").notNull(),
    headCommit: text("head_commit").notNull(),
    casesJson: text("cases_json", { mode: "json" }).$type<string[]>().notNull(),
    regressionIds: text("regression_ids", { mode: "json" }).$type<number[]>().notNull(),
    /** Run whose detection queued it (automatic checks), for the alert's links. */
    runId: text("run_id").references(() => runs.id, { onDelete: "set null" }),
    auto: integer("auto", { mode: "boolean" }).notNull().default(false),
    alertsHeld: integer("alerts_held", { mode: "boolean" }).notNull().default(false),
    state: text("state", { enum: AB_CHECK_STATES }).notNull().default("awaiting"),
    resultJson: text("result_json", { mode: "json" }).$type<unknown>(),
    note: text("note"),
    createdAt: createdAt(),
    finishedAt: integer("finished_at", { mode: "timestamp_ms" }),
  },
  (t) => [index("ab_checks_job_idx").on(t.jobId), check("ab_checks_state_check", sql`${t.state} in (${inList(AB_CHECK_STATES)})`)],
);

// ---------------------------------------------------------------------------------------
// Row types
// ---------------------------------------------------------------------------------------

export type UserRow = typeof users.$inferSelect;
export type NewUser = typeof users.$inferInsert;
export type AuthThrottleRow = typeof authThrottle.$inferSelect;
export type SessionRow = typeof sessions.$inferSelect;
export type ApiTokenRow = typeof apiTokens.$inferSelect;
export type NewApiToken = typeof apiTokens.$inferInsert;
export type ProblemRow = typeof problems.$inferSelect;
export type NewProblem = typeof problems.$inferInsert;
export type ProblemVersionRow = typeof problemVersions.$inferSelect;
export type NewProblemVersion = typeof problemVersions.$inferInsert;
export type ProblemReferenceRow = typeof problemReferences.$inferSelect;
export type NewProblemReference = typeof problemReferences.$inferInsert;
export type SuiteRow = typeof suites.$inferSelect;
export type NewSuite = typeof suites.$inferInsert;
export type SuiteChangeRow = typeof suiteChanges.$inferSelect;
export type RunRow = typeof runs.$inferSelect;
export type NewRun = typeof runs.$inferInsert;
export type CaseResultRow = typeof caseResults.$inferSelect;
export type NewCaseResult = typeof caseResults.$inferInsert;
export type TimingSamplesRow = typeof timingSamples.$inferSelect;
export type NewTimingSamples = typeof timingSamples.$inferInsert;
export type RegressionRow = typeof regressions.$inferSelect;
export type NewRegression = typeof regressions.$inferInsert;
export type RegressionEventRow = typeof regressionEvents.$inferSelect;
export type NewRegressionEvent = typeof regressionEvents.$inferInsert;
export type CommentRow = typeof comments.$inferSelect;
export type NewComment = typeof comments.$inferInsert;
export type SubscriptionRow = typeof subscriptions.$inferSelect;
export type NewSubscription = typeof subscriptions.$inferInsert;
export type OutboxRow = typeof outbox.$inferSelect;
export type NewOutbox = typeof outbox.$inferInsert;
export type JobRow = typeof jobs.$inferSelect;
export type NewJob = typeof jobs.$inferInsert;
export type RunShardRow = typeof runShards.$inferSelect;
export type NewRunShard = typeof runShards.$inferInsert;
export type ShardPlanRow = typeof shardPlans.$inferSelect;
export type ThresholdSettingRow = typeof thresholdSettings.$inferSelect;
export type NewThresholdSetting = typeof thresholdSettings.$inferInsert;
