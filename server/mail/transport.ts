/** TEMPORARY: replaced by the SMTP transport + embedded sink (foundation work). Records mail in the outbox table. */
import type { AppContext, Mailer } from '../context.js';
import { outgoingMail } from '../db/schema.js';

export async function createMailer(ctx: AppContext): Promise<Mailer> {
  return {
    async send(m) {
      ctx.db.insert(outgoingMail).values({ from: ctx.env.MAIL_FROM, to: m.to, subject: m.subject, text: m.text, html: m.html ?? null, via: 'sink' }).run();
    },
    async close() {},
  };
}
