/**
 * Outgoing e-mail through nodemailer over SMTP.
 * - SMTP_URL unset: an embedded sink (./sink.ts) on loopback receives and stores every message (via 'sink');
 *   `send` resolves once the sink has stored it (the sink stores before acknowledging DATA).
 * - SMTP_URL set (smtp:// or smtps://, credentials in the URL): mail goes to that relay and a copy of what
 *   was handed over is recorded in the outbox (via 'relay').
 */
import nodemailer from 'nodemailer';
import type { Db } from '../db/client.js';
import { outgoingMail } from '../db/schema.js';
import type { Mailer } from '../services.js';
import { startSmtpSink, type SmtpSink } from './sink.js';

export interface SyntopyMailer extends Mailer {
  /** the embedded sink, when one runs */
  sink: SmtpSink | null;
}

/** `db` records what was sent (the outbox); `smtpUrl` is SMTP_URL, `from` is MAIL_FROM. */
export async function createMailer(deps: { db: Db; smtpUrl?: string; from: string }): Promise<SyntopyMailer> {
  const { db, smtpUrl, from } = deps;
  if (smtpUrl) {
    const transport = nodemailer.createTransport(smtpUrl);
    return {
      sink: null,
      async send(m) {
        const info = await transport.sendMail({ from, to: m.to, subject: m.subject, text: m.text, html: m.html });
        db
          .insert(outgoingMail)
          .values({ messageId: info.messageId ?? null, from, to: m.to, subject: m.subject, text: m.text, html: m.html ?? null, via: 'relay' })
          .run();
      },
      async close() {
        transport.close();
      },
    };
  }
  const sink = await startSmtpSink(db);
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
