/**
 * Personal API tokens: minted with a cookie session, used with `Authorization: Bearer`, within their scope,
 * until revoked, expired or the owner is disabled or changes the password; rate-limited per token; audited.
 * (common practice: RFC 6750 bearer usage, OWASP REST Security Cheat Sheet; no outside reference value)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';
import { apiTokens, auditEvents, studies } from '../../server/db/schema.js';
import { hashApiToken } from '../../server/auth/tokens.js';
import { TokenListResponse } from '../../shared/schemas/tokens.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t?.close());

type Agent = Awaited<ReturnType<TestApp['login']>>;
async function mint(agent: Agent, body: Record<string, unknown>) {
  const res = await agent.post('/api/tokens').send(body);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body as { id: number; token: string };
}
const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
const row = (id: number) => t.ctx.db.select().from(apiTokens).where(eq(apiTokens.id, id)).get()!;

describe('creating and using a token', () => {
  it('returns the token once, stores only its SHA-256, and writes an audit event', async () => {
    const bio = await t.login('biologist');
    const before = Date.now();
    const { id, token } = await mint(bio, { name: '  plate script ', scope: 'read', expiresInDays: 30 });
    expect(token).toMatch(/^syt_[A-Za-z0-9_-]{43}$/);
    const stored = row(id);
    expect(stored.tokenHash).toBe(hashApiToken(token));
    expect(JSON.stringify(stored)).not.toContain(token.slice(4));
    expect(stored.name).toBe('plate script');
    const days = (Date.parse(stored.expiresAt) - before) / 86400_000;
    expect(days).toBeGreaterThan(29.99);
    expect(days).toBeLessThan(30.01);
    const audit = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'token_created'), eq(auditEvents.entityId, id))).get()!;
    expect(audit).toMatchObject({ actorId: t.world.users.biologist.id, entity: 'api_token', details: { name: 'plate script', scope: 'read' } });
    expect(JSON.stringify(audit.details)).not.toContain(token.slice(8));
  });

  it('a read token reads as its owner without a cookie; a write with it is 403 naming the scope', async () => {
    const bio = await t.login('biologist');
    const { token } = await mint(bio, { name: 'reader', scope: 'read', expiresInDays: 7 });
    const me = await request(t.app).get('/api/auth/me').set(bearer(token));
    expect(me.status).toBe(200);
    expect(me.body.user.email).toBe(t.world.users.biologist.email);
    const study = await request(t.app).get(`/api/studies/${t.world.studyA}`).set(bearer(token));
    expect(study.status).toBe(200);
    expect(study.body.name).toBe('Study A');
    // the owner's permissions still apply: lab B's study stays invisible
    expect((await request(t.app).get(`/api/studies/${t.world.studyB}`).set(bearer(token))).status).toBe(404);
    const write = await request(t.app).patch(`/api/studies/${t.world.studyA}`).set(bearer(token)).send({ name: 'Renamed by a reader' });
    expect(write.status).toBe(403);
    expect(write.body.error).toMatch(/read scope.*PATCH \/api\/studies\/\d+ needs a token with write scope/);
    expect(t.ctx.db.select().from(studies).where(eq(studies.id, t.world.studyA)).get()!.name).toBe('Study A');
  });

  it('a write token changes things without an Origin header, and even with a foreign one (no cookie is involved)', async () => {
    const bio = await t.login('biologist');
    const { token } = await mint(bio, { name: 'writer', scope: 'write', expiresInDays: 7 });
    const res = await request(t.app).patch(`/api/studies/${t.world.studyA}`).set(bearer(token)).send({ description: 'set by a script' });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.description).toBe('set by a script');
    const foreign = await request(t.app).patch(`/api/studies/${t.world.studyA}`).set(bearer(token)).set('Origin', 'https://evil.example').send({ description: 'again' });
    expect(foreign.status).toBe(200);
    // the same foreign origin with the cookie session is still refused: only bearer requests skip the check
    const cookie = await bio.patch(`/api/studies/${t.world.studyA}`).set('Origin', 'https://evil.example').send({ description: 'forged' });
    expect(cookie.status).toBe(403);
    expect(cookie.body.error).toContain('"https://evil.example"');
  });

  it('a bad bearer token is 401 even when a valid session cookie comes with it (no fall-back to the cookie)', async () => {
    const bio = await t.login('biologist');
    const res = await bio.get('/api/auth/me').set(bearer('syt_' + 'A'.repeat(43)));
    expect(res.status).toBe(401);
    expect(res.body.error).toMatch(/unknown API token/);
    const basic = await bio.get('/api/auth/me').set('Authorization', 'Basic dXNlcjpwYXNz');
    expect(basic.status).toBe(401);
    expect(basic.body.error).toContain('got the scheme "Basic"');
    const short = await request(t.app).get('/api/auth/me').set(bearer('syt_tooshort-secret'));
    expect(short.status).toBe(401);
    expect(short.body.error).toContain('got 19 characters starting "syt_"');
    expect(short.body.error).not.toContain('tooshort');
  });

  it('records the last use at most once a minute', async () => {
    const bio = await t.login('biologist');
    const { id, token } = await mint(bio, { name: 'touch', scope: 'read', expiresInDays: 7 });
    expect(row(id).lastUsedAt).toBeNull();
    await request(t.app).get('/api/auth/me').set(bearer(token)).expect(200);
    const first = row(id).lastUsedAt!;
    expect(Date.now() - Date.parse(first)).toBeLessThan(5000);
    await request(t.app).get('/api/auth/me').set(bearer(token)).expect(200);
    expect(row(id).lastUsedAt).toBe(first);
    const old = new Date(Date.now() - 61_000).toISOString();
    t.ctx.db.update(apiTokens).set({ lastUsedAt: old }).where(eq(apiTokens.id, id)).run();
    await request(t.app).get('/api/auth/me').set(bearer(token)).expect(200);
    expect(Date.parse(row(id).lastUsedAt!)).toBeGreaterThan(Date.parse(old) + 60_000);
  });
});

describe('listing', () => {
  it("lists only the caller's tokens, never the secret or its hash", async () => {
    const mic = await t.login('microscopist');
    const { id, token } = await mint(mic, { name: 'listed', scope: 'write', expiresInDays: 90 });
    const res = await mic.get('/api/tokens');
    expect(res.status).toBe(200);
    const list = TokenListResponse.parse(res.body).tokens;
    expect(list.map((x) => x.id)).toEqual([id]);
    expect(list[0]).toMatchObject({ name: 'listed', scope: 'write', state: 'active', lastUsedAt: null, revokedAt: null, hint: token.slice(0, 8) });
    const text = JSON.stringify(res.body);
    expect(text).not.toContain(token);
    expect(text).not.toContain(hashApiToken(token));
    expect(Object.keys(res.body.tokens[0]).sort()).toEqual(['createdAt', 'expiresAt', 'hint', 'id', 'lastUsedAt', 'name', 'revokedAt', 'scope', 'state']);
  });
});

describe('a token stops working', () => {
  it('when revoked (401), with an audit event; revoking again is 409, another user’s token is 404', async () => {
    const bio = await t.login('biologist');
    const { id, token } = await mint(bio, { name: 'to revoke', scope: 'read', expiresInDays: 7 });
    await request(t.app).get('/api/auth/me').set(bearer(token)).expect(200);
    const other = await t.login('outsider');
    const foreign = await other.delete(`/api/tokens/${id}`);
    expect(foreign.status).toBe(404);
    expect(foreign.body.error).toBe(`no API token with id ${id}`);
    const del = await bio.delete(`/api/tokens/${id}`);
    expect(del.status).toBe(200);
    expect(del.body).toMatchObject({ id, state: 'revoked' });
    const res = await request(t.app).get('/api/auth/me').set(bearer(token));
    expect(res.status).toBe(401);
    expect(res.body.error).toMatch(/"to revoke" was revoked on \d{4}-\d\d-\d\d \d\d:\d\d UTC/);
    expect((await bio.delete(`/api/tokens/${id}`)).status).toBe(409);
    const audit = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'token_revoked'), eq(auditEvents.entityId, id))).all();
    expect(audit).toHaveLength(1);
    expect(audit[0].actorId).toBe(t.world.users.biologist.id);
  });

  it('when expired (401), and the list says expired', async () => {
    const bio = await t.login('biologist');
    const { id, token } = await mint(bio, { name: 'short-lived', scope: 'read', expiresInDays: 1 });
    t.ctx.db.update(apiTokens).set({ expiresAt: new Date(Date.now() - 1000).toISOString() }).where(eq(apiTokens.id, id)).run();
    const res = await request(t.app).get('/api/auth/me').set(bearer(token));
    expect(res.status).toBe(401);
    expect(res.body.error).toMatch(/"short-lived" expired on/);
    const list = TokenListResponse.parse((await bio.get('/api/tokens')).body).tokens;
    expect(list.find((x) => x.id === id)!.state).toBe('expired');
  });

  it('when its owner is disabled (401), and stays dead after re-enabling', async () => {
    const col = await t.login('collaborator');
    const { token } = await mint(col, { name: 'collab', scope: 'read', expiresInDays: 7 });
    await request(t.app).get('/api/auth/me').set(bearer(token)).expect(200);
    const mgr = await t.login('manager');
    await mgr.patch(`/api/users/${t.world.users.collaborator.id}`).send({ disabled: true }).expect(200);
    const res = await request(t.app).get('/api/auth/me').set(bearer(token));
    expect(res.status).toBe(401);
    expect(res.body.error).toMatch(/disabled or its password changed/);
    await mgr.patch(`/api/users/${t.world.users.collaborator.id}`).send({ disabled: false }).expect(200);
    expect((await request(t.app).get('/api/auth/me').set(bearer(token))).status).toBe(401);
  });

  it("when its owner changes the password (401): the user's session version ends tokens like sessions", async () => {
    const mic = await t.login('microscopist');
    const { token } = await mint(mic, { name: 'before the change', scope: 'read', expiresInDays: 7 });
    await mic.post('/api/auth/password').send({ currentPassword: TEST_PASSWORD, newPassword: 'another good password' }).expect(200);
    expect((await request(t.app).get('/api/auth/me').set(bearer(token))).status).toBe(401);
    await mic.post('/api/auth/password').send({ currentPassword: 'another good password', newPassword: TEST_PASSWORD }).expect(200);
  });
});

describe('token management needs the cookie session', () => {
  it('a write token cannot list, mint or revoke tokens (403), and nothing is created', async () => {
    const bio = await t.login('biologist');
    const { id, token } = await mint(bio, { name: 'powerful', scope: 'write', expiresInDays: 7 });
    const count = () => t.ctx.db.select().from(apiTokens).all().length;
    const n = count();
    const post = await request(t.app).post('/api/tokens').set(bearer(token)).send({ name: 'child', scope: 'write', expiresInDays: 365 });
    expect(post.status).toBe(403);
    expect(post.body.error).toMatch(/API tokens cannot manage API tokens/);
    expect(count()).toBe(n);
    expect((await request(t.app).get('/api/tokens').set(bearer(token))).status).toBe(403);
    expect((await request(t.app).delete(`/api/tokens/${id}`).set(bearer(token))).status).toBe(403);
    expect(row(id).revokedAt).toBeNull();
    expect((await request(t.app).get('/api/tokens')).status).toBe(401);
  });

  it('a write token cannot change the password (403), even with the right current password', async () => {
    const micro = await t.login('microscopist');
    const { token } = await mint(micro, { name: 'script', scope: 'write', expiresInDays: 7 });
    const res = await request(t.app).post('/api/auth/password').set(bearer(token)).send({ currentPassword: TEST_PASSWORD, newPassword: 'a-new-password-123' });
    expect(res.status).toBe(403);
    expect(res.body.error).toMatch(/change the password/);
    expect((await request(t.app).get('/api/studies').set(bearer(token))).status).toBe(200);
  });
});

describe('bad input', () => {
  it('400 with a message quoting the value received; nothing stored', async () => {
    const bio = await t.login('biologist');
    const n = t.ctx.db.select().from(apiTokens).all().length;
    const cases: [Record<string, unknown>, string][] = [
      [{ name: 'x', scope: 'admin', expiresInDays: 7 }, 'scope: scope must be "read" or "write", got "admin"'],
      [{ name: 'x', expiresInDays: 7 }, 'scope: scope must be "read" or "write", got null'],
      [{ name: 'x', scope: 'read', expiresInDays: 0 }, 'expiresInDays: expiresInDays must be at least 1, got 0'],
      [{ name: 'x', scope: 'read', expiresInDays: 366 }, 'expiresInDays: expiresInDays must be at most 365, got 366'],
      [{ name: 'x', scope: 'read', expiresInDays: 1.5 }, 'expiresInDays: expiresInDays must be a whole number of days, got 1.5'],
      [{ name: 'x', scope: 'read', expiresInDays: '30' }, 'expiresInDays: expiresInDays must be a whole number of days from 1 to 365, got "30"'],
      [{ name: 42, scope: 'read', expiresInDays: 7 }, 'name: name must be text naming what the token is for, got 42'],
      [{ name: '   ', scope: 'read', expiresInDays: 7 }, 'name: enter a name saying what the token is for (e.g. "plate-reader script") (received "")'],
      [{ name: 'n'.repeat(81), scope: 'read', expiresInDays: 7 }, 'name: a token name has at most 80 characters, got 81'],
    ];
    for (const [body, message] of cases) {
      const res = await bio.post('/api/tokens').send(body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      expect(res.body.error).toBe(message);
    }
    const badId = await bio.delete('/api/tokens/abc');
    expect(badId.status).toBe(400);
    expect(badId.body.error).toContain('"abc"');
    expect(t.ctx.db.select().from(apiTokens).all().length).toBe(n);
  });
});

describe('limits', () => {
  it('at most 50 active tokens per user (409); revoked and expired ones do not count', async () => {
    const out = await t.login('outsider');
    const uid = t.world.users.outsider.id;
    const future = new Date(Date.now() + 86400_000).toISOString();
    const past = new Date(Date.now() - 1000).toISOString();
    const rows = (n: number, over: Partial<typeof apiTokens.$inferInsert>) =>
      Array.from({ length: n }, (_, i) => ({ userId: uid, name: `bulk ${i}`, scope: 'read' as const, tokenHash: `${over.expiresAt}-${over.revokedAt}-${i}`, hint: 'syt_bulk', sessionVersion: 0, expiresAt: future, ...over }));
    t.ctx.db.insert(apiTokens).values([...rows(49, { expiresAt: future }), ...rows(3, { expiresAt: past }), ...rows(3, { expiresAt: future, revokedAt: past })]).run();
    await mint(out, { name: 'the fiftieth', scope: 'read', expiresInDays: 1 });
    const res = await out.post('/api/tokens').send({ name: 'one too many', scope: 'read', expiresInDays: 1 });
    expect(res.status).toBe(409);
    expect(res.body.error).toBe('you already have 50 active API tokens (at most 50); revoke one you no longer use first');
  });
});

describe('rate limit', () => {
  it('answers 429 with Retry-After beyond TOKEN_REQUESTS_PER_MINUTE, per token', async () => {
    const small = await makeTestApp({ TOKEN_REQUESTS_PER_MINUTE: '3' });
    try {
      const bio = await small.login('biologist');
      const a = (await bio.post('/api/tokens').send({ name: 'a', scope: 'read', expiresInDays: 1 })).body.token as string;
      const b = (await bio.post('/api/tokens').send({ name: 'b', scope: 'read', expiresInDays: 1 })).body.token as string;
      for (let i = 0; i < 3; i++) await request(small.app).get('/api/auth/me').set(bearer(a)).expect(200);
      const over = await request(small.app).get('/api/auth/me').set(bearer(a));
      expect(over.status).toBe(429);
      expect(over.body.error).toMatch(/at most 3 a minute/);
      const wait = Number(over.headers['retry-after']);
      expect(wait).toBeGreaterThanOrEqual(1);
      expect(wait).toBeLessThanOrEqual(60);
      // another token of the same user has its own budget; the cookie session is not limited by it
      await request(small.app).get('/api/auth/me').set(bearer(b)).expect(200);
      await bio.get('/api/auth/me').expect(200);
    } finally {
      await small.close();
    }
  });
});
