/**
 * HTTP-level protections: same-origin check on state-changing requests, session cookie issuance (fixation),
 * security headers (helmet). Expected values: OWASP ASVS v4.0.3 §3.2 (session binding), §3.4 (cookie
 * attributes), §14.4 (HTTP security headers), §13.2.3/§4.2.2 (CSRF); header syntax from the Fetch standard,
 * CSP Level 3 (W3C) and RFC 6265 (cookies).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import supertest from 'supertest';
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';
import { SESSION_COOKIE } from '../../server/auth/session.js';

let t: TestApp;
let clientDir: string;
beforeAll(async () => {
  clientDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-sec-client-'));
  fs.writeFileSync(path.join(clientDir, 'index.html'), '<!doctype html><title>Syntopy</title><div id="root"></div>');
  t = await makeTestApp({ CLIENT_DIR: clientDir });
});
afterAll(async () => {
  await t?.close();
  fs.rmSync(clientDir, { recursive: true, force: true });
});

const cookieOf = (res: supertest.Response) => {
  const raw = ([] as string[]).concat(res.headers['set-cookie'] ?? []).find((c) => c.startsWith(`${SESSION_COOKIE}=`));
  return raw ? { raw, value: raw.split(';')[0].slice(SESSION_COOKIE.length + 1) } : undefined;
};
const login = (email = t.world.users.biologist.email, headers: Record<string, string> = {}) =>
  supertest(t.app).post('/api/auth/login').set(headers).send({ email, password: TEST_PASSWORD });

describe('state-changing requests from another site', () => {
  it('a foreign Origin is refused with 403 on writes (sign-in, study create, delete) and nothing changes', async () => {
    const agent = await t.login('biologist');
    const before = (await agent.get('/api/studies')).body.studies.length;
    for (const origin of ['https://evil.example', 'http://127.0.0.1.evil.example', 'null']) {
      const a = await supertest(t.app).post('/api/auth/login').set('Origin', origin).send({ email: t.world.users.biologist.email, password: TEST_PASSWORD });
      expect(a.status, origin).toBe(403);
      expect(cookieOf(a)).toBeUndefined();
      const b = await agent.post('/api/studies').set('Origin', origin).send({ name: 'CSRF study' });
      expect(b.status).toBe(403);
      expect(b.body.error).toMatch(/cross-site request refused/);
      const c = await agent.delete(`/api/studies/${t.world.studyA}`).set('Origin', origin).send({ confirmName: 'Study A' });
      expect(c.status).toBe(403);
    }
    expect((await agent.get('/api/studies')).body.studies.length).toBe(before);
  });

  it('a foreign Referer (no Origin) is refused too; an unparseable one as well', async () => {
    const agent = await t.login('biologist');
    expect((await agent.post('/api/studies').set('Referer', 'https://evil.example/page').send({ name: 'x' })).status).toBe(403);
    expect((await agent.post('/api/studies').set('Referer', 'not a url').send({ name: 'x' })).status).toBe(403);
  });

  it('the same origin is accepted, and reads are never blocked by Origin', async () => {
    const agent = await t.login('biologist');
    // the server compares Origin with its own scheme://Host
    const host = 'syntopy.test:8443';
    const own = await agent.post('/api/studies').set('Host', host).set('Origin', `http://${host}`).send({ name: 'Same-origin study' });
    expect(own.status).toBe(201);
    const read = await agent.get('/api/studies').set('Origin', 'https://evil.example');
    expect(read.status).toBe(200);
  });
});

describe('session cookie', () => {
  it('is httpOnly, SameSite=Lax, path=/, and a new value on every sign-in', async () => {
    const values = new Set<string>();
    for (let i = 0; i < 3; i++) {
      const res = await login();
      expect(res.status).toBe(200);
      const c = cookieOf(res)!;
      expect(c.raw).toMatch(/HttpOnly/i);
      expect(c.raw).toMatch(/SameSite=Lax/i);
      expect(c.raw).toMatch(/Path=\//);
      values.add(c.value);
    }
    expect(values.size).toBe(3);
  });

  it('session fixation: a cookie planted before sign-in is not a session and is replaced on sign-in', async () => {
    const planted = 'attacker-chosen-session-value';
    const me = await supertest(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${planted}`);
    expect(me.status).toBe(401);
    const res = await login(undefined, { Cookie: `${SESSION_COOKIE}=${planted}` });
    const c = cookieOf(res)!;
    expect(c.value).not.toBe(planted);
    // a victim's old session token stays bound to its own sign-in, never upgraded: another user's sign-in issues its own
    const first = cookieOf(await login())!.value;
    const second = cookieOf(await login(t.world.users.collaborator.email, { Cookie: `${SESSION_COOKIE}=${first}` }))!.value;
    expect(second).not.toBe(first);
    const who = await supertest(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${second}`);
    expect(who.body.user.email).toBe(t.world.users.collaborator.email);
  });

  it('a tampered token (payload changed, signature kept) is no session', async () => {
    const v = cookieOf(await login())!.value;
    const [h, p, s] = v.split('.');
    const payload = JSON.parse(Buffer.from(p, 'base64url').toString());
    payload.sub = String(t.world.users.manager.id);
    const forged = [h, Buffer.from(JSON.stringify(payload)).toString('base64url'), s].join('.');
    expect((await supertest(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${forged}`)).status).toBe(401);
    const none = [Buffer.from(JSON.stringify({ alg: 'none' })).toString('base64url'), p, ''].join('.');
    expect((await supertest(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${none}`)).status).toBe(401);
  });

  it('a password change ends older sessions', async () => {
    const old = cookieOf(await login(t.world.users.microscopist.email))!.value;
    const agent = await t.login('microscopist');
    expect((await agent.post('/api/auth/password').send({ currentPassword: TEST_PASSWORD, newPassword: 'another long passphrase 2' })).status).toBe(200);
    expect((await supertest(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${old}`)).status).toBe(401);
  });

  // Sign-out revokes the token server-side (revoked_sessions), so a copied cookie does not survive it
  // (OWASP ASVS v4.0.3 §3.3.1).
  it('sign-out makes the token unusable server-side', async () => {
    const v = cookieOf(await login())!.value;
    await supertest(t.app).post('/api/auth/logout').set('Cookie', `${SESSION_COOKIE}=${v}`);
    expect((await supertest(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${v}`)).status).toBe(401);
  });
});

describe('sign-in timing', () => {
  // The dummy hash for unknown e-mails has the production cost, so timing does not reveal which accounts exist
  // (OWASP ASVS v4.0.3 §2.2.1 / WSTG-IDNT-04).
  it('the dummy hash for unknown e-mails costs as much as a real password hash (production settings)', () => {
    const code = `import('./server/auth/passwords.ts').then(async (m) => { const b = (await import('bcryptjs')).default; console.log(JSON.stringify([b.getRounds(m.DUMMY_HASH), b.getRounds(await m.hashPassword('x'))])); })`;
    const r = spawnSync(process.execPath, ['--import', 'tsx', '-e', code], { env: { ...process.env, NODE_ENV: 'production' }, encoding: 'utf8', timeout: 60_000 });
    const [dummy, real] = JSON.parse(r.stdout.trim().split('\n').pop()!) as [number, number];
    expect(dummy).toBe(real);
  });
});

describe('security headers (helmet)', () => {
  const check = (res: supertest.Response) => {
    const csp = String(res.headers['content-security-policy'] ?? '');
    expect(csp).toMatch(/default-src 'self'/);
    expect(csp).toMatch(/frame-ancestors 'none'/);
    expect(csp).toMatch(/object-src 'none'/);
    expect(csp).not.toMatch(/script-src[^;]*'unsafe-inline'/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(String(res.headers['x-frame-options']).toUpperCase()).toMatch(/DENY|SAMEORIGIN/);
    expect(res.headers['referrer-policy']).toMatch(/same-origin|no-referrer|strict-origin/);
    expect(res.headers['x-powered-by']).toBeUndefined();
    expect(res.headers['cross-origin-opener-policy']).toBe('same-origin');
  };
  it('on API answers (success, 401 and 404 alike)', async () => {
    check(await supertest(t.app).get('/api/health'));
    check(await supertest(t.app).get('/api/auth/me'));
    check(await supertest(t.app).get('/api/no-such-route'));
  });
  it('on the client page', async () => {
    const res = await supertest(t.app).get('/studies/1');
    expect(res.status).toBe(200);
    expect(res.text).toContain('<div id="root">');
    check(res);
  });
  it('errors are JSON without stack traces', async () => {
    const res = await supertest(t.app).post('/api/auth/login').set('content-type', 'application/json').send('{"email": ');
    expect(res.status).toBe(400);
    expect(res.headers['content-type']).toMatch(/json/);
    expect(JSON.stringify(res.body)).not.toMatch(/\bat .*\.(ts|js):\d+/);
  });
});
