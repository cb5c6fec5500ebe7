/** Regressions and triage: findings, group members, sightings, triage events, comments, subscriptions. Conventions: app/db/schema.ts. */
import { sql } from "drizzle-orm";
import { check, index, integer, real, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";
import { REGRESSION_KINDS, REGRESSION_SCOPES, REGRESSION_DIRECTIONS, REGRESSION_STATUSES, COMMENT_TARGETS, inList, createdAt } from "./common";
import { users, apiTokens } from "./people";
import { problems } from "./problems";
import { runs } from "./runs";

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
