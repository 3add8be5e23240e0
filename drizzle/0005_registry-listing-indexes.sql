DROP INDEX `records_family` ON `records`;--> statement-breakpoint
CREATE INDEX `records_family_listing` ON `records` (`family_id`,`status`,`sort_material`,`quantity_sort`,`condition_key`);--> statement-breakpoint
CREATE INDEX `records_quantity_listing` ON `records` (`quantity_id`,`status`,`sort_material`,`condition_key`);--> statement-breakpoint
CREATE INDEX `records_temperature` ON `records` (`status`,`temperature_k`,`sort_material`,`quantity_sort`,`condition_key`);