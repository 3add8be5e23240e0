CREATE TABLE `draft_stashes` (
	`id` varchar(64) NOT NULL,
	`proposal_id` int,
	`payload` json NOT NULL,
	`createdAt` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`expires_at` datetime(3) NOT NULL,
	CONSTRAINT `draft_stashes_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE INDEX `draft_stashes_expires` ON `draft_stashes` (`expires_at`);