-- Databases started before this migration made the table and triggers at run time (hence IF NOT
-- EXISTS); their row, id and count are kept.
CREATE TABLE IF NOT EXISTS `report_cache_state` (
	`id` integer PRIMARY KEY NOT NULL,
	`database_id` text NOT NULL,
	`version` integer NOT NULL,
	CONSTRAINT "report_cache_state_one_row" CHECK(id = 1)
);
--> statement-breakpoint
INSERT OR IGNORE INTO `report_cache_state` (`id`, `database_id`, `version`) VALUES (1, lower(hex(randomblob(16))), 0);
--> statement-breakpoint
CREATE TRIGGER IF NOT EXISTS `report_cache_count_insert` AFTER INSERT ON `slab_conditions` BEGIN UPDATE `report_cache_state` SET `version` = `version` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER IF NOT EXISTS `report_cache_count_update` AFTER UPDATE ON `slab_conditions` BEGIN UPDATE `report_cache_state` SET `version` = `version` + 1 WHERE `id` = 1; END;
--> statement-breakpoint
CREATE TRIGGER IF NOT EXISTS `report_cache_count_delete` AFTER DELETE ON `slab_conditions` BEGIN UPDATE `report_cache_state` SET `version` = `version` + 1 WHERE `id` = 1; END;
