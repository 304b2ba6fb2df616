/**
 * Sign-in, session cookie, expiry/tampering, logout, password change and throttling.
 * Cookie attributes checked against RFC 6265 §4.1 (HttpOnly, Secure) and RFC 6265bis (SameSite=Lax);
 * token expiry per RFC 7519 §4.1.4 ("exp").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { SignJWT } from 'jose';
import { eq } from 'drizzle-orm';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';
import { SESSION_COOKIE } from '../../server/auth/session.js';
import { LOGIN_FAILED } from '../../server/routes/auth.js';
import { THROTTLE, THROTTLED_MESSAGE, throttleKeys } from '../../server/auth/throttle.js';
import { loginAttempts, users } from '../../server/db/schema.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t.close());

const sessionCookie = (res: request.Response) => {
  const raw = res.get('Set-Cookie');
  return (raw ?? []).find((c) => c.startsWith(`${SESSION_COOKIE}=`));
};
const tokenOf = (cookie: string) => cookie.split(';')[0].split('=')[1];

describe('sign-in', () => {
  it('right password: 200, the user, and an HttpOnly SameSite=Lax cookie (no Secure over plain HTTP)', async () => {
    const res = await request(t.app).post('/api/auth/login').send({ email: 'biologist@test.example', password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ email: 'biologist@test.example', name: 'biologist', roles: ['biologist'] });
    expect(res.body.user.passwordHash).toBeUndefined();
    const c = sessionCookie(res)!;
    expect(c).toBeDefined();
    expect(c).toMatch(/; HttpOnly/i);
    expect(c).toMatch(/; SameSite=Lax/i);
    expect(c).toMatch(/; Path=\//);
    expect(c).not.toMatch(/; Secure/i);
  });

  it('e-mail is matched case-insensitively and trimmed', async () => {
    const res = await request(t.app).post('/api/auth/login').send({ email: '  Biologist@TEST.example ', password: TEST_PASSWORD });
    expect(res.status).toBe(200);
  });

  it('a new cookie (new token) is issued on every sign-in', async () => {
    const a = await request(t.app).post('/api/auth/login').send({ email: 'microscopist@test.example', password: TEST_PASSWORD });
    const b = await request(t.app).post('/api/auth/login').send({ email: 'microscopist@test.example', password: TEST_PASSWORD });
    expect(tokenOf(sessionCookie(a)!)).not.toBe(tokenOf(sessionCookie(b)!));
  });

  it('wrong password and unknown e-mail: the same 401 message, no cookie', async () => {
    const wrong = await request(t.app).post('/api/auth/login').send({ email: 'collaborator@test.example', password: 'nope-nope' });
    const unknown = await request(t.app).post('/api/auth/login').send({ email: 'nobody@test.example', password: 'nope-nope' });
    for (const res of [wrong, unknown]) {
      expect(res.status).toBe(401);
      expect(res.body).toEqual({ error: LOGIN_FAILED });
      expect(sessionCookie(res)).toBeUndefined();
    }
  });

  it('disabled user: 401 with the same message, and an existing session stops working', async () => {
    const agent = await t.login('collaborator');
    expect((await agent.get('/api/auth/me')).status).toBe(200);
    const manager = await t.login('manager');
    const id = t.world.users.collaborator.id;
    expect((await manager.patch(`/api/users/${id}`).send({ disabled: true })).status).toBe(200);
    expect((await agent.get('/api/auth/me')).status).toBe(401);
    const res = await request(t.app).post('/api/auth/login').send({ email: 'collaborator@test.example', password: TEST_PASSWORD });
    expect(res.status).toBe(401);
    expect(res.body.error).toBe(LOGIN_FAILED);
    expect((await manager.patch(`/api/users/${id}`).send({ disabled: false })).status).toBe(200);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'collaborator@test.example', password: TEST_PASSWORD })).status).toBe(200);
  });
});

describe('session token', () => {
  const secret = () => new TextEncoder().encode(t.ctx.env.SESSION_SECRET);
  const sv = (id: number) => t.ctx.db.select().from(users).where(eq(users.id, id)).get()!.sessionVersion;

  it('a valid token reads /me; no cookie is 401', async () => {
    expect((await request(t.app).get('/api/auth/me')).status).toBe(401);
    const id = t.world.users.microscopist.id;
    const token = await new SignJWT({ sv: sv(id), typ: 'session' }).setProtectedHeader({ alg: 'HS256' }).setSubject(String(id)).setIssuedAt().setExpirationTime('1h').sign(secret());
    const res = await request(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${token}`);
    expect(res.status).toBe(200);
  });

  it('an expired token is 401 (RFC 7519 exp)', async () => {
    const id = t.world.users.microscopist.id;
    const past = Math.floor(Date.now() / 1000) - 3600;
    const token = await new SignJWT({ sv: sv(id), typ: 'session' }).setProtectedHeader({ alg: 'HS256' }).setSubject(String(id)).setIssuedAt(past - 60).setExpirationTime(past).sign(secret());
    const res = await request(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${token}`);
    expect(res.status).toBe(401);
    expect(res.body.error).toBeTypeOf('string');
  });

  it('a tampered token (payload changed, or signed with another key, or alg none) is 401', async () => {
    const agent = request(t.app);
    const login = await agent.post('/api/auth/login').send({ email: 'microscopist@test.example', password: TEST_PASSWORD });
    const [h, p, s] = tokenOf(sessionCookie(login)!).split('.');
    const payload = JSON.parse(Buffer.from(p, 'base64url').toString());
    payload.sub = String(t.world.users.manager.id);
    const forged = `${h}.${Buffer.from(JSON.stringify(payload)).toString('base64url')}.${s}`;
    const otherKey = await new SignJWT({ sv: 0, typ: 'session' }).setProtectedHeader({ alg: 'HS256' }).setSubject(String(t.world.users.manager.id)).setExpirationTime('1h').sign(new TextEncoder().encode('x'.repeat(48)));
    const none = `${Buffer.from(JSON.stringify({ alg: 'none', typ: 'JWT' })).toString('base64url')}.${Buffer.from(JSON.stringify(payload)).toString('base64url')}.`;
    for (const tok of [forged, otherKey, none, 'garbage']) {
      const res = await agent.get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${tok}`);
      expect(res.status, tok.slice(0, 20)).toBe(401);
    }
  });

  it('logout clears the cookie', async () => {
    const agent = await t.login('biologist');
    const res = await agent.post('/api/auth/logout');
    expect(res.status).toBe(200);
    const c = sessionCookie(res)!;
    expect(c).toMatch(new RegExp(`^${SESSION_COOKIE}=;`));
    expect(c).toMatch(/Expires=Thu, 01 Jan 1970/);
    expect((await agent.get('/api/auth/me')).status).toBe(401);
  });
});

describe('cookie behind an HTTPS proxy', () => {
  let tp: TestApp;
  beforeAll(async () => {
    tp = await makeTestApp({ TRUST_PROXY: '1' });
  });
  afterAll(() => tp.close());
  it('X-Forwarded-Proto: https with trust proxy → Secure cookie', async () => {
    const res = await request(tp.app).post('/api/auth/login').set('X-Forwarded-Proto', 'https').send({ email: 'biologist@test.example', password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    expect(sessionCookie(res)).toMatch(/; Secure/i);
  });
  it('without trust proxy the header is ignored (no Secure)', async () => {
    const res = await request(t.app).post('/api/auth/login').set('X-Forwarded-Proto', 'https').send({ email: 'biologist@test.example', password: TEST_PASSWORD });
    expect(sessionCookie(res)).not.toMatch(/; Secure/i);
  });
});

describe('password change', () => {
  it('needs the current password, ends other sessions, re-issues this one', async () => {
    const a = await t.login('outsider');
    const b = await t.login('outsider');
    const bad = await a.post('/api/auth/password').send({ currentPassword: 'wrong-one', newPassword: 'a brand new secret' });
    expect(bad.status).toBe(400);
    expect(bad.body.issues[0].path).toBe('currentPassword');
    const short = await a.post('/api/auth/password').send({ currentPassword: TEST_PASSWORD, newPassword: 'short' });
    expect(short.status).toBe(400);
    expect(short.body.error).toMatch(/newPassword/);
    const ok = await a.post('/api/auth/password').send({ currentPassword: TEST_PASSWORD, newPassword: 'a brand new secret' });
    expect(ok.status).toBe(200);
    expect(sessionCookie(ok)).toBeDefined();
    expect((await a.get('/api/auth/me')).status).toBe(200);
    expect((await b.get('/api/auth/me')).status).toBe(401);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'outsider@test.example', password: TEST_PASSWORD })).status).toBe(401);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'outsider@test.example', password: 'a brand new secret' })).status).toBe(200);
  });
  it('signed out: 401', async () => {
    expect((await request(t.app).post('/api/auth/password').send({ currentPassword: 'x', newPassword: 'y'.repeat(12) })).status).toBe(401);
  });
});

describe('throttling (common practice: OWASP Authentication Cheat Sheet; limits ours)', () => {
  let tp: TestApp;
  beforeAll(async () => {
    tp = await makeTestApp({ TRUST_PROXY: '1' });
  });
  afterAll(() => tp.close());
  const attempt = (email: string, password: string, ip = '10.0.0.1') => request(tp.app).post('/api/auth/login').set('X-Forwarded-For', ip).send({ email, password });

  it(`after ${THROTTLE.perAccountAndAddress} failures for one e-mail from one address: 429 with one generic message, even with the right password`, async () => {
    for (let i = 0; i < THROTTLE.perAccountAndAddress; i++) expect((await attempt('biologist@test.example', 'wrong')).status).toBe(401);
    const blocked = await attempt('biologist@test.example', TEST_PASSWORD);
    expect(blocked.status).toBe(429);
    expect(blocked.body).toEqual({ error: THROTTLED_MESSAGE });
    expect(blocked.headers['retry-after']).toBe(String(THROTTLE.windowMinutes * 60));
    // the same message for an unknown e-mail once it is throttled (does not reveal which accounts exist)
    for (let i = 0; i < THROTTLE.perAccountAndAddress; i++) await attempt('ghost@test.example', 'wrong', '10.0.0.2');
    expect((await attempt('ghost@test.example', 'wrong', '10.0.0.2')).body).toEqual({ error: THROTTLED_MESSAGE });
    // another account from the same address still signs in
    expect((await attempt('microscopist@test.example', TEST_PASSWORD)).status).toBe(200);
  });

  it('failures older than the window no longer count', async () => {
    const old = new Date(Date.now() - (THROTTLE.windowMinutes + 1) * 60_000).toISOString();
    tp.ctx.db.update(loginAttempts).set({ at: old }).where(eq(loginAttempts.key, throttleKeys('biologist@test.example', '10.0.0.1').account)).run();
    expect((await attempt('biologist@test.example', TEST_PASSWORD)).status).toBe(200);
  });

  it(`after ${THROTTLE.perAddress} failures from one address: 429 for any e-mail from it, other addresses unaffected`, async () => {
    for (let i = 0; i < THROTTLE.perAddress; i++) await attempt(`spray${i}@test.example`, 'wrong', '10.9.9.9');
    const blocked = await attempt('manager@test.example', TEST_PASSWORD, '10.9.9.9');
    expect(blocked.status).toBe(429);
    expect(blocked.body).toEqual({ error: THROTTLED_MESSAGE });
    expect((await attempt('manager@test.example', TEST_PASSWORD, '10.9.9.10')).status).toBe(200);
  });

  it('a successful sign-in resets that e-mail\'s failure count', async () => {
    for (let i = 0; i < THROTTLE.perAccountAndAddress - 1; i++) await attempt('microscopist@test.example', 'wrong', '10.0.0.3');
    expect((await attempt('microscopist@test.example', TEST_PASSWORD, '10.0.0.3')).status).toBe(200);
    for (let i = 0; i < THROTTLE.perAccountAndAddress - 1; i++) await attempt('microscopist@test.example', 'wrong', '10.0.0.3');
    expect((await attempt('microscopist@test.example', TEST_PASSWORD, '10.0.0.3')).status).toBe(200);
  });

  it("a stranger's 20 failures from one address never stop the owner signing in from theirs", async () => {
    const stranger = '203.0.113.7';
    const owner = '198.51.100.20';
    const answers: number[] = [];
    for (let i = 0; i < 20; i++) answers.push((await attempt('manager@test.example', `guess ${i}`, stranger)).status);
    expect(answers.slice(0, THROTTLE.perAccountAndAddress).every((s) => s === 401)).toBe(true);
    expect(answers.slice(THROTTLE.perAccountAndAddress).every((s) => s === 429)).toBe(true);
    // the stranger is blocked even with the right password; the owner is not
    expect((await attempt('manager@test.example', TEST_PASSWORD, stranger)).status).toBe(429);
    expect((await attempt('manager@test.example', TEST_PASSWORD, owner)).status).toBe(200);
    // and the owner's own typo does not count the stranger's failures
    expect((await attempt('manager@test.example', 'typo', owner)).status).toBe(401);
    expect((await attempt('manager@test.example', TEST_PASSWORD, owner)).status).toBe(200);
  });

  it('failures spread over many addresses behind the proxy lock nobody out', async () => {
    for (let i = 0; i < THROTTLE.perAddress + 10; i++) await attempt('biologist@test.example', 'wrong', `192.0.2.${i + 1}`);
    expect((await attempt('biologist@test.example', TEST_PASSWORD, '192.0.2.250')).status).toBe(200);
  });

  it('behind the one trusted proxy, a client cannot choose its address with X-Forwarded-For', async () => {
    // the proxy appends the address it saw; only that last entry counts
    const from = (spoofed: string) => request(tp.app).post('/api/auth/login').set('X-Forwarded-For', `${spoofed}, 10.7.7.7`).send({ email: 'outsider@test.example', password: 'wrong' });
    for (let i = 0; i < THROTTLE.perAccountAndAddress; i++) expect((await from(`172.16.0.${i}`)).status).toBe(401);
    expect((await from('172.16.0.99')).status).toBe(429);
  });
});
