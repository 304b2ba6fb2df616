ALTER TABLE `measurements` ADD `mic_e` real;--> statement-breakpoint
ALTER TABLE `measurements` ADD `tic_e` real;