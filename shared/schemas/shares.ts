/**
 * Share links: a report e-mailed to collaborators with a personal, signed, expiring, revocable link.
 * Server: server/routes/shares.ts; client: src/features/shares.
 *
 *   POST /reports/:id/shares        CreateShareRequest → ShareListResponse (201; 'report' on the study)
 *   GET  /reports/:id/shares        → ShareListResponse ('report')
 *   POST /shares/:id/revoke         → ShareLinkSummary ('report')
 *   POST /shares/:id/resend         → ShareLinkSummary ('report'; 409 when revoked or expired)
 *   GET  /shared/:token             → SharedReportResponse (no account; 401 tampered, 410 revoked/expired)
 *   GET  /shared/:token/csv/:table  → text/csv (same checks; not logged as an opening)
 */
import { z } from 'zod';
import { Id, IsoDate } from './common.js';
import { ReportDetail } from './reports.js';

export const DEFAULT_SHARE_DAYS = 30;
export const MAX_SHARE_DAYS = 365;

/** One recipient address; a wrong one is named in the message, so a list of many says which to fix. */
export const ShareEmail = z
  .string()
  .trim()
  .toLowerCase()
  .email({ error: (iss) => `${JSON.stringify(iss.input)} is not an e-mail address (like name@example.org)` });

export const CreateShareRequest = z.object({
  emails: z
    .array(ShareEmail)
    .min(1, 'enter at least one e-mail address')
    .max(50, 'at most 50 recipients at a time')
    .transform((a) => [...new Set(a)]),
  message: z.string().max(5000, 'a message has at most 5000 characters').default(''),
  /** link lifetime in days (default 30) */
  expiresInDays: z.number().int('whole days only').min(1, 'at least 1 day').max(MAX_SHARE_DAYS, `at most ${MAX_SHARE_DAYS} days`).default(DEFAULT_SHARE_DAYS),
  /** also give each recipient read access to this study (an account is created by invitation when needed) */
  inviteToStudy: z.boolean().default(false),
});
export type CreateShareRequest = z.input<typeof CreateShareRequest>;

export const ShareState = z.enum(['active', 'revoked', 'expired']);
export type ShareState = z.infer<typeof ShareState>;

export const ShareLinkSummary = z.object({
  id: Id,
  reportId: Id,
  email: z.string(),
  message: z.string(),
  state: ShareState,
  expiresAt: IsoDate,
  revokedAt: IsoDate.nullable(),
  lastOpenedAt: IsoDate.nullable(),
  openCount: z.number().int(),
  createdAt: IsoDate,
  createdBy: z.string().nullable(),
  /** recent openings (newest first, at most 20) */
  openings: z.array(z.object({ at: IsoDate, ip: z.string().nullable(), userAgent: z.string().nullable() })),
  /** set when the recipient was given read access to the study */
  invited: z.boolean(),
});
export type ShareLinkSummary = z.infer<typeof ShareLinkSummary>;

export const ShareListResponse = z.object({
  links: z.array(ShareLinkSummary),
  /** after creating: addresses whose e-mail could not be handed to the mail server (the link exists; use "send again") */
  notSent: z.array(z.string()).default([]),
});
export type ShareListResponse = z.infer<typeof ShareListResponse>;

export const SharedReportResponse = z.object({
  report: ReportDetail,
  recipient: z.string(),
  expiresAt: IsoDate,
});
export type SharedReportResponse = z.infer<typeof SharedReportResponse>;
