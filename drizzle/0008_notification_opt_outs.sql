CREATE TABLE `notification_opt_outs` (
	`user_id` integer NOT NULL,
	`kind` text NOT NULL,
	PRIMARY KEY(`user_id`, `kind`),
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE cascade
);
