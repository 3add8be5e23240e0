CREATE TABLE `sign_in_codes` (
	`digest` varchar(64) NOT NULL,
	`email` varchar(254) NOT NULL,
	`tries` int NOT NULL DEFAULT 0,
	`requested_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`expires_at` datetime(3) NOT NULL,
	`used_at` datetime(3),
	CONSTRAINT `sign_in_codes_digest` PRIMARY KEY(`digest`)
);
--> statement-breakpoint
CREATE INDEX `sign_in_codes_expires` ON `sign_in_codes` (`expires_at`);