CREATE TABLE `api_tokens` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`token_hash` text NOT NULL,
	`prefix` text NOT NULL,
	`role` text DEFAULT 'engineer' NOT NULL,
	`created_by_id` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	FOREIGN KEY (`created_by_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "api_tokens_role_check" CHECK("api_tokens"."role" in ('viewer', 'engineer', 'admin'))
);
--> statement-breakpoint
CREATE UNIQUE INDEX `api_tokens_hash_unique` ON `api_tokens` (`token_hash`);--> statement-breakpoint
CREATE TABLE `auth_throttle` (
	`key` text PRIMARY KEY NOT NULL,
	`failures` integer DEFAULT 0 NOT NULL,
	`window_start` integer NOT NULL,
	`last_failure_at` integer NOT NULL,
	`locked_until` integer
);
--> statement-breakpoint
CREATE TABLE `case_results` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` text NOT NULL,
	`problem_id` text NOT NULL,
	`problem_version_hash` text NOT NULL,
	`case_key` text NOT NULL,
	`scheme` text NOT NULL,
	`intervals` integer NOT NULL,
	`degree` integer,
	`status` text NOT NULL,
	`objective` real,
	`objective_error_abs` real,
	`objective_error_rel` real,
	`final_time` real,
	`final_time_error` real,
	`state_error` real,
	`control_error` real,
	`resim_miss` real,
	`constraint_violation` real,
	`iterations` integer,
	`median_seconds` real,
	`mean_seconds` real,
	`stddev_seconds` real,
	`min_seconds` real,
	`sample_count` integer DEFAULT 0 NOT NULL,
	`arcs_json` text,
	`trajectory_json` text,
	`iteration_log_json` text,
	`message` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`problem_id`) REFERENCES `problems`(`id`) ON UPDATE no action ON DELETE restrict,
	CONSTRAINT "case_results_intervals_check" CHECK("case_results"."intervals" > 0),
	CONSTRAINT "case_results_sample_count_check" CHECK("case_results"."sample_count" >= 0)
);
--> statement-breakpoint
CREATE UNIQUE INDEX `case_results_run_case_unique` ON `case_results` (`run_id`,`case_key`);--> statement-breakpoint
CREATE INDEX `case_results_case_key_idx` ON `case_results` (`case_key`);--> statement-breakpoint
CREATE INDEX `case_results_problem_scheme_idx` ON `case_results` (`problem_id`,`scheme`);--> statement-breakpoint
CREATE TABLE `comments` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`target_type` text NOT NULL,
	`target_id` text NOT NULL,
	`body` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`edited_at` integer,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade,
	CONSTRAINT "comments_target_check" CHECK("comments"."target_type" in ('regression', 'run', 'problem', 'case')),
	CONSTRAINT "comments_body_check" CHECK(length(trim("comments"."body")) > 0)
);
--> statement-breakpoint
CREATE INDEX `comments_target_idx` ON `comments` (`target_type`,`target_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `jobs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`kind` text NOT NULL,
	`payload_json` text NOT NULL,
	`status` text DEFAULT 'queued' NOT NULL,
	`pid` integer,
	`progress_json` text,
	`log` text DEFAULT '' NOT NULL,
	`error` text,
	`created_by_id` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`started_at` integer,
	`heartbeat_at` integer,
	`finished_at` integer,
	FOREIGN KEY (`created_by_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "jobs_status_check" CHECK("jobs"."status" in ('queued', 'running', 'done', 'failed', 'cancelled', 'died'))
);
--> statement-breakpoint
CREATE INDEX `jobs_status_created_idx` ON `jobs` (`status`,`created_at`);--> statement-breakpoint
CREATE TABLE `outbox` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`to` text NOT NULL,
	`subject` text NOT NULL,
	`body` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`sent_at` integer,
	`attempts` integer DEFAULT 0 NOT NULL,
	`error` text
);
--> statement-breakpoint
CREATE INDEX `outbox_unsent_idx` ON `outbox` (`sent_at`,`created_at`);--> statement-breakpoint
CREATE TABLE `problem_references` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`problem_version_id` integer NOT NULL,
	`source` text DEFAULT 'file' NOT NULL,
	`objective` real,
	`objective_tolerance` real,
	`final_time` real,
	`final_time_tolerance` real,
	`switching_times_json` text,
	`arcs_json` text,
	`trajectory_json` text,
	`provenance_json` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`problem_version_id`) REFERENCES `problem_versions`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `problem_references_version_source_unique` ON `problem_references` (`problem_version_id`,`source`);--> statement-breakpoint
CREATE TABLE `problem_versions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`problem_id` text NOT NULL,
	`content_hash` text NOT NULL,
	`json` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`problem_id`) REFERENCES `problems`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `problem_versions_problem_hash_unique` ON `problem_versions` (`problem_id`,`content_hash`);--> statement-breakpoint
CREATE INDEX `problem_versions_hash_idx` ON `problem_versions` (`content_hash`);--> statement-breakpoint
CREATE TABLE `problems` (
	`id` text PRIMARY KEY NOT NULL,
	`title` text NOT NULL,
	`description` text DEFAULT '' NOT NULL,
	`tags_json` text DEFAULT '[]' NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`updated_at` integer
);
--> statement-breakpoint
CREATE TABLE `regression_events` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`regression_id` integer NOT NULL,
	`user_id` integer,
	`at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`from_status` text,
	`to_status` text,
	`note` text,
	FOREIGN KEY (`regression_id`) REFERENCES `regressions`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "regression_events_status_check" CHECK(("regression_events"."from_status" is null or "regression_events"."from_status" in ('open', 'acknowledged', 'expected', 'fixed')) and ("regression_events"."to_status" is null or "regression_events"."to_status" in ('open', 'acknowledged', 'expected', 'fixed')))
);
--> statement-breakpoint
CREATE INDEX `regression_events_regression_idx` ON `regression_events` (`regression_id`,`at`);--> statement-breakpoint
CREATE TABLE `regressions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` text NOT NULL,
	`baseline_run_id` text,
	`case_key` text NOT NULL,
	`kind` text NOT NULL,
	`direction` text NOT NULL,
	`metric` text NOT NULL,
	`before` real,
	`after` real,
	`ratio` real,
	`p_value` real,
	`ci_low` real,
	`ci_high` real,
	`status` text DEFAULT 'open' NOT NULL,
	`assignee_id` integer,
	`reason` text,
	`fixing_commit` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`updated_at` integer,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`baseline_run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`assignee_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "regressions_kind_check" CHECK("regressions"."kind" in ('accuracy', 'robustness', 'speed', 'structure', 'drift')),
	CONSTRAINT "regressions_direction_check" CHECK("regressions"."direction" in ('regression', 'improvement')),
	CONSTRAINT "regressions_status_check" CHECK("regressions"."status" in ('open', 'acknowledged', 'expected', 'fixed')),
	CONSTRAINT "regressions_p_value_check" CHECK("regressions"."p_value" is null or ("regressions"."p_value" >= 0 and "regressions"."p_value" <= 1))
);
--> statement-breakpoint
CREATE INDEX `regressions_status_idx` ON `regressions` (`status`);--> statement-breakpoint
CREATE INDEX `regressions_run_idx` ON `regressions` (`run_id`);--> statement-breakpoint
CREATE INDEX `regressions_case_key_idx` ON `regressions` (`case_key`);--> statement-breakpoint
CREATE TABLE `runs` (
	`id` text PRIMARY KEY NOT NULL,
	`suite_id` integer NOT NULL,
	`commit_hash` text NOT NULL,
	`branch` text,
	`dirty` integer DEFAULT false NOT NULL,
	`commit_subject` text,
	`commit_author` text,
	`commit_date` integer,
	`machine_json` text NOT NULL,
	`machine_key` text NOT NULL,
	`started_at` integer NOT NULL,
	`finished_at` integer,
	`status` text DEFAULT 'running' NOT NULL,
	`calibration_seconds` real,
	`solver_label` text,
	`external_repo` text,
	`is_demo` integer DEFAULT false NOT NULL,
	`job_id` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`suite_id`) REFERENCES `suites`(`id`) ON UPDATE no action ON DELETE restrict,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "runs_status_check" CHECK("runs"."status" in ('running', 'complete', 'interrupted', 'failed'))
);
--> statement-breakpoint
CREATE INDEX `runs_suite_machine_started_idx` ON `runs` (`suite_id`,`machine_key`,`started_at`);--> statement-breakpoint
CREATE INDEX `runs_commit_idx` ON `runs` (`commit_hash`);--> statement-breakpoint
CREATE INDEX `runs_started_idx` ON `runs` (`started_at`);--> statement-breakpoint
CREATE INDEX `runs_status_idx` ON `runs` (`status`);--> statement-breakpoint
CREATE TABLE `subscriptions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`problem_id` text,
	`suite_name` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`problem_id`) REFERENCES `problems`(`id`) ON UPDATE no action ON DELETE cascade,
	CONSTRAINT "subscriptions_one_target_check" CHECK(("subscriptions"."problem_id" is null) <> ("subscriptions"."suite_name" is null))
);
--> statement-breakpoint
CREATE UNIQUE INDEX `subscriptions_user_problem_unique` ON `subscriptions` (`user_id`,`problem_id`) WHERE "subscriptions"."problem_id" is not null;--> statement-breakpoint
CREATE UNIQUE INDEX `subscriptions_user_suite_unique` ON `subscriptions` (`user_id`,`suite_name`) WHERE "subscriptions"."suite_name" is not null;--> statement-breakpoint
CREATE TABLE `suites` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`content_hash` text NOT NULL,
	`definition_json` text NOT NULL,
	`thresholds_json` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `suites_name_hash_unique` ON `suites` (`name`,`content_hash`);--> statement-breakpoint
CREATE INDEX `suites_name_idx` ON `suites` (`name`);--> statement-breakpoint
CREATE TABLE `timing_samples` (
	`case_result_id` integer PRIMARY KEY NOT NULL,
	`samples_json` text NOT NULL,
	FOREIGN KEY (`case_result_id`) REFERENCES `case_results`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`email` text NOT NULL,
	`name` text NOT NULL,
	`role` text DEFAULT 'viewer' NOT NULL,
	`password_hash` text NOT NULL,
	`session_version` integer DEFAULT 1 NOT NULL,
	`disabled_at` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`updated_at` integer,
	`last_sign_in_at` integer,
	CONSTRAINT "users_role_check" CHECK("users"."role" in ('viewer', 'engineer', 'admin')),
	CONSTRAINT "users_email_check" CHECK("users"."email" = lower(trim("users"."email")) and instr("users"."email", '@') > 1)
);
--> statement-breakpoint
CREATE UNIQUE INDEX `users_email_unique` ON `users` (`email`);