CREATE TABLE `api_tokens` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`name` varchar(120) NOT NULL,
	`token_hash` char(64) NOT NULL,
	`prefix` varchar(16) NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`last_used_at` datetime(3),
	`revoked_at` datetime(3),
	CONSTRAINT `api_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `api_tokens_hash_unique` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `audit_events` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`user_id` int,
	`action` varchar(60) NOT NULL,
	`entity_type` varchar(40) NOT NULL,
	`entity_id` varchar(64),
	`before` json,
	`after` json,
	CONSTRAINT `audit_events_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `calibration_exclusions` (
	`calibration_id` int NOT NULL,
	`shot_id` bigint NOT NULL,
	`reason` varchar(500) NOT NULL,
	CONSTRAINT `calibration_exclusions_pk` UNIQUE(`calibration_id`,`shot_id`)
);
--> statement-breakpoint
CREATE TABLE `calibrations` (
	`id` int AUTO_INCREMENT NOT NULL,
	`rig_id` int NOT NULL,
	`projectile_id` int NOT NULL,
	`status` enum('draft','approved','superseded') NOT NULL DEFAULT 'draft',
	`fitted` json NOT NULL,
	`parameters` json NOT NULL,
	`standard_errors` json NOT NULL,
	`covariance` json NOT NULL,
	`summary` json NOT NULL,
	`session_ids` json NOT NULL,
	`notes` text,
	`created_by` int NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`approved_by` int,
	`approved_at` datetime(3),
	`superseded_at` datetime(3),
	CONSTRAINT `calibrations_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `import_templates` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`mapping` json NOT NULL,
	`created_by` int NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `import_templates_id` PRIMARY KEY(`id`),
	CONSTRAINT `import_templates_name_unique` UNIQUE(`name`)
);
--> statement-breakpoint
CREATE TABLE `imports` (
	`id` int AUTO_INCREMENT NOT NULL,
	`session_id` int,
	`file_name` varchar(255) NOT NULL,
	`size_bytes` int NOT NULL,
	`sha256` char(64) NOT NULL,
	`raw_bytes` longblob NOT NULL,
	`mapping` json NOT NULL,
	`row_count` int NOT NULL,
	`imported_count` int NOT NULL,
	`rejected_count` int NOT NULL,
	`errors` json NOT NULL,
	`created_by` int NOT NULL,
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `imports_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `password_tokens` (
	`id` int AUTO_INCREMENT NOT NULL,
	`user_id` int NOT NULL,
	`purpose` enum('invite','reset') NOT NULL,
	`token_hash` char(64) NOT NULL,
	`expires_at` datetime(3) NOT NULL,
	`used_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `password_tokens_id` PRIMARY KEY(`id`),
	CONSTRAINT `password_tokens_hash_unique` UNIQUE(`token_hash`)
);
--> statement-breakpoint
CREATE TABLE `projectiles` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`mass_kg` double NOT NULL,
	`diameter_m` double NOT NULL,
	`length_m` double NOT NULL,
	`shape` enum('sphere','cylinder','finned','other') NOT NULL,
	`nominal_drag_coefficient` double NOT NULL,
	`notes` text,
	`deleted_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `projectiles_id` PRIMARY KEY(`id`),
	CONSTRAINT `projectiles_name_unique` UNIQUE(`name`)
);
--> statement-breakpoint
CREATE TABLE `range_sessions` (
	`id` int AUTO_INCREMENT NOT NULL,
	`title` varchar(160) NOT NULL,
	`rig_id` int NOT NULL,
	`projectile_id` int NOT NULL,
	`test_plan_id` int,
	`status` enum('open','closed') NOT NULL DEFAULT 'open',
	`started_at` datetime(3) NOT NULL,
	`closed_at` datetime(3),
	`closed_by` int,
	`target_distance_m` double NOT NULL,
	`elevation_deg` double NOT NULL,
	`azimuth_deg` double NOT NULL DEFAULT 0,
	`launch_height_m` double NOT NULL,
	`aim_height_m` double NOT NULL,
	`downrange_chrono_m` double,
	`temperature_c` double NOT NULL,
	`pressure_pa` double NOT NULL,
	`relative_humidity` double NOT NULL,
	`wind_x_mps` double NOT NULL DEFAULT 0,
	`wind_z_mps` double NOT NULL DEFAULT 0,
	`notes` text,
	`created_by` int,
	`deleted_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `range_sessions_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `rigs` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(120) NOT NULL,
	`reservoir_m_3` double NOT NULL,
	`dead_m_3` double NOT NULL,
	`bore_diameter_m` double NOT NULL,
	`travel_m` double NOT NULL,
	`rated_pressure_pa` double NOT NULL,
	`valve_type` varchar(80) NOT NULL,
	`nominal_efficiency` double NOT NULL DEFAULT 0.6,
	`notes` text,
	`deleted_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `rigs_id` PRIMARY KEY(`id`),
	CONSTRAINT `rigs_name_unique` UNIQUE(`name`)
);
--> statement-breakpoint
CREATE TABLE `shot_predictions` (
	`shot_id` bigint NOT NULL,
	`calibration_id` int,
	`predicted_muzzle_mps` double,
	`predicted_target_mps` double,
	`predicted_downrange_mps` double,
	`predicted_impact_x_m` double,
	`predicted_impact_y_m` double,
	`muzzle_residual_mps` double,
	`downrange_residual_mps` double,
	`impact_x_residual_m` double,
	`impact_y_residual_m` double,
	`pass_speed` boolean,
	`pass_impact` boolean,
	`computed_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `shot_predictions_shot_id` PRIMARY KEY(`shot_id`)
);
--> statement-breakpoint
CREATE TABLE `shots` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`session_id` int NOT NULL,
	`sequence` int NOT NULL,
	`client_uuid` char(36) NOT NULL,
	`fired_at` datetime(3) NOT NULL,
	`fill_gauge_pa` double NOT NULL,
	`muzzle_speed_mps` double,
	`downrange_speed_mps` double,
	`impact_x_m` double,
	`impact_y_m` double,
	`miss` boolean NOT NULL DEFAULT false,
	`note` text,
	`temperature_c` double,
	`pressure_pa` double,
	`entered_by` int,
	`import_id` int,
	`deleted_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `shots_id` PRIMARY KEY(`id`),
	CONSTRAINT `shots_session_sequence_unique` UNIQUE(`session_id`,`sequence`),
	CONSTRAINT `shots_client_uuid_unique` UNIQUE(`client_uuid`)
);
--> statement-breakpoint
CREATE TABLE `sign_in_failures` (
	`id` bigint AUTO_INCREMENT NOT NULL,
	`bucket` varchar(300) NOT NULL,
	`at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `sign_in_failures_id` PRIMARY KEY(`id`)
);
--> statement-breakpoint
CREATE TABLE `test_plans` (
	`id` int AUTO_INCREMENT NOT NULL,
	`name` varchar(160) NOT NULL,
	`speed_at` enum('muzzle','target') NOT NULL,
	`required_speed_mps` double NOT NULL,
	`speed_tolerance_pct` double NOT NULL,
	`impact_tolerance_m` double NOT NULL,
	`target_distance_m` double NOT NULL,
	`shots_required` int NOT NULL,
	`notes` text,
	`owner_id` int,
	`deleted_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `test_plans_id` PRIMARY KEY(`id`),
	CONSTRAINT `test_plans_name_unique` UNIQUE(`name`)
);
--> statement-breakpoint
CREATE TABLE `users` (
	`id` int AUTO_INCREMENT NOT NULL,
	`email` varchar(254) NOT NULL,
	`name` varchar(120) NOT NULL,
	`role` enum('viewer','range_officer','analyst','lead','admin') NOT NULL DEFAULT 'viewer',
	`password_hash` varchar(100),
	`unit_preferences` json,
	`disabled_at` datetime(3),
	`created_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	`updated_at` datetime(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
	CONSTRAINT `users_id` PRIMARY KEY(`id`),
	CONSTRAINT `users_email_unique` UNIQUE(`email`)
);
--> statement-breakpoint
ALTER TABLE `api_tokens` ADD CONSTRAINT `api_tokens_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `audit_events` ADD CONSTRAINT `audit_events_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `calibration_exclusions` ADD CONSTRAINT `calibration_exclusions_calibration_id_calibrations_id_fk` FOREIGN KEY (`calibration_id`) REFERENCES `calibrations`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `calibration_exclusions` ADD CONSTRAINT `calibration_exclusions_shot_id_shots_id_fk` FOREIGN KEY (`shot_id`) REFERENCES `shots`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `calibrations` ADD CONSTRAINT `calibrations_rig_id_rigs_id_fk` FOREIGN KEY (`rig_id`) REFERENCES `rigs`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `calibrations` ADD CONSTRAINT `calibrations_projectile_id_projectiles_id_fk` FOREIGN KEY (`projectile_id`) REFERENCES `projectiles`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `calibrations` ADD CONSTRAINT `calibrations_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `calibrations` ADD CONSTRAINT `calibrations_approved_by_users_id_fk` FOREIGN KEY (`approved_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `import_templates` ADD CONSTRAINT `import_templates_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `imports` ADD CONSTRAINT `imports_session_id_range_sessions_id_fk` FOREIGN KEY (`session_id`) REFERENCES `range_sessions`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `imports` ADD CONSTRAINT `imports_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `password_tokens` ADD CONSTRAINT `password_tokens_user_id_users_id_fk` FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `range_sessions` ADD CONSTRAINT `range_sessions_rig_id_rigs_id_fk` FOREIGN KEY (`rig_id`) REFERENCES `rigs`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `range_sessions` ADD CONSTRAINT `range_sessions_projectile_id_projectiles_id_fk` FOREIGN KEY (`projectile_id`) REFERENCES `projectiles`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `range_sessions` ADD CONSTRAINT `range_sessions_test_plan_id_test_plans_id_fk` FOREIGN KEY (`test_plan_id`) REFERENCES `test_plans`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `range_sessions` ADD CONSTRAINT `range_sessions_closed_by_users_id_fk` FOREIGN KEY (`closed_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `range_sessions` ADD CONSTRAINT `range_sessions_created_by_users_id_fk` FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shot_predictions` ADD CONSTRAINT `shot_predictions_shot_id_shots_id_fk` FOREIGN KEY (`shot_id`) REFERENCES `shots`(`id`) ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shot_predictions` ADD CONSTRAINT `shot_predictions_calibration_id_calibrations_id_fk` FOREIGN KEY (`calibration_id`) REFERENCES `calibrations`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shots` ADD CONSTRAINT `shots_session_id_range_sessions_id_fk` FOREIGN KEY (`session_id`) REFERENCES `range_sessions`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shots` ADD CONSTRAINT `shots_entered_by_users_id_fk` FOREIGN KEY (`entered_by`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `shots` ADD CONSTRAINT `shots_import_id_imports_id_fk` FOREIGN KEY (`import_id`) REFERENCES `imports`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE `test_plans` ADD CONSTRAINT `test_plans_owner_id_users_id_fk` FOREIGN KEY (`owner_id`) REFERENCES `users`(`id`) ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX `audit_entity_idx` ON `audit_events` (`entity_type`,`entity_id`);--> statement-breakpoint
CREATE INDEX `audit_at_idx` ON `audit_events` (`at`);--> statement-breakpoint
CREATE INDEX `calibrations_pair_status_idx` ON `calibrations` (`rig_id`,`projectile_id`,`status`);--> statement-breakpoint
CREATE INDEX `imports_sha256_idx` ON `imports` (`sha256`);--> statement-breakpoint
CREATE INDEX `imports_session_idx` ON `imports` (`session_id`);--> statement-breakpoint
CREATE INDEX `range_sessions_rig_started_idx` ON `range_sessions` (`rig_id`,`started_at`);--> statement-breakpoint
CREATE INDEX `range_sessions_status_idx` ON `range_sessions` (`status`,`started_at`);--> statement-breakpoint
CREATE INDEX `shots_fired_idx` ON `shots` (`fired_at`);--> statement-breakpoint
CREATE INDEX `sign_in_failures_key_at_idx` ON `sign_in_failures` (`bucket`,`at`);