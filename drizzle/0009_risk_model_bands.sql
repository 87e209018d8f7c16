ALTER TABLE `risk_models` ADD `band_high` real;--> statement-breakpoint
ALTER TABLE `risk_models` ADD `band_raised` real;--> statement-breakpoint
ALTER TABLE `risk_models` ADD `activated_at` integer;--> statement-breakpoint
ALTER TABLE `risk_models` ADD `activated_by_name` text;