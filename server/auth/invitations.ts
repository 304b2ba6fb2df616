/** Invitation tokens: random, stored only as a SHA-256 hash, valid once and until expiry. */
import crypto from 'node:crypto';
import { and, eq, isNull } from 'drizzle-orm';
import type { Request } from 'express';
import type { AppContext } from '../context.js';
import type { Db, DbOrTx } from '../db/client.js';
import { invitations, users } from '../db/schema.js';
import { HttpError } from '../http/errors.js';
import { formatDateTime } from '../../shared/format/datetime.js';

export const INVITATION_DAYS = 7;

export const hashToken = (token: string) => crypto.createHash('sha256').update(token).digest('hex');

/** The public address links in e-mails point to: PUBLIC_URL, else the request's own origin. */
export function publicOrigin(ctx: Pick<AppContext, 'env'>, req?: Request): string {
  if (ctx.env.PUBLIC_URL) return ctx.env.PUBLIC_URL.replace(/\/+$/, '');
  if (req) return `${req.protocol}://${req.get('host')}`;
  return `http://localhost:${ctx.env.PORT}`;
}

/**
 * Creates a fresh invitation for the user (earlier unused ones stop working) and returns the raw token.
 * Call inside the caller's transaction when it also creates the user.
 */
export function createInvitation(db: DbOrTx, userId: number, createdBy: number | null, now = new Date()) {
  const token = crypto.randomBytes(32).toString('base64url');
  const expiresAt = new Date(now.getTime() + INVITATION_DAYS * 86400_000).toISOString();
  db.update(invitations)
    .set({ usedAt: now.toISOString() })
    .where(and(eq(invitations.userId, userId), isNull(invitations.usedAt)))
    .run();
  db.insert(invitations).values({ userId, tokenHash: hashToken(token), expiresAt, createdBy }).run();
  return { token, expiresAt };
}

export async function sendInvitationMail(ctx: AppContext, req: Request | undefined, to: { email: string; name: string }, token: string, expiresAt: string, inviter?: string) {
  const link = `${publicOrigin(ctx, req)}/invite/${token}`;
  const until = formatDateTime(expiresAt);
  const by = inviter ? `${inviter} invited you` : 'You were invited';
  try {
    await ctx.mail.send({
      to: to.email,
      subject: 'Your Syntopy account: choose a password',
      text: `Hello ${to.name},\n\n${by} to Syntopy, the shared place for co-localization studies.\nOpen this link to choose your password (it works once, until ${until}):\n\n${link}\n\nIf you did not expect this message, ignore it.\n`,
      html: `<p>Hello ${escapeHtml(to.name)},</p><p>${escapeHtml(by)} to Syntopy, the shared place for co-localization studies.</p><p><a href="${escapeHtml(link)}">Choose your password</a> (the link works once, until ${until}).</p><p>If you did not expect this message, ignore it.</p>`,
    });
  } catch (e) {
    // the account exists; the manager can send the invitation again once mail works
    throw new HttpError(502, `the account for ${to.email} exists, but the invitation e-mail could not be sent (${(e as Error).message ?? 'mail error'}); use "send again" once mail works`);
  }
  return link;
}

export function escapeHtml(s: string) {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** Looks up an invitation by raw token with its user. */
export function findInvitation(db: Db, token: string) {
  if (!/^[A-Za-z0-9_-]{20,100}$/.test(token)) return undefined;
  return db
    .select({ inv: invitations, user: users })
    .from(invitations)
    .innerJoin(users, eq(users.id, invitations.userId))
    .where(eq(invitations.tokenHash, hashToken(token)))
    .get();
}
