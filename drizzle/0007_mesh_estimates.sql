ALTER TABLE `case_results` ADD `mesh_error_max` real;--> statement-breakpoint
ALTER TABLE `case_results` ADD `mesh_error_json` text;--> statement-breakpoint
ALTER TABLE `case_results` ADD `mesh_tolerance` real;--> statement-breakpoint
ALTER TABLE `case_results` ADD `mesh_passes` integer;--> statement-breakpoint
ALTER TABLE `case_results` ADD `mesh_points` integer;--> statement-breakpoint
ALTER TABLE `case_results` ADD `mesh_tolerance_met` integer;--> statement-breakpoint
ALTER TABLE `case_results` ADD `refinement_json` text;