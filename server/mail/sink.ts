/**
 * Embedded SMTP sink for development and tests: an `smtp-server` on 127.0.0.1 (random port) that parses
 * every message with `mailparser` and stores it in `outgoing_mail` (via 'sink') BEFORE it answers the
 * DATA command, so a sender's `sendMail` resolving means the message is stored.
 */
import { SMTPServer } from 'smtp-server';
import { simpleParser, type AddressObject } from 'mailparser';
import type { Db } from '../db/client.js';
import { outgoingMail } from '../db/schema.js';

export interface SmtpSink {
  host: string;
  port: number;
  close(): Promise<void>;
}

const addressText = (a: AddressObject | AddressObject[] | undefined) =>
  a === undefined
    ? ''
    : (Array.isArray(a) ? a : [a])
        .flatMap((x) => x.value)
        .map((v) => (v.name && v.address ? `${v.name} <${v.address}>` : (v.address ?? v.name ?? '')))
        .filter(Boolean)
        .join(', ');

export async function startSmtpSink(db: Db, opts: { maxBytes?: number } = {}): Promise<SmtpSink> {
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    banner: 'Syntopy mail sink',
    size: opts.maxBytes ?? 5 * 1024 * 1024,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((mail) => {
          const envelopeTo = session.envelope.rcptTo.map((r) => r.address).join(', ');
          const envelopeFrom = session.envelope.mailFrom ? session.envelope.mailFrom.address : '';
          db
            .insert(outgoingMail)
            .values({
              messageId: mail.messageId ?? null,
              from: addressText(mail.from) || envelopeFrom,
              to: addressText(mail.to) || envelopeTo,
              subject: mail.subject ?? '',
              text: mail.text ?? '',
              html: typeof mail.html === 'string' ? mail.html : null,
              via: 'sink',
            })
            .run();
          callback();
        })
        .catch((e: unknown) => callback(e instanceof Error ? e : new Error(String(e))));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      server.off('error', reject);
      resolve();
    });
  });
  // later socket errors (a client dropping the connection) must not crash the process
  server.on('error', () => {});
  const addr = server.server.address();
  const port = typeof addr === 'object' && addr ? addr.port : 0;
  return {
    host: '127.0.0.1',
    port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
