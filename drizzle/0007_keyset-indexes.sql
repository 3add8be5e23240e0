CREATE INDEX `records_family_keyset` ON `records` (`family_id`,`status`);--> statement-breakpoint
CREATE INDEX `records_material_keyset` ON `records` (`material_id`,`status`);--> statement-breakpoint
CREATE INDEX `records_status_keyset` ON `records` (`status`);--> statement-breakpoint
CREATE INDEX `records_family_value` ON `records` (`family_id`,`status`,`current_value_numeric`);