CREATE TABLE `run_shards` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` text NOT NULL,
	`shard_index` integer NOT NULL,
	`shard_count` integer NOT NULL,
	`state` text DEFAULT 'received' NOT NULL,
	`source_run_id` text,
	`machine_json` text,
	`machine_key` text,
	`machine_class` text,
	`started_at` integer,
	`finished_at` integer,
	`source_status` text,
	`case_count` integer DEFAULT 0 NOT NULL,
	`calibration_seconds` real,
	`token_id` integer,
	`received_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`token_id`) REFERENCES `api_tokens`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "run_shards_state_check" CHECK("run_shards"."state" in ('received', 'missing')),
	CONSTRAINT "run_shards_index_check" CHECK("run_shards"."shard_index" >= 1 and "run_shards"."shard_index" <= "run_shards"."shard_count")
);
--> statement-breakpoint
CREATE UNIQUE INDEX `run_shards_run_index_unique` ON `run_shards` (`run_id`,`shard_index`);--> statement-breakpoint
CREATE TABLE `shard_plans` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`suite_content_hash` text NOT NULL,
	`case_set_hash` text NOT NULL,
	`machine_class` text NOT NULL,
	`shard_count` integer NOT NULL,
	`plan_json` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `shard_plans_key_unique` ON `shard_plans` (`suite_content_hash`,`case_set_hash`,`machine_class`,`shard_count`);--> statement-breakpoint
ALTER TABLE `api_tokens` ADD `scope` text DEFAULT 'full' NOT NULL;--> statement-breakpoint
ALTER TABLE `api_tokens` ADD `suite_name` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `uploaded_by_token_id` integer REFERENCES api_tokens(id);--> statement-breakpoint
ALTER TABLE `runs` ADD `group_key` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `shard_count` integer;--> statement-breakpoint
ALTER TABLE `runs` ADD `shard_deadline_at` integer;--> statement-breakpoint
ALTER TABLE `runs` ADD `machine_class` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `timings_compared` integer DEFAULT true NOT NULL;--> statement-breakpoint
ALTER TABLE `runs` ADD `runner_host` text;--> statement-breakpoint
ALTER TABLE `runs` ADD `runner_pid` integer;--> statement-breakpoint
ALTER TABLE `runs` ADD `heartbeat_at` integer;--> statement-breakpoint
ALTER TABLE `runs` ADD `status_note` text;--> statement-breakpoint
CREATE UNIQUE INDEX `runs_group_key_unique` ON `runs` (`group_key`) WHERE "runs"."group_key" is not null;