CREATE TABLE `mail_outbox` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`kind` varchar(40) NOT NULL,
	`entity_id` varchar(64),
	`recipient` varchar(254) NOT NULL,
	`subject` varchar(300) NOT NULL,
	`body` text NOT NULL,
	`status` enum('pending','sent','failed') NOT NULL DEFAULT 'pending',
	`attempts` int NOT NULL DEFAULT 0,
	`next_attempt_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`claimed_by` varchar(64),
	`claimed_at` datetime(3),
	`last_error` varchar(500),
	`sent_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `mail_outbox_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `sign_in_limits` (
	`key` varchar(255) NOT NULL,
	`points` int NOT NULL DEFAULT 0,
	`expire` bigint unsigned,
	CONSTRAINT `sign_in_limits_key` PRIMARY KEY(`key`)
);
--> statement-breakpoint
ALTER TABLE `users` ADD `session_version` int DEFAULT 0 NOT NULL;--> statement-breakpoint
CREATE INDEX `mail_outbox_due_idx` ON `mail_outbox` (`status`,`next_attempt_at`);--> statement-breakpoint
CREATE INDEX `mail_outbox_entity_idx` ON `mail_outbox` (`kind`,`entity_id`);