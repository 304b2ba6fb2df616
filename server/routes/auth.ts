/** Sign-in, session and sign-out. (Throttling, invitations and password change: foundation work.) */
import { Router } from 'express';
import { eq } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { users } from '../db/schema.js';
import { LoginRequest, MeResponse } from '../../shared/schemas/auth.js';
import { parse, unauthorized } from '../http/errors.js';
import { DUMMY_HASH, verifyPassword } from '../auth/passwords.js';
import { clearSessionCookie, requireUser, setSessionCookie, signSession } from '../auth/session.js';

export const LOGIN_FAILED = 'that e-mail and password do not match an active account';

export default function authRoutes(ctx: AppContext) {
  const r = Router();

  r.post('/auth/login', async (req, res) => {
    const body = parse(LoginRequest, req.body);
    const u = ctx.db.select().from(users).where(eq(users.email, body.email)).get();
    const ok = await verifyPassword(body.password, u?.passwordHash ?? DUMMY_HASH);
    if (!u || !ok || u.disabled) throw unauthorized(LOGIN_FAILED);
    setSessionCookie(ctx, req, res, await signSession(ctx, u.id, u.sessionVersion));
    res.json(MeResponse.parse({ user: { id: u.id, email: u.email, name: u.name, roles: u.roles } }));
  });

  r.get('/auth/me', requireUser, (req, res) => {
    res.json(MeResponse.parse({ user: req.user }));
  });

  r.post('/auth/logout', (req, res) => {
    clearSessionCookie(req, res);
    res.json({ ok: true });
  });

  return r;
}
