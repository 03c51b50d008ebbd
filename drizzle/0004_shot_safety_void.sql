ALTER TABLE `shots` ADD `above_rating` boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `shots` ADD `voided_at` datetime(3);--> statement-breakpoint
ALTER TABLE `shots` ADD `void_reason` varchar(500);--> statement-breakpoint
ALTER TABLE `shots` ADD `voided_by` int;--> statement-breakpoint
ALTER TABLE `test_plans` ADD `stop_after_out_of_tolerance` int DEFAULT 3 NOT NULL;--> statement-breakpoint
ALTER TABLE `shots` ADD CONSTRAINT `shots_voided_by_users_id_fk` FOREIGN KEY (`voided_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;