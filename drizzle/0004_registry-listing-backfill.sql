-- Fill the registry table's copies on records written before they existed; the registry services keep them from now on.
UPDATE `records` r JOIN `materials` m ON m.`id` = r.`material_id` JOIN `quantities` q ON q.`id` = r.`quantity_id`
SET r.`family_id` = m.`family_id`, r.`sort_material` = m.`key`, r.`quantity_sort` = q.`sort_order`;
--> statement-breakpoint
UPDATE `records` r JOIN `revisions` v ON v.`id` = r.`current_revision_id`
SET r.`current_method` = v.`method`, r.`current_value_numeric` = v.`value_numeric`, r.`current_source_id` = v.`source_id`;
