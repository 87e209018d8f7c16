CREATE INDEX `attachments_by_time_idx` ON `attachments` (`created_by`,`created_at`);--> statement-breakpoint
CREATE INDEX `defect_photos_by_time_idx` ON `defect_photos` (`created_by`,`created_at`);