CREATE TABLE `comments` (
	`id` text PRIMARY KEY NOT NULL,
	`sheet_id` text NOT NULL,
	`lab_id` text NOT NULL,
	`cell_id` text NOT NULL,
	`snapshot_id` text,
	`parent_id` text,
	`text` text NOT NULL,
	`author_id` text NOT NULL,
	`resolved` integer DEFAULT false NOT NULL,
	`resolved_by` text,
	`created_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`sheet_id`) REFERENCES `sheets`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`snapshot_id`) REFERENCES `snapshots`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`author_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `comments_sheet_idx` ON `comments` (`sheet_id`,`created_at`);--> statement-breakpoint
CREATE TABLE `guest_links` (
	`id` text PRIMARY KEY NOT NULL,
	`snapshot_id` text NOT NULL,
	`lab_id` text NOT NULL,
	`token_hash` text NOT NULL,
	`note` text NOT NULL,
	`created_by` text NOT NULL,
	`created_at` integer NOT NULL,
	`expires_at` integer NOT NULL,
	`revoked_at` integer,
	`view_count` integer DEFAULT 0 NOT NULL,
	`last_view_at` integer,
	FOREIGN KEY (`snapshot_id`) REFERENCES `snapshots`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `guest_links_token_hash_unique` ON `guest_links` (`token_hash`);--> statement-breakpoint
CREATE INDEX `guest_links_snapshot_idx` ON `guest_links` (`snapshot_id`);--> statement-breakpoint
CREATE TABLE `review_decisions` (
	`review_id` text NOT NULL,
	`reviewer_id` text NOT NULL,
	`decision` text,
	`note` text,
	`snapshot_hash` text,
	`decided_at` integer,
	PRIMARY KEY(`review_id`, `reviewer_id`),
	FOREIGN KEY (`review_id`) REFERENCES `reviews`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`reviewer_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `review_decisions_reviewer_idx` ON `review_decisions` (`reviewer_id`);--> statement-breakpoint
CREATE TABLE `reviews` (
	`id` text PRIMARY KEY NOT NULL,
	`snapshot_id` text NOT NULL,
	`sheet_id` text NOT NULL,
	`lab_id` text NOT NULL,
	`requested_by` text NOT NULL,
	`note` text NOT NULL,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`snapshot_id`) REFERENCES `snapshots`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`sheet_id`) REFERENCES `sheets`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`requested_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `reviews_lab_idx` ON `reviews` (`lab_id`,`created_at`);--> statement-breakpoint
CREATE INDEX `reviews_snapshot_idx` ON `reviews` (`snapshot_id`);--> statement-breakpoint
CREATE TABLE `snapshots` (
	`id` text PRIMARY KEY NOT NULL,
	`sheet_id` text NOT NULL,
	`lab_id` text NOT NULL,
	`doc_state` blob NOT NULL,
	`file` text NOT NULL,
	`results` text NOT NULL,
	`engine_version` text NOT NULL,
	`hash` text NOT NULL,
	`message` text NOT NULL,
	`created_by` text NOT NULL,
	`created_at` integer NOT NULL,
	FOREIGN KEY (`sheet_id`) REFERENCES `sheets`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `snapshots_sheet_idx` ON `snapshots` (`sheet_id`,`created_at`);