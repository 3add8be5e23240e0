DROP INDEX `records_listing` ON `records`;--> statement-breakpoint
DROP INDEX `records_family_listing` ON `records`;--> statement-breakpoint
DROP INDEX `records_quantity_listing` ON `records`;--> statement-breakpoint
DROP INDEX `records_temperature` ON `records`;--> statement-breakpoint
CREATE INDEX `records_listing_order` ON `records` (`status`,`sort_material`,`quantity_sort`,`valley`,`composition`,`temperature_k`);--> statement-breakpoint
CREATE INDEX `records_family_order` ON `records` (`family_id`,`status`,`sort_material`,`quantity_sort`,`valley`,`composition`,`temperature_k`);--> statement-breakpoint
CREATE INDEX `records_quantity_order` ON `records` (`quantity_id`,`status`,`sort_material`,`valley`,`composition`,`temperature_k`);--> statement-breakpoint
CREATE INDEX `records_temperature_order` ON `records` (`status`,`temperature_k`,`sort_material`,`quantity_sort`,`valley`,`composition`);