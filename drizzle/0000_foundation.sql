CREATE TABLE `account` (
	`id` text PRIMARY KEY NOT NULL,
	`account_id` text NOT NULL,
	`provider_id` text NOT NULL,
	`user_id` text NOT NULL,
	`access_token` text,
	`refresh_token` text,
	`id_token` text,
	`access_token_expires_at` integer,
	`refresh_token_expires_at` integer,
	`scope` text,
	`password` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `account_user_idx` ON `account` (`user_id`);--> statement-breakpoint
CREATE TABLE `api_tokens` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`token_hash` text NOT NULL,
	`prefix` text NOT NULL,
	`scopes` text DEFAULT 'ingest' NOT NULL,
	`created_by` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `api_tokens_token_hash_unique` ON `api_tokens` (`token_hash`);--> statement-breakpoint
CREATE TABLE `attachments` (
	`id` text PRIMARY KEY NOT NULL,
	`owner_kind` text NOT NULL,
	`owner_id` integer NOT NULL,
	`file_name` text NOT NULL,
	`stored_file` text NOT NULL,
	`mime` text NOT NULL,
	`bytes` integer NOT NULL,
	`sha256` text NOT NULL,
	`created_by` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `attachments_owner_idx` ON `attachments` (`owner_kind`,`owner_id`);--> statement-breakpoint
CREATE TABLE `audit_log` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`user_id` text,
	`actor` text,
	`action` text NOT NULL,
	`entity` text NOT NULL,
	`entity_id` text,
	`before` text,
	`after` text
);
--> statement-breakpoint
CREATE INDEX `audit_entity_idx` ON `audit_log` (`entity`,`entity_id`);--> statement-breakpoint
CREATE INDEX `audit_at_idx` ON `audit_log` (`at`);--> statement-breakpoint
CREATE TABLE `casters` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`works_name` text NOT NULL,
	`machine_type` text DEFAULT 'curved' NOT NULL,
	`radius_m` real,
	`active` integer DEFAULT true NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `casters_code_unique` ON `casters` (`code`);--> statement-breakpoint
CREATE TABLE `cause_groups` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`sort_order` integer DEFAULT 0 NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `cause_groups_code_unique` ON `cause_groups` (`code`);--> statement-breakpoint
CREATE TABLE `cause_tags` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`group_id` integer NOT NULL,
	`description` text,
	`retired_at` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`group_id`) REFERENCES `cause_groups`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `cause_tags_code_unique` ON `cause_tags` (`code`);--> statement-breakpoint
CREATE INDEX `cause_tags_group_idx` ON `cause_tags` (`group_id`);--> statement-breakpoint
CREATE TABLE `claim_slabs` (
	`claim_id` integer NOT NULL,
	`slab_id` integer NOT NULL,
	`linked_via` text NOT NULL,
	`linked_by` text,
	`linked_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	PRIMARY KEY(`claim_id`, `slab_id`),
	FOREIGN KEY (`claim_id`) REFERENCES `claims`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`slab_id`) REFERENCES `slabs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`linked_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `claim_slabs_slab_idx` ON `claim_slabs` (`slab_id`);--> statement-breakpoint
CREATE TABLE `claims` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`claim_no` text NOT NULL,
	`customer` text NOT NULL,
	`product_ids` text DEFAULT '' NOT NULL,
	`received_on` text NOT NULL,
	`defect_complained` text NOT NULL,
	`quantity_t` real,
	`status` text DEFAULT 'new' NOT NULL,
	`notes` text,
	`created_by` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `claims_claim_no_unique` ON `claims` (`claim_no`);--> statement-breakpoint
CREATE INDEX `claims_status_idx` ON `claims` (`status`,`received_on`);--> statement-breakpoint
CREATE TABLE `defect_categories` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`sort_order` integer DEFAULT 0 NOT NULL,
	`active` integer DEFAULT true NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `defect_categories_code_unique` ON `defect_categories` (`code`);--> statement-breakpoint
CREATE TABLE `defect_causes` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`defect_id` integer NOT NULL,
	`tag_id` integer NOT NULL,
	`confidence` text NOT NULL,
	`note` text,
	`created_by` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`removed_at` integer,
	`removed_by` text,
	FOREIGN KEY (`defect_id`) REFERENCES `defects`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`tag_id`) REFERENCES `cause_tags`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`removed_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `defect_causes_defect_idx` ON `defect_causes` (`defect_id`);--> statement-breakpoint
CREATE INDEX `defect_causes_tag_idx` ON `defect_causes` (`tag_id`,`defect_id`);--> statement-breakpoint
CREATE TABLE `defect_photos` (
	`id` text PRIMARY KEY NOT NULL,
	`defect_id` integer NOT NULL,
	`display_file` text NOT NULL,
	`display_mime` text NOT NULL,
	`thumb_file` text NOT NULL,
	`width` integer NOT NULL,
	`height` integer NOT NULL,
	`bytes` integer NOT NULL,
	`sha256` text NOT NULL,
	`original_name` text,
	`client_key` text,
	`created_by` text,
	`deleted_at` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`defect_id`) REFERENCES `defects`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `defect_photos_client_key_unique` ON `defect_photos` (`client_key`);--> statement-breakpoint
CREATE INDEX `defect_photos_defect_idx` ON `defect_photos` (`defect_id`);--> statement-breakpoint
CREATE TABLE `defect_types` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`category_id` integer NOT NULL,
	`description` text,
	`active` integer DEFAULT true NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`category_id`) REFERENCES `defect_categories`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `defect_types_code_unique` ON `defect_types` (`code`);--> statement-breakpoint
CREATE INDEX `defect_types_category_idx` ON `defect_types` (`category_id`);--> statement-breakpoint
CREATE TABLE `defects` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`slab_id` integer NOT NULL,
	`type_id` integer NOT NULL,
	`face` text NOT NULL,
	`position_along_mm` real,
	`position_across_mm` real,
	`length_mm` real,
	`width_mm` real,
	`depth_mm` real,
	`severity` integer NOT NULL,
	`stage` text NOT NULL,
	`disposition` text NOT NULL,
	`note` text,
	`review_status` text DEFAULT 'new' NOT NULL,
	`reviewed_by` text,
	`reviewed_at` integer,
	`client_key` text,
	`found_at` integer NOT NULL,
	`created_by` text,
	`deleted_at` integer,
	`deleted_by` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`slab_id`) REFERENCES `slabs`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`type_id`) REFERENCES `defect_types`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`reviewed_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`deleted_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `defects_client_key_unique` ON `defects` (`client_key`);--> statement-breakpoint
CREATE INDEX `defects_slab_idx` ON `defects` (`slab_id`);--> statement-breakpoint
CREATE INDEX `defects_type_slab_idx` ON `defects` (`type_id`,`slab_id`);--> statement-breakpoint
CREATE INDEX `defects_found_at_idx` ON `defects` (`found_at`);--> statement-breakpoint
CREATE INDEX `defects_review_idx` ON `defects` (`review_status`,`created_at`);--> statement-breakpoint
CREATE INDEX `defects_created_by_idx` ON `defects` (`created_by`,`created_at`);--> statement-breakpoint
CREATE TABLE `email_outbox` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`kind` text NOT NULL,
	`from_address` text NOT NULL,
	`to_addresses` text NOT NULL,
	`subject` text NOT NULL,
	`text_body` text NOT NULL,
	`html_body` text,
	`attachments` text,
	`status` text DEFAULT 'queued' NOT NULL,
	`attempts` integer DEFAULT 0 NOT NULL,
	`next_attempt_at` integer,
	`last_error` text,
	`sent_at` integer,
	`message_id` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE INDEX `email_outbox_status_idx` ON `email_outbox` (`status`,`next_attempt_at`);--> statement-breakpoint
CREATE TABLE `grade_families` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`description` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `grade_families_code_unique` ON `grade_families` (`code`);--> statement-breakpoint
CREATE TABLE `grades` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`family_id` integer NOT NULL,
	`c_aim_pct` real,
	`active` integer DEFAULT true NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`family_id`) REFERENCES `grade_families`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `grades_code_unique` ON `grades` (`code`);--> statement-breakpoint
CREATE INDEX `grades_family_idx` ON `grades` (`family_id`);--> statement-breakpoint
CREATE TABLE `heats` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`heat_no` text NOT NULL,
	`sequence_id` integer,
	`sequence_position` integer,
	`caster_id` integer NOT NULL,
	`grade_id` integer NOT NULL,
	`cast_start` integer NOT NULL,
	`cast_end` integer,
	`ladle_weight_t` real,
	`tundish_change` integer DEFAULT false NOT NULL,
	`casting_speed_m_min` real NOT NULL,
	`tundish_temp_c` real,
	`liquidus_c` real,
	`liquidus_source` text,
	`superheat_c` real,
	`superheat_source` text,
	`embr_current_a` real,
	`sen_depth_mm` real,
	`argon_nl_min` real,
	`mold_level_sd_mm` real,
	`c_pct` real,
	`si_pct` real,
	`mn_pct` real,
	`p_pct` real,
	`s_pct` real,
	`al_pct` real,
	`cu_pct` real,
	`ni_pct` real,
	`cr_pct` real,
	`mo_pct` real,
	`ti_pct` real,
	`nb_pct` real,
	`v_pct` real,
	`n_ppm` real,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`sequence_id`) REFERENCES `sequences`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`caster_id`) REFERENCES `casters`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`grade_id`) REFERENCES `grades`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `heats_heat_no_unique` ON `heats` (`heat_no`);--> statement-breakpoint
CREATE INDEX `heats_cast_start_idx` ON `heats` (`cast_start`);--> statement-breakpoint
CREATE INDEX `heats_grade_idx` ON `heats` (`grade_id`);--> statement-breakpoint
CREATE INDEX `heats_sequence_idx` ON `heats` (`sequence_id`,`sequence_position`);--> statement-breakpoint
CREATE INDEX `heats_caster_idx` ON `heats` (`caster_id`,`cast_start`);--> statement-breakpoint
CREATE TABLE `investigation_actions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`investigation_id` integer NOT NULL,
	`description` text NOT NULL,
	`owner_id` text,
	`due_on` text,
	`status` text DEFAULT 'open' NOT NULL,
	`completed_at` integer,
	`overdue_notified_at` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`investigation_id`) REFERENCES `investigations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`owner_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `investigation_actions_inv_idx` ON `investigation_actions` (`investigation_id`);--> statement-breakpoint
CREATE INDEX `investigation_actions_due_idx` ON `investigation_actions` (`status`,`due_on`);--> statement-breakpoint
CREATE TABLE `investigation_hypotheses` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`investigation_id` integer NOT NULL,
	`statement` text NOT NULL,
	`cause_tag_id` integer,
	`status` text DEFAULT 'open' NOT NULL,
	`created_by` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`investigation_id`) REFERENCES `investigations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`cause_tag_id`) REFERENCES `cause_tags`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `investigation_hypotheses_inv_idx` ON `investigation_hypotheses` (`investigation_id`);--> statement-breakpoint
CREATE TABLE `investigation_subjects` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`investigation_id` integer NOT NULL,
	`defect_id` integer,
	`heat_id` integer,
	FOREIGN KEY (`investigation_id`) REFERENCES `investigations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`defect_id`) REFERENCES `defects`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`heat_id`) REFERENCES `heats`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `investigation_subjects_inv_idx` ON `investigation_subjects` (`investigation_id`);--> statement-breakpoint
CREATE INDEX `investigation_subjects_heat_idx` ON `investigation_subjects` (`heat_id`);--> statement-breakpoint
CREATE INDEX `investigation_subjects_defect_idx` ON `investigation_subjects` (`defect_id`);--> statement-breakpoint
CREATE TABLE `investigations` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`ref` text NOT NULL,
	`title` text NOT NULL,
	`problem_statement` text NOT NULL,
	`status` text DEFAULT 'open' NOT NULL,
	`owner_id` text,
	`opened_at` integer NOT NULL,
	`closed_at` integer,
	`confirmed_cause_tag_id` integer,
	`closure_note` text,
	`created_by` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`owner_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`confirmed_cause_tag_id`) REFERENCES `cause_tags`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `investigations_ref_unique` ON `investigations` (`ref`);--> statement-breakpoint
CREATE INDEX `investigations_status_idx` ON `investigations` (`status`);--> statement-breakpoint
CREATE TABLE `mail_received` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`received_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`message_id` text,
	`envelope_from` text,
	`envelope_to` text NOT NULL,
	`subject` text,
	`text_body` text,
	`attachments` text,
	`raw` text
);
--> statement-breakpoint
CREATE TABLE `plant_settings` (
	`key` text PRIMARY KEY NOT NULL,
	`value` text NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_by` text,
	FOREIGN KEY (`updated_by`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `process_samples` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`strand_id` integer NOT NULL,
	`sampled_at` integer NOT NULL,
	`cast_length_m` real,
	`casting_speed_m_min` real,
	`tundish_temp_c` real,
	`embr_current_a` real,
	`sen_depth_mm` real,
	`argon_nl_min` real,
	`mold_level_mm` real,
	FOREIGN KEY (`strand_id`) REFERENCES `strands`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `process_samples_strand_time_uq` ON `process_samples` (`strand_id`,`sampled_at`);--> statement-breakpoint
CREATE TABLE `products` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`product_id` text NOT NULL,
	`kind` text NOT NULL,
	`slab_id` integer NOT NULL,
	`rolled_at` integer,
	`weight_t` real,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`slab_id`) REFERENCES `slabs`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `products_product_id_unique` ON `products` (`product_id`);--> statement-breakpoint
CREATE INDEX `products_slab_idx` ON `products` (`slab_id`);--> statement-breakpoint
CREATE TABLE `saved_reports` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` text NOT NULL,
	`name` text NOT NULL,
	`report_kind` text NOT NULL,
	`query` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `saved_reports_user_idx` ON `saved_reports` (`user_id`);--> statement-breakpoint
CREATE TABLE `sequences` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`sequence_no` text NOT NULL,
	`caster_id` integer NOT NULL,
	`started_at` integer,
	`ended_at` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`caster_id`) REFERENCES `casters`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `sequences_sequence_no_unique` ON `sequences` (`sequence_no`);--> statement-breakpoint
CREATE INDEX `sequences_caster_idx` ON `sequences` (`caster_id`,`started_at`);--> statement-breakpoint
CREATE TABLE `session` (
	`id` text PRIMARY KEY NOT NULL,
	`expires_at` integer NOT NULL,
	`token` text NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`ip_address` text,
	`user_agent` text,
	`user_id` text NOT NULL,
	`impersonated_by` text,
	FOREIGN KEY (`user_id`) REFERENCES `user`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE UNIQUE INDEX `session_token_unique` ON `session` (`token`);--> statement-breakpoint
CREATE INDEX `session_user_idx` ON `session` (`user_id`);--> statement-breakpoint
CREATE TABLE `slabs` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`slab_id` text NOT NULL,
	`heat_id` integer NOT NULL,
	`strand_id` integer NOT NULL,
	`piece_no` integer NOT NULL,
	`length_mm` real NOT NULL,
	`width_mm` real NOT NULL,
	`thickness_mm` real NOT NULL,
	`weight_t` real NOT NULL,
	`weight_source` text DEFAULT 'given' NOT NULL,
	`cast_length_start_m` real,
	`cast_at` integer,
	`transition` integer DEFAULT false NOT NULL,
	`casting_speed_m_min` real,
	`superheat_c` real,
	`embr_current_a` real,
	`sen_depth_mm` real,
	`argon_nl_min` real,
	`mold_level_sd_mm` real,
	`disposition` text,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`heat_id`) REFERENCES `heats`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`strand_id`) REFERENCES `strands`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `slabs_slab_id_unique` ON `slabs` (`slab_id`);--> statement-breakpoint
CREATE UNIQUE INDEX `slabs_heat_strand_piece_uq` ON `slabs` (`heat_id`,`strand_id`,`piece_no`);--> statement-breakpoint
CREATE INDEX `slabs_strand_cast_at_idx` ON `slabs` (`strand_id`,`cast_at`);--> statement-breakpoint
CREATE INDEX `slabs_cast_at_idx` ON `slabs` (`cast_at`);--> statement-breakpoint
CREATE TABLE `strands` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`caster_id` integer NOT NULL,
	`strand_no` integer NOT NULL,
	`mold_thickness_mm` real NOT NULL,
	`mold_width_min_mm` real,
	`mold_width_max_mm` real,
	`mold_effective_length_mm` real NOT NULL,
	`sen_port_area_mm2` real NOT NULL,
	`sen_port_count` integer DEFAULT 2 NOT NULL,
	`embr_calibration` text NOT NULL,
	`embr_position_mm` real,
	`active` integer DEFAULT true NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	FOREIGN KEY (`caster_id`) REFERENCES `casters`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `strands_caster_no_uq` ON `strands` (`caster_id`,`strand_no`);--> statement-breakpoint
CREATE TABLE `user` (
	`id` text PRIMARY KEY NOT NULL,
	`name` text NOT NULL,
	`email` text NOT NULL,
	`email_verified` integer DEFAULT false NOT NULL,
	`image` text,
	`role` text,
	`banned` integer DEFAULT false,
	`ban_reason` text,
	`ban_expires` integer,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `user_email_unique` ON `user` (`email`);--> statement-breakpoint
CREATE TABLE `verification` (
	`id` text PRIMARY KEY NOT NULL,
	`identifier` text NOT NULL,
	`value` text NOT NULL,
	`expires_at` integer NOT NULL,
	`created_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL,
	`updated_at` integer DEFAULT (cast(unixepoch('subsecond') * 1000 as integer)) NOT NULL
);
--> statement-breakpoint
CREATE INDEX `verification_identifier_idx` ON `verification` (`identifier`);