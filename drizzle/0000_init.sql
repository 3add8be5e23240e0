CREATE TABLE `api_tokens` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`name` varchar(80) NOT NULL,
	`token_hash` varchar(64) NOT NULL,
	`prefix` varchar(16) NOT NULL,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`last_used_at` datetime(3),
	`revoked_at` datetime(3),
	CONSTRAINT `api_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `api_tokens_hash` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `audit_log` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`actor_id` int,
	`actor_email` varchar(254),
	`action` varchar(64) NOT NULL,
	`target_type` varchar(40),
	`target_id` varchar(64),
	`ip` varchar(64),
	`detail` json,
	CONSTRAINT `audit_log_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `family_leads` (
	`user_id` int NOT NULL,
	`family_id` int NOT NULL,
	`assigned_by` int,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `family_leads_user_id_family_id_pk` PRIMARY KEY(`user_id`,`family_id`)
);
--> statement-breakpoint
CREATE TABLE `material_families` (
	`id` int AUTO_INCREMENT NOT NULL,
	`key` varchar(40) NOT NULL,
	`name` varchar(120) NOT NULL,
	`description` text,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `material_families_id` PRIMARY KEY(`id`),
	CONSTRAINT `material_families_key` UNIQUE(`key`)
);
--> statement-breakpoint
CREATE TABLE `rate_counters` (
	`bucket` varchar(160) NOT NULL,
	`window_start` datetime(3) NOT NULL,
	`count` int NOT NULL DEFAULT 0,
	CONSTRAINT `rate_counters_bucket` PRIMARY KEY(`bucket`)
);
--> statement-breakpoint
CREATE TABLE `sign_in_requests` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`email` varchar(254) NOT NULL,
	`ip` varchar(64) NOT NULL,
	`at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `sign_in_requests_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` int AUTO_INCREMENT NOT NULL,
	`email` varchar(254) NOT NULL,
	`name` varchar(120) NOT NULL,
	`role` enum('reader','contributor','lead','admin') NOT NULL DEFAULT 'reader',
	`active` boolean NOT NULL DEFAULT true,
	`notify_mode` enum('immediate','digest') NOT NULL DEFAULT 'immediate',
	`invited_by` int,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`last_sign_in_at` datetime(3),
	`version` int NOT NULL DEFAULT 1,
	CONSTRAINT `users_id` PRIMARY KEY(`id`),
	CONSTRAINT `users_email` UNIQUE(`email`)
);
--> statement-breakpoint
CREATE TABLE `materials` (
	`id` int AUTO_INCREMENT NOT NULL,
	`key` varchar(40) NOT NULL,
	`name` varchar(120) NOT NULL,
	`formula` varchar(60) NOT NULL,
	`kind` enum('element','binary','alloy') NOT NULL,
	`structure` enum('diamond','zinc_blende','wurtzite') NOT NULL,
	`family_id` int NOT NULL,
	`composition_variable` varchar(8),
	`end_member_a_id` int,
	`end_member_b_id` int,
	`description` text,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `materials_id` PRIMARY KEY(`id`),
	CONSTRAINT `materials_key` UNIQUE(`key`)
);
--> statement-breakpoint
CREATE TABLE `quantities` (
	`id` int AUTO_INCREMENT NOT NULL,
	`key` varchar(64) NOT NULL,
	`symbol` varchar(40) NOT NULL,
	`name` varchar(120) NOT NULL,
	`canonical_unit` varchar(20) NOT NULL,
	`accepted_units` json NOT NULL,
	`range_min` varchar(40),
	`range_max` varchar(40),
	`description` text NOT NULL,
	`depends_on_temperature` boolean NOT NULL DEFAULT false,
	`depends_on_valley` boolean NOT NULL DEFAULT false,
	`depends_on_composition` boolean NOT NULL DEFAULT false,
	`check_tolerance` varchar(40),
	`sort_order` int NOT NULL DEFAULT 0,
	CONSTRAINT `quantities_id` PRIMARY KEY(`id`),
	CONSTRAINT `quantities_key` UNIQUE(`key`)
);
--> statement-breakpoint
CREATE TABLE `records` (
	`id` int AUTO_INCREMENT NOT NULL,
	`material_id` int NOT NULL,
	`quantity_id` int NOT NULL,
	`temperature_k` decimal(9,3),
	`valley` enum('G','X','L'),
	`composition` decimal(7,5),
	`condition_key` varchar(80) NOT NULL,
	`status` enum('active','retired') NOT NULL DEFAULT 'active',
	`current_revision_id` int,
	`version` int NOT NULL DEFAULT 1,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updatedAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `records_id` PRIMARY KEY(`id`),
	CONSTRAINT `records_conditions` UNIQUE(`material_id`,`quantity_id`,`condition_key`)
);
--> statement-breakpoint
CREATE TABLE `revisions` (
	`id` int AUTO_INCREMENT NOT NULL,
	`record_id` int NOT NULL,
	`seq` int NOT NULL,
	`kind` enum('value','retirement') NOT NULL DEFAULT 'value',
	`value` varchar(64),
	`value_numeric` decimal(40,20),
	`significant_digits` int,
	`input_value` varchar(64),
	`input_unit` varchar(20),
	`uncertainty` varchar(64),
	`method` enum('measured','calculated','fitted','compilation'),
	`source_id` int,
	`locator` varchar(200),
	`notes` text,
	`potential_coefficients` json,
	`period_angstrom` varchar(40),
	`valid_from_k` varchar(20),
	`valid_to_k` varchar(20),
	`proposed_by` int,
	`approved_by` int,
	`proposal_id` int,
	`proposed_at` datetime(3),
	`approved_at` datetime(3),
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `revisions_id` PRIMARY KEY(`id`),
	CONSTRAINT `revisions_record_seq` UNIQUE(`record_id`,`seq`)
);
--> statement-breakpoint
CREATE TABLE `sources` (
	`id` int AUTO_INCREMENT NOT NULL,
	`kind` enum('doi','bibtex','report') NOT NULL,
	`doi` varchar(255),
	`bibtex_key` varchar(120),
	`bibtex` text,
	`csl` json,
	`report_number` varchar(80),
	`title` varchar(500) NOT NULL,
	`authors` varchar(500),
	`year` int,
	`created_by` int,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `sources_id` PRIMARY KEY(`id`),
	CONSTRAINT `sources_doi` UNIQUE(`doi`),
	CONSTRAINT `sources_report` UNIQUE(`report_number`)
);
--> statement-breakpoint
CREATE TABLE `attachments` (
	`id` int AUTO_INCREMENT NOT NULL,
	`proposal_id` int,
	`batch_id` int,
	`sha256` varchar(64) NOT NULL,
	`file_name` varchar(255) NOT NULL,
	`content_type` varchar(100) NOT NULL,
	`size_bytes` int NOT NULL,
	`uploaded_by` int NOT NULL,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `attachments_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `csv_batches` (
	`id` int AUTO_INCREMENT NOT NULL,
	`author_id` int NOT NULL,
	`file_name` varchar(255) NOT NULL,
	`sha256` varchar(64) NOT NULL,
	`row_count` int NOT NULL,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `csv_batches_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `notices` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`kind` varchar(40) NOT NULL,
	`subject` varchar(200) NOT NULL,
	`body_text` text NOT NULL,
	`link` varchar(300),
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`sent_at` datetime(3),
	CONSTRAINT `notices_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `proposal_comments` (
	`id` int AUTO_INCREMENT NOT NULL,
	`proposal_id` int NOT NULL,
	`author_id` int NOT NULL,
	`body` text NOT NULL,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `proposal_comments_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `proposals` (
	`id` int AUTO_INCREMENT NOT NULL,
	`kind` enum('new_record','revision','retirement') NOT NULL,
	`state` enum('draft','submitted','approved','rejected','withdrawn') NOT NULL DEFAULT 'draft',
	`author_id` int NOT NULL,
	`record_id` int,
	`base_revision_id` int,
	`material_id` int,
	`quantity_id` int,
	`payload` json NOT NULL,
	`proposed_value` varchar(64),
	`proposed_unit` varchar(20),
	`check_status` varchar(16),
	`batch_id` int,
	`decided_by` int,
	`decided_at` datetime(3),
	`reason` text,
	`result_revision_id` int,
	`version` int NOT NULL DEFAULT 1,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updatedAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`submitted_at` datetime(3),
	CONSTRAINT `proposals_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `parameter_sets` (
	`id` int AUTO_INCREMENT NOT NULL,
	`slug` varchar(80) NOT NULL,
	`name` varchar(120) NOT NULL,
	`purpose` varchar(200) NOT NULL,
	`description` text,
	`created_by` int NOT NULL,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`version` int NOT NULL DEFAULT 1,
	CONSTRAINT `parameter_sets_id` PRIMARY KEY(`id`),
	CONSTRAINT `parameter_sets_slug` UNIQUE(`slug`)
);
--> statement-breakpoint
CREATE TABLE `release_items` (
	`release_id` int NOT NULL,
	`record_id` int NOT NULL,
	`revision_id` int NOT NULL,
	CONSTRAINT `release_items_release_id_record_id_pk` PRIMARY KEY(`release_id`,`record_id`)
);
--> statement-breakpoint
CREATE TABLE `releases` (
	`id` int AUTO_INCREMENT NOT NULL,
	`set_id` int NOT NULL,
	`number` int NOT NULL,
	`sha256` varchar(64) NOT NULL,
	`canonical_json` longtext NOT NULL,
	`csv` longtext NOT NULL,
	`csv_sha256` varchar(64) NOT NULL,
	`item_count` int NOT NULL,
	`codata_edition` varchar(40) NOT NULL,
	`software_version` varchar(40) NOT NULL,
	`frozen_by` int NOT NULL,
	`frozen_at` datetime(3) NOT NULL,
	CONSTRAINT `releases_id` PRIMARY KEY(`id`),
	CONSTRAINT `releases_set_number` UNIQUE(`set_id`,`number`)
);
--> statement-breakpoint
CREATE TABLE `set_members` (
	`set_id` int NOT NULL,
	`record_id` int NOT NULL,
	`added_by` int NOT NULL,
	`addedAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `set_members_set_id_record_id_pk` PRIMARY KEY(`set_id`,`record_id`)
);
--> statement-breakpoint
CREATE TABLE `set_watches` (
	`set_id` int NOT NULL,
	`user_id` int NOT NULL,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `set_watches_set_id_user_id_pk` PRIMARY KEY(`set_id`,`user_id`)
);
--> statement-breakpoint
CREATE INDEX `api_tokens_user` ON `api_tokens` (`user_id`);--> statement-breakpoint
CREATE INDEX `audit_at` ON `audit_log` (`at`);--> statement-breakpoint
CREATE INDEX `audit_action` ON `audit_log` (`action`,`at`);--> statement-breakpoint
CREATE INDEX `audit_actor` ON `audit_log` (`actor_id`,`at`);--> statement-breakpoint
CREATE INDEX `family_leads_family` ON `family_leads` (`family_id`);--> statement-breakpoint
CREATE INDEX `sign_in_requests_email` ON `sign_in_requests` (`email`,`at`);--> statement-breakpoint
CREATE INDEX `sign_in_requests_ip` ON `sign_in_requests` (`ip`,`at`);--> statement-breakpoint
CREATE INDEX `materials_family` ON `materials` (`family_id`);--> statement-breakpoint
CREATE INDEX `records_quantity` ON `records` (`quantity_id`);--> statement-breakpoint
CREATE INDEX `records_updated` ON `records` (`updatedAt`);--> statement-breakpoint
CREATE INDEX `revisions_source` ON `revisions` (`source_id`);--> statement-breakpoint
CREATE INDEX `sources_bibkey` ON `sources` (`bibtex_key`);--> statement-breakpoint
CREATE INDEX `attachments_proposal` ON `attachments` (`proposal_id`);--> statement-breakpoint
CREATE INDEX `notices_pending` ON `notices` (`user_id`,`sent_at`);--> statement-breakpoint
CREATE INDEX `proposal_comments_proposal` ON `proposal_comments` (`proposal_id`);--> statement-breakpoint
CREATE INDEX `proposals_state` ON `proposals` (`state`,`submitted_at`);--> statement-breakpoint
CREATE INDEX `proposals_author` ON `proposals` (`author_id`);--> statement-breakpoint
CREATE INDEX `proposals_record` ON `proposals` (`record_id`);--> statement-breakpoint
CREATE INDEX `releases_hash` ON `releases` (`sha256`);