CREATE TABLE `regression_members` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`regression_id` integer NOT NULL,
	`case_key` text NOT NULL,
	`problem_id` text NOT NULL,
	`ratio` real,
	FOREIGN KEY (`regression_id`) REFERENCES `regressions`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `regression_members_unique` ON `regression_members` (`regression_id`,`case_key`);--> statement-breakpoint
CREATE TABLE `regression_sightings` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`regression_id` integer NOT NULL,
	`run_id` text NOT NULL,
	`commit_hash` text NOT NULL,
	`ratio` real,
	`ci_low` real,
	`ci_high` real,
	`p_value` real,
	`seen_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`regression_id`) REFERENCES `regressions`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `regression_sightings_unique` ON `regression_sightings` (`regression_id`,`run_id`);--> statement-breakpoint
CREATE INDEX `regression_sightings_run_idx` ON `regression_sightings` (`run_id`);--> statement-breakpoint
ALTER TABLE `regressions` ADD `scope` text DEFAULT 'case' NOT NULL;