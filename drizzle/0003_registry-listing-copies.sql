ALTER TABLE `records` ADD `family_id` int;--> statement-breakpoint
ALTER TABLE `records` ADD `sort_material` varchar(40) DEFAULT '' NOT NULL;--> statement-breakpoint
ALTER TABLE `records` ADD `quantity_sort` int DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE `records` ADD `current_method` enum('measured','calculated','fitted','compilation');--> statement-breakpoint
ALTER TABLE `records` ADD `current_value_numeric` decimal(40,20);--> statement-breakpoint
ALTER TABLE `records` ADD `current_source_id` int;--> statement-breakpoint
CREATE INDEX `records_listing` ON `records` (`status`,`sort_material`,`quantity_sort`,`condition_key`);--> statement-breakpoint
CREATE INDEX `records_family` ON `records` (`family_id`,`status`,`sort_material`);--> statement-breakpoint
CREATE INDEX `records_quantity_value` ON `records` (`quantity_id`,`status`,`current_value_numeric`);--> statement-breakpoint
CREATE INDEX `records_source` ON `records` (`current_source_id`);