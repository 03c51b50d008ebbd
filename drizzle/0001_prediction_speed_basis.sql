ALTER TABLE `shot_predictions` ADD `speed_basis` enum('muzzle_chronograph','downrange_chronograph','model_from_muzzle');--> statement-breakpoint
ALTER TABLE `shot_predictions` ADD `judged_speed_mps` double;--> statement-breakpoint
ALTER TABLE `shot_predictions` ADD `outside_calibrated_pressures` boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE `shot_predictions` ADD `prediction_error` varchar(500);