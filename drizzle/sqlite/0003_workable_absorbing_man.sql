CREATE TABLE `datasets` (
	`id` text PRIMARY KEY NOT NULL,
	`lab_id` text NOT NULL,
	`sheet_id` text,
	`name` text NOT NULL,
	`source_name` text,
	`uploaded_by` text,
	`created_at` integer NOT NULL,
	`columns` text NOT NULL,
	`values` blob NOT NULL,
	FOREIGN KEY (`lab_id`) REFERENCES `labs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`sheet_id`) REFERENCES `sheets`(`id`) ON UPDATE no action ON DELETE set null,
	FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE set null
);
--> statement-breakpoint
CREATE INDEX `datasets_lab_idx` ON `datasets` (`lab_id`);--> statement-breakpoint
CREATE INDEX `datasets_sheet_idx` ON `datasets` (`sheet_id`);