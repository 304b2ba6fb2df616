/**
 * E-mail notifications (server/mail/notify.ts) and each user's choice of which to receive:
 * GET /api/notifications, PUT /api/notifications. Every kind is on until its user turns it off.
 */
import { z } from 'zod';

export const NOTIFICATION_KINDS = ['recipe_submitted', 'recipe_reviewed', 'calibration_approved', 'run_finished'] as const;
export const NotificationKind = z.enum(NOTIFICATION_KINDS);
export type NotificationKind = z.infer<typeof NotificationKind>;

/** Our words for each kind, and who receives it. */
export const NOTIFICATION_TEXT: Record<NotificationKind, { label: string; who: string }> = {
  recipe_submitted: { label: 'A recipe is submitted for review', who: 'facility managers' },
  recipe_reviewed: { label: 'Your recipe is approved or returned (with the note)', who: 'the recipe’s proposer' },
  calibration_approved: { label: 'Your instrument calibration is approved', who: 'the calibration’s proposer' },
  run_finished: { label: 'Your run finished or failed (with the fields that failed)', who: 'whoever started the run' },
};

export const NotificationSettings = z.object({
  kinds: z.array(z.object({ kind: NotificationKind, label: z.string(), who: z.string(), on: z.boolean() })),
});
export type NotificationSettings = z.infer<typeof NotificationSettings>;

/** The kinds to turn off; every kind not listed is on. */
export const UpdateNotificationsRequest = z.object({
  off: z.array(NotificationKind).max(NOTIFICATION_KINDS.length),
});
export type UpdateNotificationsRequest = z.infer<typeof UpdateNotificationsRequest>;
