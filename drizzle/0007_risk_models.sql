CREATE TABLE `risk_models` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`target_kind` text NOT NULL,
	`target_code` text NOT NULL,
	`version` integer NOT NULL,
	`spec` text NOT NULL,
	`status` text DEFAULT 'training' NOT NULL,
	`progress` real DEFAULT 0 NOT NULL,
	`progress_text` text,
	`error` text,
	`terms` text,
	`lambda` real,
	`effective_df` real,
	`validation` text,
	`method` text,
	`beats_baseline` integer DEFAULT false NOT NULL,
	`active` integer DEFAULT false NOT NULL,
	`train_from` integer,
	`train_to` integer,
	`trained_by` text,
	`trained_by_name` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`finished_at` integer,
	FOREIGN KEY (`trained_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `risk_models_target_version_uq` ON `risk_models` (`target_kind`,`target_code`,`version`);--> statement-breakpoint
CREATE UNIQUE INDEX `risk_models_one_active_uq` ON `risk_models` (`target_kind`,`target_code`) WHERE active = 1;--> statement-breakpoint
CREATE TABLE `slab_risks` (
	`slab_id` integer NOT NULL,
	`model_id` integer NOT NULL,
	`risk` real NOT NULL,
	`reasons` text NOT NULL,
	`scored_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	PRIMARY KEY(`slab_id`, `model_id`),
	FOREIGN KEY (`slab_id`) REFERENCES `slabs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`model_id`) REFERENCES `risk_models`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `slab_risks_model_risk_idx` ON `slab_risks` (`model_id`,`risk`);