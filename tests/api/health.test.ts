import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, type TestApp } from '../utils/app.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t.close());

describe('health and session basics', () => {
  it('GET /api/health is 200 { ok: true }', async () => {
    const res = await request(t.app).get('/api/health');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ok: true });
  });
  it('signs in and reads /api/auth/me', async () => {
    const agent = await t.login('microscopist');
    const me = await agent.get('/api/auth/me');
    expect(me.status).toBe(200);
    expect(me.body.user).toMatchObject({ email: 'microscopist@test.example', roles: ['microscopist'] });
  });
  it('unknown API route is 404 JSON when signed in, 401 when not (anonymous callers learn nothing)', async () => {
    const agent = await t.login('biologist');
    const res = await agent.get('/api/nope');
    expect(res.status).toBe(404);
    expect(res.body.error).toMatch(/no API route/);
    expect((await request(t.app).get('/api/nope')).status).toBe(401);
  });
});
