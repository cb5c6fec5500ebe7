CREATE TABLE `threshold_settings` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`suite_name` text NOT NULL,
	`thresholds_json` text NOT NULL,
	`status` text DEFAULT 'proposed' NOT NULL,
	`note` text,
	`proposed_by_id` integer,
	`decided_by_id` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	`decided_at` integer,
	FOREIGN KEY (`proposed_by_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`decided_by_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "threshold_settings_status_check" CHECK("threshold_settings"."status" in ('proposed', 'saved', 'rejected', 'superseded'))
);
--> statement-breakpoint
CREATE INDEX `threshold_settings_suite_status_idx` ON `threshold_settings` (`suite_name`,`status`,`created_at`);