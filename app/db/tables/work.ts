/** Background work and settings: mail outbox, jobs, threshold settings, interleaved A/B checks. Conventions: app/db/schema.ts. */
import { sql } from "drizzle-orm";
import { check, index, integer, sqliteTable, text } from "drizzle-orm/sqlite-core";
import { JOB_STATUSES, inList, createdAt } from "./common";
import { users } from "./people";
import { runs } from "./runs";

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
