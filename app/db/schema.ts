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
export * from "./tables/common";
export * from "./tables/people";
export * from "./tables/problems";
export * from "./tables/runs";
export * from "./tables/regressions";
export * from "./tables/work";

import type { users, authThrottle, sessions, apiTokens } from "./tables/people";
import type { problems, problemVersions, problemReferences, suites, suiteChanges } from "./tables/problems";
import type { runs, caseResults, runShards, shardPlans, timingSamples } from "./tables/runs";
import type { regressions, regressionEvents, comments, subscriptions } from "./tables/regressions";
import type { outbox, jobs, thresholdSettings } from "./tables/work";

// Row types
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
