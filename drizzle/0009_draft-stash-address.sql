ALTER TABLE `draft_stashes` ADD `ip` varchar(64) DEFAULT '' NOT NULL;--> statement-breakpoint
CREATE INDEX `draft_stashes_ip` ON `draft_stashes` (`ip`,`expires_at`);