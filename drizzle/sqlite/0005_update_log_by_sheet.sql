-- The update log keyed by (sheet, seq) and stored WITHOUT ROWID (added by hand to drizzle-kit's output: drizzle does
-- not declare it). An append then writes one B-tree page instead of a rowid table page, an index page and the
-- AUTOINCREMENT counter's page. Existing rows keep their seqs.
PRAGMA foreign_keys=OFF;--> statement-breakpoint
CREATE TABLE `__new_sheet_updates` (
	`sheet_id` text NOT NULL,
	`seq` integer NOT NULL,
	`update` blob NOT NULL,
	`user_id` text,
	`created_at` integer NOT NULL,
	PRIMARY KEY(`sheet_id`, `seq`),
	FOREIGN KEY (`sheet_id`) REFERENCES `sheets`(`id`) ON UPDATE no action ON DELETE cascade
) WITHOUT ROWID;
--> statement-breakpoint
INSERT INTO `__new_sheet_updates`("sheet_id", "seq", "update", "user_id", "created_at") SELECT "sheet_id", "seq", "update", "user_id", "created_at" FROM `sheet_updates`;--> statement-breakpoint
DROP TABLE `sheet_updates`;--> statement-breakpoint
ALTER TABLE `__new_sheet_updates` RENAME TO `sheet_updates`;--> statement-breakpoint
PRAGMA foreign_keys=ON;