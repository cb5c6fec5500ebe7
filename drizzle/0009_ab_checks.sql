CREATE TABLE `ab_checks` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`job_id` integer,
	`suite_name` text NOT NULL,
	`base_commit` text NOT NULL,
	`head_commit` text NOT NULL,
	`cases_json` text NOT NULL,
	`regression_ids` text NOT NULL,
	`run_id` text,
	`auto` integer DEFAULT false NOT NULL,
	`alerts_held` integer DEFAULT false NOT NULL,
	`state` text DEFAULT 'awaiting' NOT NULL,
	`result_json` text,
	`note` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`finished_at` integer,
	FOREIGN KEY (`job_id`) REFERENCES `jobs`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "ab_checks_state_check" CHECK("ab_checks"."state" in ('awaiting', 'confirmed', 'cleared', 'unavailable'))
);
--> statement-breakpoint
CREATE INDEX `ab_checks_job_idx` ON `ab_checks` (`job_id`);