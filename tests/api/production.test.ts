/**
 * Production is the default: without NODE_ENV the server runs as production (no development Origin exception);
 * `npm run dev` alone sets development. Behind a TLS proxy (TRUST_PROXY=1) session cookies are Secure. With mail
 * configured, links in e-mails need PUBLIC_URL: the server refuses to start rather than trust the Host header.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { loadEnv } from '../../server/env.js';
import { SESSION_COOKIE } from '../../server/auth/session.js';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';

const tmp = () => fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-prod-'));
const VITE_ORIGINS = ['http://127.0.0.1:5173', 'http://localhost:5173'];

describe('NODE_ENV', () => {
  it('defaults to production; development and test are accepted; anything else is named in one line', () => {
    expect(loadEnv({ DATA_DIR: tmp() } as NodeJS.ProcessEnv).NODE_ENV).toBe('production');
    expect(loadEnv({ DATA_DIR: tmp(), NODE_ENV: 'development' } as NodeJS.ProcessEnv).NODE_ENV).toBe('development');
    expect(loadEnv({ DATA_DIR: tmp(), NODE_ENV: 'test' } as NodeJS.ProcessEnv).NODE_ENV).toBe('test');
    expect(() => loadEnv({ DATA_DIR: tmp(), NODE_ENV: 'staging' } as NodeJS.ProcessEnv)).toThrow(/^configuration error: NODE_ENV="staging": NODE_ENV must be production, development or test$/);
  });

  it('npm start does not set development; npm run dev does', () => {
    const pkg = JSON.parse(fs.readFileSync('package.json', 'utf8')) as { scripts: Record<string, string> };
    expect(pkg.scripts.start).not.toMatch(/NODE_ENV/);
    expect(pkg.scripts.serve).not.toMatch(/NODE_ENV/);
    expect(pkg.scripts.dev).toMatch(/^NODE_ENV=development /);
  });
});

describe('PUBLIC_URL with mail configured', () => {
  it('production with SMTP_URL but no PUBLIC_URL is a configuration error', () => {
    expect(() => loadEnv({ DATA_DIR: tmp(), SMTP_URL: 'smtp://relay.example:587' } as NodeJS.ProcessEnv)).toThrow(/^configuration error: PUBLIC_URL is required when SMTP_URL is set/);
    expect(loadEnv({ DATA_DIR: tmp(), SMTP_URL: 'smtp://relay.example:587', PUBLIC_URL: 'https://syntopy.example.org' } as NodeJS.ProcessEnv).PUBLIC_URL).toBe('https://syntopy.example.org');
    // without SMTP_URL the messages stay in the Outbox sink; development keeps its convenience
    expect(loadEnv({ DATA_DIR: tmp() } as NodeJS.ProcessEnv).PUBLIC_URL).toBeUndefined();
    expect(loadEnv({ DATA_DIR: tmp(), NODE_ENV: 'development', SMTP_URL: 'smtp://relay.example:587' } as NodeJS.ProcessEnv).SMTP_URL).toBe('smtp://relay.example:587');
  });

  it('the server refuses to start in one line, exit 1, no stack trace', () => {
    const env: NodeJS.ProcessEnv = { ...process.env, DATA_DIR: tmp(), SEED_DEMO: 'never', PORT: '0', HOST: '127.0.0.1', SMTP_URL: 'smtp://relay.example:587' };
    delete env.NODE_ENV;
    delete env.PUBLIC_URL;
    const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/index.ts'], { env, encoding: 'utf8', timeout: 30_000 });
    expect(r.status).toBe(1);
    const lines = r.stderr.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^configuration error: PUBLIC_URL is required when SMTP_URL is set/);
  });
});

describe('the Vite dev-server Origin', () => {
  let prod: TestApp;
  let dev: TestApp;
  beforeAll(async () => {
    prod = await makeTestApp({ NODE_ENV: 'production' });
    dev = await makeTestApp({ NODE_ENV: 'development' });
  });
  afterAll(async () => {
    await prod?.close();
    await dev?.close();
  });

  it('is refused in production (a page on another local port cannot write as a signed-in user)', async () => {
    const agent = await prod.login('biologist');
    for (const origin of VITE_ORIGINS) {
      const res = await agent.post('/api/studies').set('Origin', origin).send({ name: 'from another port' });
      expect(res.status, origin).toBe(403);
      expect(res.body).toEqual({ error: `cross-site request refused: origin ${JSON.stringify(origin)} is not this site` });
    }
    expect((await agent.get('/api/studies')).body.studies.map((s: { name: string }) => s.name)).not.toContain('from another port');
  });

  it('is accepted under development only (npm run dev proxies /api from :5173)', async () => {
    const agent = await dev.login('biologist');
    const res = await agent.post('/api/studies').set('Origin', 'http://127.0.0.1:5173').send({ name: 'through the dev proxy' });
    expect(res.status).toBe(201);
  });
});

describe('session cookie behind a TLS proxy (TRUST_PROXY=1, production)', () => {
  let tp: TestApp;
  beforeAll(async () => {
    tp = await makeTestApp({ NODE_ENV: 'production', TRUST_PROXY: '1' });
  });
  afterAll(() => tp?.close());
  const cookieOf = (res: request.Response) => ([] as string[]).concat(res.headers['set-cookie'] ?? []).find((c) => c.startsWith(`${SESSION_COOKIE}=`));

  it('X-Forwarded-Proto: https → Secure on sign-in and sign-out', async () => {
    const login = await request(tp.app).post('/api/auth/login').set('X-Forwarded-Proto', 'https').send({ email: tp.world.users.biologist.email, password: TEST_PASSWORD });
    expect(login.status).toBe(200);
    expect(cookieOf(login)).toMatch(/; Secure/);
    expect(cookieOf(login)).toMatch(/; HttpOnly/);
    const out = await request(tp.app).post('/api/auth/logout').set('X-Forwarded-Proto', 'https').set('Cookie', cookieOf(login)!.split(';')[0]);
    expect(cookieOf(out)).toMatch(/; Secure/);
  });

  it('plain http through the proxy → no Secure flag (the browser would drop it)', async () => {
    const login = await request(tp.app).post('/api/auth/login').set('X-Forwarded-Proto', 'http').send({ email: tp.world.users.biologist.email, password: TEST_PASSWORD });
    expect(cookieOf(login)).not.toMatch(/; Secure/);
  });
});
