/** The outbox: every e-mail the server sent, for facility managers. Shapes: shared/schemas/outbox.ts. */
import { Router } from 'express';
import { desc, eq, lt } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { outgoingMail } from '../db/schema.js';
import { OutboxListResponse, OutboxMessage, OutboxQuery } from '../../shared/schemas/outbox.js';
import { notFound, parse } from '../http/errors.js';
import { requireUser } from '../auth/session.js';
import { requireCan } from '../auth/policy.js';
import { idParam } from '../http/params.js';

export default function outboxRoutes(ctx: AppContext) {
  const r = Router();

  r.get('/outbox', requireUser, (req, res) => {
    requireCan(req.user, 'read_outbox');
    const q = parse(OutboxQuery, req.query);
    const rows = ctx.db
      .select({ id: outgoingMail.id, from: outgoingMail.from, to: outgoingMail.to, subject: outgoingMail.subject, via: outgoingMail.via, receivedAt: outgoingMail.receivedAt })
      .from(outgoingMail)
      .where(q.before ? lt(outgoingMail.id, q.before) : undefined)
      .orderBy(desc(outgoingMail.id))
      .limit(q.limit + 1)
      .all();
    const more = rows.length > q.limit;
    const page = rows.slice(0, q.limit);
    res.json(OutboxListResponse.parse({ messages: page, nextBefore: more ? page[page.length - 1].id : null }));
  });

  r.get('/outbox/:id', requireUser, (req, res) => {
    requireCan(req.user, 'read_outbox');
    const id = idParam(req, 'id');
    const m = ctx.db.select().from(outgoingMail).where(eq(outgoingMail.id, id)).get();
    if (!m) throw notFound(`no message with id ${id}`);
    res.json(OutboxMessage.parse(m));
  });

  return r;
}
