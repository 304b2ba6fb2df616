/**
 * Share-link tokens: compact JWS (HS256, jose) with typ 'share', jti = share_links.token_id, rid = report id,
 * exp = the link's expiry. The key is derived from SESSION_SECRET with HMAC-SHA-256 over a fixed label, so a
 * session token can never pass as a share token or the other way round (RFC 7515 / RFC 7519; key separation is
 * common practice).
 *
 * Verification order: signature and format (failure → 401 "not valid"), then expiry in the token (→ 410),
 * then the database row: unknown jti → 410 (report deleted), report mismatch → 401, revoked → 410,
 * expired by the row's date → 410. Only the database says whether a link still works.
 */
import crypto from 'node:crypto';
import { SignJWT, jwtVerify, errors as joseErrors } from 'jose';
import { eq } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { shareLinks } from '../db/schema.js';
import { gone, unauthorized } from '../http/errors.js';

const keys = new WeakMap<object, Uint8Array>();
function shareKey(ctx: AppContext): Uint8Array {
  let k = keys.get(ctx.env);
  if (!k) {
    k = new Uint8Array(crypto.createHmac('sha256', ctx.env.SESSION_SECRET).update('syntopy share-link key v1').digest());
    keys.set(ctx.env, k);
  }
  return k;
}

export const newTokenId = () => crypto.randomBytes(18).toString('base64url');

export async function signShareToken(ctx: AppContext, link: { tokenId: string; reportId: number; expiresAt: string }): Promise<string> {
  return new SignJWT({ typ: 'share', rid: link.reportId })
    .setProtectedHeader({ alg: 'HS256' })
    .setJti(link.tokenId)
    .setIssuedAt()
    .setExpirationTime(Math.floor(new Date(link.expiresAt).getTime() / 1000))
    .sign(shareKey(ctx));
}

export const LINK_INVALID = 'this link is not valid; check that the whole link was copied from the e-mail';
export const LINK_REVOKED = 'this link was withdrawn by the person who shared the report';
export const LINK_EXPIRED = 'this link has expired; ask the person who shared the report for a new one';
export const LINK_GONE = 'this report is no longer available';

/** The live share link a token opens, or an HttpError (401 / 410). */
export async function verifyShareToken(ctx: AppContext, token: string, now = new Date()) {
  if (typeof token !== 'string' || token.length > 2000 || !/^[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+$/.test(token)) throw unauthorized(LINK_INVALID);
  let payload: Record<string, unknown>;
  try {
    ({ payload } = await jwtVerify(token, shareKey(ctx), { algorithms: ['HS256'], currentDate: now }));
  } catch (e) {
    if (e instanceof joseErrors.JWTExpired) throw gone(LINK_EXPIRED);
    throw unauthorized(LINK_INVALID);
  }
  if (payload.typ !== 'share' || typeof payload.jti !== 'string' || typeof payload.rid !== 'number') throw unauthorized(LINK_INVALID);
  const link = ctx.db.select().from(shareLinks).where(eq(shareLinks.tokenId, payload.jti)).get();
  if (!link) throw gone(LINK_GONE);
  if (link.reportId !== payload.rid) throw unauthorized(LINK_INVALID);
  if (link.revokedAt) throw gone(LINK_REVOKED);
  if (new Date(link.expiresAt).getTime() <= now.getTime()) throw gone(LINK_EXPIRED);
  return link;
}

export function linkState(l: { revokedAt: string | null; expiresAt: string }, now = new Date()): 'active' | 'revoked' | 'expired' {
  if (l.revokedAt) return 'revoked';
  return new Date(l.expiresAt).getTime() <= now.getTime() ? 'expired' : 'active';
}

