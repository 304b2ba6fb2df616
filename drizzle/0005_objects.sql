CREATE TABLE `spots` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`run_id` integer NOT NULL,
	`field_id` integer NOT NULL,
	`cell_id` integer NOT NULL,
	`channel` integer NOT NULL,
	`x` real NOT NULL,
	`y` real NOT NULL,
	`peak` real NOT NULL,
	`integrated` real NOT NULL,
	FOREIGN KEY (`run_id`) REFERENCES `runs`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`field_id`) REFERENCES `fields`(`id`) ON UPDATE no action ON DELETE cascade,
	FOREIGN KEY (`cell_id`) REFERENCES `cells`(`id`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE INDEX `spots_run_field` ON `spots` (`run_id`,`field_id`);--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_count1` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_count2` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_paired1` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_paired2` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_mutual_pairs` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_median_nearest1` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_median_nearest2` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_p_value` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `spot_chance_fraction1` real;