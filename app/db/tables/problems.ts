/** Problems, their versions and references, suites and the changes made to suites from the browser. Conventions: app/db/schema.ts. */
import { sql } from "drizzle-orm";
import { check, index, integer, real, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";
import { createdAt } from "./common";
import { users } from "./people";

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
