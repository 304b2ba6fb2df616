/**
 * Outbox: every e-mail the server sent (captured by the embedded sink, or handed to the relay).
 * Facility managers only. Server: server/routes/outbox.ts.
 *   GET /outbox?limit=&before=   → OutboxListResponse (newest first)
 *   GET /outbox/:id              → OutboxMessage
 */
import { z } from 'zod';
import { Id, IsoDate } from './common.js';

export const OutboxSummary = z.object({
  id: Id,
  from: z.string(),
  to: z.string(),
  subject: z.string(),
  via: z.enum(['sink', 'relay']),
  receivedAt: IsoDate,
});
export type OutboxSummary = z.infer<typeof OutboxSummary>;
export const OutboxListResponse = z.object({ messages: z.array(OutboxSummary), nextBefore: Id.nullable() });
export type OutboxListResponse = z.infer<typeof OutboxListResponse>;
export const OutboxQuery = z.object({
  limit: z.coerce.number().int().min(1).max(200).default(50),
  /** id cursor: messages with a smaller id */
  before: z.coerce.number().int().positive().optional(),
});
export const OutboxMessage = OutboxSummary.extend({ messageId: z.string().nullable(), text: z.string(), html: z.string().nullable() });
export type OutboxMessage = z.infer<typeof OutboxMessage>;
