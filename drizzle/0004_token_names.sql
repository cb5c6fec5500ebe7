ALTER TABLE `comments` ADD `api_token_id` integer REFERENCES api_tokens(id);--> statement-breakpoint
ALTER TABLE `regression_events` ADD `api_token_id` integer REFERENCES api_tokens(id);