CREATE TABLE `operating_windows` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`family_id` integer,
	`target_kind` text,
	`target_code` text,
	`conditions` text NOT NULL,
	`note` text,
	`created_by` text,
	`created_by_name` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`retired_at` integer,
	FOREIGN KEY (`family_id`) REFERENCES `grade_families`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `operating_windows_live_name_uq` ON `operating_windows` (`name`) WHERE retired_at is null;--> statement-breakpoint
CREATE TABLE `risk_drift_checks` (
	`model_id` integer NOT NULL,
	`month` text NOT NULL,
	`slabs` integer NOT NULL,
	`affected` integer NOT NULL,
	`predicted` real NOT NULL,
	`observed` real NOT NULL,
	`citl` real,
	`auc` real,
	`drifted` integer DEFAULT false NOT NULL,
	`reason` text,
	`checked_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`alerted_at` integer,
	PRIMARY KEY(`model_id`, `month`),
	FOREIGN KEY (`model_id`) REFERENCES `risk_models`(`id`) ON UPDATE no action ON DELETE cascade
);
