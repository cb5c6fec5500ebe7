CREATE TABLE `suite_changes` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`suite_name` text NOT NULL,
	`version` integer NOT NULL,
	`action` text NOT NULL,
	`problem_id` text NOT NULL,
	`user_id` integer,
	`user_label` text NOT NULL,
	`note` text DEFAULT '' NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsec') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null,
	CONSTRAINT "suite_changes_action_check" CHECK("suite_changes"."action" in ('add', 'remove'))
);
--> statement-breakpoint
CREATE UNIQUE INDEX `suite_changes_suite_version_unique` ON `suite_changes` (`suite_name`,`version`);