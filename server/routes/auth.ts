/** Sign-in (throttled), session, sign-out, password change and invitation acceptance. Schemas: shared/schemas/auth.ts. */
import { Router } from 'express';
import { and, eq, isNull, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, invitations, users } from '../db/schema.js';
import { AcceptInvitationRequest, ChangePasswordRequest, InvitationInfo, LoginRequest, MeResponse } from '../../shared/schemas/auth.js';
import { HttpError, badRequest, gone, notFound, parse, unauthorized } from '../http/errors.js';
import { DUMMY_HASH, hashPassword, verifyPassword } from '../auth/passwords.js';
import { clearSessionCookie, requireUser, revokeSession, setSessionCookie, signSession } from '../auth/session.js';
import { THROTTLED_MESSAGE, THROTTLE, clearFailures, isThrottled, recordFailure } from '../auth/throttle.js';
import { findInvitation } from '../auth/invitations.js';
import { requireSession } from '../auth/tokens.js';

export const LOGIN_FAILED = 'that e-mail and password do not match an active account';
export const INVITATION_USED = 'this invitation link was already used or has expired; ask a facility manager for a new one';

const meOf = (u: { id: number; email: string; name: string; roles: MeResponse['user']['roles'] }) =>
  MeResponse.parse({ user: { id: u.id, email: u.email, name: u.name, roles: u.roles } });

export default function authRoutes(ctx: AppContext) {
  const r = Router();

  r.post('/auth/login', async (req, res) => {
    const body = parse(LoginRequest, req.body);
    const ip = req.ip ?? 'unknown';
    if (isThrottled(ctx.db, body.email, ip)) {
      res.setHeader('Retry-After', String(THROTTLE.windowMinutes * 60));
      throw new HttpError(429, THROTTLED_MESSAGE);
    }
    const u = ctx.db.select().from(users).where(eq(users.email, body.email)).get();
    const ok = await verifyPassword(body.password, u?.passwordHash ?? DUMMY_HASH);
    if (!u || !ok || u.disabled || !u.passwordHash) {
      recordFailure(ctx.db, body.email, ip);
      throw unauthorized(LOGIN_FAILED);
    }
    clearFailures(ctx.db, body.email, ip);
    setSessionCookie(ctx, req, res, await signSession(ctx, u.id, u.sessionVersion));
    res.json(meOf(u));
  });

  r.get('/auth/me', requireUser, (req, res) => {
    res.json(MeResponse.parse({ user: req.user }));
  });

  r.post('/auth/logout', (req, res) => {
    revokeSession(ctx, req);
    clearSessionCookie(req, res);
    res.json({ ok: true });
  });

  /** Change one's own password: every other session ends (sessionVersion bump); this one gets a new cookie. */
  r.post('/auth/password', requireUser, requireSession, async (req, res) => {
    const body = parse(ChangePasswordRequest, req.body);
    const me = req.user!;
    const u = ctx.db.select().from(users).where(eq(users.id, me.id)).get()!;
    if (!(await verifyPassword(body.currentPassword, u.passwordHash))) {
      throw badRequest('currentPassword: that is not your current password', { issues: [{ path: 'currentPassword', message: 'that is not your current password' }] });
    }
    if (body.currentPassword === body.newPassword) {
      throw badRequest('newPassword: choose a password different from the current one', { issues: [{ path: 'newPassword', message: 'choose a password different from the current one' }] });
    }
    const hash = await hashPassword(body.newPassword);
    const updated = ctx.db.transaction((tx) => {
      const row = tx
        .update(users)
        .set({ passwordHash: hash, sessionVersion: sql`${users.sessionVersion} + 1` })
        .where(eq(users.id, u.id))
        .returning()
        .get()!;
      tx.insert(auditEvents).values({ actorId: u.id, action: 'password_changed', entity: 'user', entityId: u.id }).run();
      return row;
    });
    setSessionCookie(ctx, req, res, await signSession(ctx, updated.id, updated.sessionVersion));
    res.json(meOf(updated));
  });

  function usableInvitation(token: string) {
    const found = findInvitation(ctx.db, token);
    if (!found) throw notFound('no such invitation; check that the whole link was copied');
    if (found.inv.usedAt || found.inv.expiresAt <= new Date().toISOString() || found.user.disabled) throw gone(INVITATION_USED);
    return found;
  }

  r.get('/auth/invitations/:token', (req, res) => {
    const { inv, user } = usableInvitation(String(req.params.token));
    res.json(InvitationInfo.parse({ email: user.email, name: user.name, roles: user.roles, expiresAt: inv.expiresAt }));
  });

  r.post('/auth/invitations/:token/accept', async (req, res) => {
    const body = parse(AcceptInvitationRequest, req.body);
    const { inv } = usableInvitation(String(req.params.token));
    const hash = await hashPassword(body.password);
    const now = new Date().toISOString();
    const u = ctx.db.transaction((tx) => {
      // the conditional update is what makes the link single-use even under concurrent requests
      const claimed = tx
        .update(invitations)
        .set({ usedAt: now })
        .where(and(eq(invitations.id, inv.id), isNull(invitations.usedAt)))
        .returning()
        .get();
      if (!claimed) throw gone(INVITATION_USED);
      const row = tx
        .update(users)
        .set({ passwordHash: hash, sessionVersion: sql`${users.sessionVersion} + 1` })
        .where(eq(users.id, inv.userId))
        .returning()
        .get()!;
      tx.insert(auditEvents).values({ actorId: row.id, action: 'invitation_accepted', entity: 'user', entityId: row.id }).run();
      return row;
    });
    setSessionCookie(ctx, req, res, await signSession(ctx, u.id, u.sessionVersion));
    res.json(meOf(u));
  });

  return r;
}
