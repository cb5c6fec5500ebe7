/** Enumerations shared by tables, zod schemas and pickers; helpers for CHECK lists and creation times. Conventions: app/db/schema.ts. */
import { sql } from "drizzle-orm";
import { integer } from "drizzle-orm/sqlite-core";

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
export function inList(values: readonly string[]) {
  return sql.raw(values.map((v) => `'${v.replace(/'/g, "''")}'`).join(", "));
}

/** A NOT NULL millisecond timestamp defaulting to "now" in TypeScript and in SQL. */
export const createdAt = (name = "created_at") =>
  integer(name, { mode: "timestamp_ms" })
    .notNull()
    .default(sql`(cast(unixepoch('subsec') * 1000 as integer))`)
    .$defaultFn(() => new Date());
