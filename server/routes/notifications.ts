/** The signed-in user's e-mail notification choices. Schemas: shared/schemas/notifications.ts; sending: server/mail/notify.ts. */
import { Router } from 'express';
import { eq } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, notificationOptOuts } from '../db/schema.js';
import { requireUser } from '../auth/session.js';
import { parse } from '../http/errors.js';
import { NOTIFICATION_KINDS, NOTIFICATION_TEXT, UpdateNotificationsRequest, type NotificationSettings } from '../../shared/schemas/notifications.js';

export default function notificationsRoutes(ctx: AppContext) {
  const r = Router();
  const settingsOf = (userId: number): NotificationSettings => {
    const off = new Set(ctx.db.select({ k: notificationOptOuts.kind }).from(notificationOptOuts).where(eq(notificationOptOuts.userId, userId)).all().map((x) => x.k));
    return { kinds: NOTIFICATION_KINDS.map((kind) => ({ kind, ...NOTIFICATION_TEXT[kind], on: !off.has(kind) })) };
  };

  r.get('/notifications', requireUser, (req, res) => {
    res.json(settingsOf(req.user!.id));
  });

  r.put('/notifications', requireUser, (req, res) => {
    const body = parse(UpdateNotificationsRequest, req.body);
    const userId = req.user!.id;
    ctx.db.transaction((tx) => {
      tx.delete(notificationOptOuts).where(eq(notificationOptOuts.userId, userId)).run();
      for (const kind of new Set(body.off)) tx.insert(notificationOptOuts).values({ userId, kind }).run();
      tx.insert(auditEvents).values({ actorId: userId, action: 'notifications.update', entity: 'user', entityId: userId, details: { off: [...new Set(body.off)] } }).run();
    });
    res.json(settingsOf(userId));
  });
  return r;
}
