/**
 * Outgoing e-mail through nodemailer over SMTP.
 * - SMTP_URL unset: an embedded sink (./sink.ts) on loopback receives and stores every message (via 'sink');
 *   `send` resolves once the sink has stored it (the sink stores before acknowledging DATA).
 * - SMTP_URL set (smtp:// or smtps://, credentials in the URL): mail goes to that relay and a copy of what
 *   was handed over is recorded in the outbox (via 'relay').
 */
import nodemailer from 'nodemailer';
import type { AppContext, Mailer } from '../context.js';
import { outgoingMail } from '../db/schema.js';
import { startSmtpSink, type SmtpSink } from './sink.js';

export interface SyntopyMailer extends Mailer {
  /** the embedded sink, when one runs */
  sink: SmtpSink | null;
}

export async function createMailer(ctx: AppContext): Promise<SyntopyMailer> {
  const from = ctx.env.MAIL_FROM;
  if (ctx.env.SMTP_URL) {
    const transport = nodemailer.createTransport(ctx.env.SMTP_URL);
    return {
      sink: null,
      async send(m) {
        const info = await transport.sendMail({ from, to: m.to, subject: m.subject, text: m.text, html: m.html });
        ctx.db
          .insert(outgoingMail)
          .values({ messageId: info.messageId ?? null, from, to: m.to, subject: m.subject, text: m.text, html: m.html ?? null, via: 'relay' })
          .run();
      },
      async close() {
        transport.close();
      },
    };
  }
  const sink = await startSmtpSink(ctx);
  const transport = nodemailer.createTransport({
    host: sink.host,
    port: sink.port,
    secure: false,
    ignoreTLS: true,
    connectionTimeout: 5000,
    greetingTimeout: 5000,
    socketTimeout: 10000,
  });
  return {
    sink,
    async send(m) {
      await transport.sendMail({ from, to: m.to, subject: m.subject, text: m.text, html: m.html });
    },
    async close() {
      transport.close();
      await sink.close();
    },
  };
}
