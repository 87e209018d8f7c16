ALTER TABLE `audit_log` ADD `user_name` text;
--> statement-breakpoint
UPDATE `audit_log` SET `user_name` = (SELECT `name` FROM `user` WHERE `user`.`id` = `audit_log`.`user_id`) WHERE `user_id` IS NOT NULL;
