/**
 * Personal API tokens: `syt_` + 32 random bytes (base64url), stored only as a SHA-256 hash. A plain hash (no
 * salt, no slow KDF) is right here because the secret has 256 bits of entropy: nothing can be guessed, so the
 * hash only has to be one-way (NIST SP 800-63B rev. 3, 2017, §5.1.1.2 asks for salted slow hashing for
 * memorised secrets, not for random authenticators).
 *
 * A request with an `Authorization` header is authenticated by that header alone (the cookie is then ignored):
 * a valid `Bearer syt_…` token acts as its owner within the token's scope, anything else is 401. Because no
 * cookie is involved, such requests skip the same-origin write check (server/http/security.ts) and cannot be
 * forged cross-site. Tokens are limited per token per minute (`TOKEN_REQUESTS_PER_MINUTE`, in this process)
 * and record their last use at most once a minute.
 */
import crypto from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { eq, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { apiTokens, users } from '../db/schema.js';
import { HttpError, forbidden, unauthorized } from '../http/errors.js';
import { TOKEN_PREFIX, type TokenScope, type TokenState, type TokenSummary } from '../../shared/schemas/tokens.js';
import { formatDateTime } from '../../shared/format/datetime.js';
import type { SessionUser } from './session.js';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      /** set when the request was authenticated by a personal API token instead of a session cookie */
      apiToken?: { id: number; scope: TokenScope };
    }
  }
}

const SECRET_BYTES = 32;
/** syt_ + 43 base64url characters (32 bytes) */
const TOKEN_SHAPE = /^syt_[A-Za-z0-9_-]{43}$/;
const HINT_LENGTH = TOKEN_PREFIX.length + 4;
/** last-used time is written at most this often per token */
export const LAST_USED_EVERY_MS = 60_000;
const READ_METHODS = new Set(['GET', 'HEAD']);

export const hashApiToken = (token: string) => crypto.createHash('sha256').update(token).digest('hex');

/** A fresh token: the secret to show once, its hash to store and the hint to list. */
export function newApiToken() {
  const token = TOKEN_PREFIX + crypto.randomBytes(SECRET_BYTES).toString('base64url');
  return { token, hash: hashApiToken(token), hint: token.slice(0, HINT_LENGTH) };
}

/** True when the request carries `Authorization: Bearer …` (the same-origin write check lets exactly these pass). */
export const isBearerRequest = (req: Request) => /^bearer(\s|$)/i.test(req.get('authorization') ?? '');

type TokenRow = typeof apiTokens.$inferSelect;

export function tokenState(row: Pick<TokenRow, 'revokedAt' | 'expiresAt'>, now = new Date()): TokenState {
  if (row.revokedAt) return 'revoked';
  return row.expiresAt <= now.toISOString() ? 'expired' : 'active';
}

export function tokenSummary(row: TokenRow, now = new Date()): TokenSummary {
  return {
    id: row.id,
    name: row.name,
    scope: row.scope,
    hint: row.hint,
    state: tokenState(row, now),
    createdAt: row.createdAt,
    expiresAt: row.expiresAt,
    lastUsedAt: row.lastUsedAt,
    revokedAt: row.revokedAt,
  };
}

/** Requests per token per fixed one-minute window, counted in this process. */
class TokenRateLimiter {
  private windows = new Map<number, { start: number; count: number }>();
  constructor(private readonly perMinute: number) {}
  /** Counts one request; returns the seconds to wait when over the limit, else 0. */
  take(tokenId: number, nowMs: number): number {
    let w = this.windows.get(tokenId);
    if (!w || nowMs - w.start >= 60_000) {
      if (this.windows.size > 10_000) for (const [k, v] of this.windows) if (nowMs - v.start >= 60_000) this.windows.delete(k);
      w = { start: nowMs, count: 0 };
      this.windows.set(tokenId, w);
    }
    w.count++;
    return w.count > this.perMinute ? Math.max(1, Math.ceil((w.start + 60_000 - nowMs) / 1000)) : 0;
  }
}

/**
 * Authenticates a request that carries an Authorization header (session.ts `authenticate` hands these here):
 * sets req.user and req.apiToken, or fails with 401 (not a valid, current token), 429 (over the limit) or
 * 403 (a read token asked to change something). The token itself is never quoted back.
 */
export function tokenAuthenticator(ctx: AppContext): RequestHandler {
  const limiter = new TokenRateLimiter(ctx.env.TOKEN_REQUESTS_PER_MINUTE);
  const byHash = ctx.db
    .select({ token: apiTokens, user: users })
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(eq(apiTokens.tokenHash, sql.placeholder('hash')))
    .prepare();
  const touch = ctx.db.update(apiTokens).set({ lastUsedAt: sql`${sql.placeholder('at')}` }).where(eq(apiTokens.id, sql.placeholder('id'))).prepare();

  return (req, res, next) => {
    const header = req.get('authorization') ?? '';
    const m = /^(\S*)\s*(.*)$/.exec(header.trim())!;
    if (m[1].toLowerCase() !== 'bearer') {
      throw unauthorized(`the Authorization header must be "Bearer ${TOKEN_PREFIX}…" with a personal API token; got the scheme ${JSON.stringify(m[1])}`);
    }
    const token = m[2];
    if (!TOKEN_SHAPE.test(token)) {
      throw unauthorized(
        `that is not a Syntopy API token: expected "${TOKEN_PREFIX}" and 43 letters, digits, "-" or "_", got ${token.length} characters` +
          (token.length ? ` starting ${JSON.stringify(token.slice(0, 4))}` : ''),
      );
    }
    const found = byHash.get({ hash: hashApiToken(token) });
    if (!found) throw unauthorized('unknown API token: check that it was copied whole, or create a new one on your Account page');
    const { token: row, user } = found;
    const now = new Date();
    if (row.revokedAt) throw unauthorized(`the API token "${row.name}" was revoked on ${formatDateTime(row.revokedAt)}`);
    if (row.expiresAt <= now.toISOString()) throw unauthorized(`the API token "${row.name}" expired on ${formatDateTime(row.expiresAt)}`);
    if (user.disabled || user.sessionVersion !== row.sessionVersion) {
      throw unauthorized(`the API token "${row.name}" stopped working when its account was disabled or its password changed; create a new one`);
    }
    if (!row.lastUsedAt || now.getTime() - Date.parse(row.lastUsedAt) >= LAST_USED_EVERY_MS) touch.run({ id: row.id, at: now.toISOString() });
    const wait = limiter.take(row.id, now.getTime());
    if (wait > 0) {
      res.setHeader('Retry-After', String(wait));
      throw new HttpError(429, `too many requests with the API token "${row.name}": at most ${ctx.env.TOKEN_REQUESTS_PER_MINUTE} a minute; wait ${wait} s`);
    }
    if (row.scope === 'read' && !READ_METHODS.has(req.method)) {
      throw forbidden(`the API token "${row.name}" has read scope and may only GET; ${req.method} ${req.baseUrl}${req.path} needs a token with write scope`);
    }
    req.user = { id: user.id, email: user.email, name: user.name, roles: user.roles } satisfies SessionUser;
    req.apiToken = { id: row.id, scope: row.scope };
    next();
  };
}

/** For routes that must not be reached with an API token (managing tokens, changing the password): a cookie session is required. */
export const requireSession: RequestHandler = (req, _res, next) => {
  if (!req.user) return next(unauthorized());
  if (req.apiToken) return next(forbidden('API tokens cannot manage API tokens or change the password; sign in with your password in the browser (Account)'));
  next();
};
