/**
 * Personal API tokens of the signed-in user. Schemas: shared/schemas/tokens.ts; checking a presented token:
 * server/auth/tokens.ts. Every route here needs a cookie session: a token cannot list, mint or revoke tokens,
 * so a stolen one cannot make itself more. Creation and revocation are audit events.
 */
import { Router } from 'express';
import { and, desc, eq, gt, isNull, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { apiTokens, auditEvents, users } from '../db/schema.js';
import { CreateTokenRequest, CreatedToken, TokenListResponse, TokenSummary } from '../../shared/schemas/tokens.js';
import { conflict, notFound, parse } from '../http/errors.js';
import { idParam } from '../http/params.js';
import { newApiToken, requireSession, tokenSummary } from '../auth/tokens.js';
import { formatDateTime } from '../../shared/format/datetime.js';

/** Active (unrevoked, unexpired) tokens one user may hold at once. */
export const MAX_ACTIVE_TOKENS = 50;

export default function tokensRoutes(ctx: AppContext) {
  const r = Router();
  const db = ctx.db;

  r.get('/tokens', requireSession, (req, res) => {
    const rows = db.select().from(apiTokens).where(eq(apiTokens.userId, req.user!.id)).orderBy(desc(apiTokens.id)).all();
    const now = new Date();
    res.json(TokenListResponse.parse({ tokens: rows.map((row) => tokenSummary(row, now)) }));
  });

  r.post('/tokens', requireSession, (req, res) => {
    const body = parse(CreateTokenRequest, req.body);
    const me = req.user!;
    const now = new Date();
    const expiresAt = new Date(now.getTime() + body.expiresInDays * 86400_000).toISOString();
    const { token, hash, hint } = newApiToken();
    const row = db.transaction((tx) => {
      const active = tx
        .select({ n: sql<number>`count(*)` })
        .from(apiTokens)
        .where(and(eq(apiTokens.userId, me.id), isNull(apiTokens.revokedAt), gt(apiTokens.expiresAt, now.toISOString())))
        .get()!.n;
      if (active >= MAX_ACTIVE_TOKENS) throw conflict(`you already have ${active} active API tokens (at most ${MAX_ACTIVE_TOKENS}); revoke one you no longer use first`);
      // the token belongs to the owner's current session version: a password change or disabling ends it
      const { sessionVersion } = tx.select({ sessionVersion: users.sessionVersion }).from(users).where(eq(users.id, me.id)).get()!;
      const created = tx
        .insert(apiTokens)
        .values({ userId: me.id, name: body.name, scope: body.scope, tokenHash: hash, hint, sessionVersion, expiresAt, createdAt: now.toISOString() })
        .returning()
        .get();
      tx.insert(auditEvents)
        .values({ actorId: me.id, action: 'token_created', entity: 'api_token', entityId: created.id, details: { name: created.name, scope: created.scope, hint, expiresAt } })
        .run();
      return created;
    });
    res.status(201).json(CreatedToken.parse({ id: row.id, token, summary: tokenSummary(row, now) }));
  });

  r.delete('/tokens/:id', requireSession, (req, res) => {
    const id = idParam(req, 'id');
    const me = req.user!;
    const row = db.transaction((tx) => {
      const cur = tx.select().from(apiTokens).where(and(eq(apiTokens.id, id), eq(apiTokens.userId, me.id))).get();
      if (!cur) throw notFound(`no API token with id ${id}`);
      if (cur.revokedAt) throw conflict(`the API token "${cur.name}" was already revoked on ${formatDateTime(cur.revokedAt)}`);
      const revoked = tx.update(apiTokens).set({ revokedAt: new Date().toISOString() }).where(eq(apiTokens.id, id)).returning().get()!;
      tx.insert(auditEvents).values({ actorId: me.id, action: 'token_revoked', entity: 'api_token', entityId: id, details: { name: cur.name, scope: cur.scope, hint: cur.hint } }).run();
      return revoked;
    });
    res.json(TokenSummary.parse(tokenSummary(row)));
  });

  return r;
}
