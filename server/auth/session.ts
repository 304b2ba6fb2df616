/** Session JWTs (jose, HS256) carried in an httpOnly SameSite=Lax cookie. */
import { SignJWT, jwtVerify, type JWTPayload } from 'jose';
import type { Request, Response, RequestHandler } from 'express';
import { eq, lt, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { revokedSessions, users, type Role } from '../db/schema.js';
import { unauthorized } from '../http/errors.js';
import { tokenAuthenticator } from './tokens.js';

export const SESSION_COOKIE = 'syntopy_session';

export interface SessionUser {
  id: number;
  email: string;
  name: string;
  roles: Role[];
}

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      user?: SessionUser;
      /** id and expiry (s) of the session token that signed this request in */
      session?: { jti: string; exp: number };
    }
  }
}

const key = (secret: string) => new TextEncoder().encode(secret);

export async function signSession(ctx: AppContext, userId: number, sessionVersion: number): Promise<string> {
  return new SignJWT({ sv: sessionVersion, typ: 'session' })
    .setProtectedHeader({ alg: 'HS256' })
    .setSubject(String(userId))
    .setIssuedAt()
    .setJti(crypto.randomUUID())
    .setExpirationTime(`${ctx.env.SESSION_HOURS}h`)
    .sign(key(ctx.env.SESSION_SECRET));
}

export function setSessionCookie(ctx: AppContext, req: Request, res: Response, token: string) {
  res.cookie(SESSION_COOKIE, token, {
    httpOnly: true,
    sameSite: 'lax',
    secure: req.secure,
    path: '/',
    maxAge: ctx.env.SESSION_HOURS * 3600 * 1000,
  });
}

export function clearSessionCookie(req: Request, res: Response) {
  res.clearCookie(SESSION_COOKIE, { httpOnly: true, sameSite: 'lax', secure: req.secure, path: '/' });
}

/**
 * Reads the cookie when present; sets req.user for a valid, current session of an enabled user. A request with
 * an Authorization header is authenticated by that header alone, as a personal API token (server/auth/tokens.ts):
 * the cookie is not read, so a bad token is a 401 and never falls through to a session.
 */
export function authenticate(ctx: AppContext): RequestHandler {
  const secret = key(ctx.env.SESSION_SECRET);
  const byToken = tokenAuthenticator(ctx);
  const revoked = ctx.db.select({ jti: revokedSessions.jti }).from(revokedSessions).where(eq(revokedSessions.jti, sql.placeholder('jti'))).prepare();
  const userById = ctx.db.select().from(users).where(eq(users.id, sql.placeholder('id'))).prepare();
  // Tokens whose signature was verified, by their exact text (an HMAC check of the same bytes with the same key
  // gives the same answer): a signed-in client's every request then skips the ~1 ms asynchronous WebCrypto
  // round-trip. Expiry is checked again on every use; revocation and the user row are read every time.
  const verified = new Map<string, JWTPayload>();
  const verify = async (token: string) => {
    const hit = verified.get(token);
    const now = Date.now() / 1000;
    if (hit) {
      if (hit.exp === undefined || hit.exp > now) return hit;
      verified.delete(token);
    }
    const { payload } = await jwtVerify(token, secret, { algorithms: ['HS256'] });
    verified.set(token, payload);
    if (verified.size > 10_000) verified.delete(verified.keys().next().value!);
    return payload;
  };
  return async (req, res, next) => {
    if (req.get('authorization') !== undefined) return byToken(req, res, next);
    const token = req.cookies?.[SESSION_COOKIE];
    if (!token) return next();
    try {
      const payload = await verify(token);
      if (payload.typ !== 'session') return next();
      if (payload.jti && revoked.get({ jti: payload.jti })) return next();
      const u = userById.get({ id: Number(payload.sub) });
      if (u && !u.disabled && u.sessionVersion === payload.sv) {
        req.user = { id: u.id, email: u.email, name: u.name, roles: u.roles };
        if (payload.jti && payload.exp) req.session = { jti: payload.jti, exp: payload.exp };
      }
    } catch {
      /* expired or tampered: treated as signed out */
    }
    next();
  };
}

export const requireUser: RequestHandler = (req, _res, next) => (req.user ? next() : next(unauthorized()));

/** Ends the request's session token on the server (sign-out), so a copied cookie stops working too. */
export function revokeSession(ctx: AppContext, req: Request) {
  if (!req.session) return;
  const nowIso = new Date().toISOString();
  ctx.db.transaction((tx) => {
    tx.delete(revokedSessions).where(lt(revokedSessions.expiresAt, nowIso)).run();
    tx.insert(revokedSessions)
      .values({ jti: req.session!.jti, expiresAt: new Date(req.session!.exp * 1000).toISOString() })
      .onConflictDoNothing()
      .run();
  });
}
