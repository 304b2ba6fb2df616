/**
 * Bad requests to the foundation routes: missing fields, wrong types, unknown ids, broken JSON → a 4xx JSON
 * body `{ error: string, issues? }` that names the problem, never a stack trace or a server path.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, type TestApp } from '../utils/app.js';

let t: TestApp;
const as: Record<string, Awaited<ReturnType<TestApp['login']>>> = {};
beforeAll(async () => {
  t = await makeTestApp();
  as.bio = await t.login('biologist');
  as.mgr = await t.login('manager');
});
afterAll(() => t.close());

type Case = [who: 'bio' | 'mgr' | 'anon', method: 'get' | 'post' | 'patch' | 'put' | 'delete', path: string | (() => string), body: unknown, status: number, message: RegExp];
const A = () => t.world;
const CASES: Case[] = [
  ['anon', 'post', '/api/auth/login', {}, 400, /email/],
  ['anon', 'post', '/api/auth/login', { email: 'x@y.test' }, 400, /password/],
  ['anon', 'post', '/api/auth/login', { email: 42, password: 'x' }, 400, /email/],
  ['anon', 'post', '/api/auth/login', { email: 'not-an-email', password: 'x' }, 400, /e-mail/],
  ['anon', 'post', '/api/auth/login', [1, 2], 400, /expected object/i],
  ['anon', 'post', '/api/auth/invitations/abc/accept', { password: 'long enough secret' }, 404, /invitation/],
  ['anon', 'post', '/api/auth/invitations/abc/accept', {}, 400, /password/],
  ['bio', 'post', '/api/auth/password', { newPassword: 'long enough pass' }, 400, /currentPassword/],
  ['bio', 'post', '/api/studies', {}, 400, /name/],
  ['bio', 'post', '/api/studies', { name: '' }, 400, /study name/],
  ['bio', 'post', '/api/studies', { name: 123 }, 400, /name/],
  ['bio', 'post', '/api/studies', { name: 'x'.repeat(500) }, 400, /at most 120/],
  ['bio', 'post', '/api/studies', { name: 'ok', labId: 'one' }, 400, /labId/],
  ['bio', 'get', '/api/studies/999999', undefined, 404, /no study with id 999999/],
  ['bio', 'get', '/api/studies/abc', undefined, 400, /studyId.*"abc"/],
  ['bio', 'get', '/api/studies/-3', undefined, 400, /"-3"/],
  ['bio', 'get', '/api/studies/1.5', undefined, 400, /"1\.5"/],
  ['bio', 'patch', () => `/api/studies/${A().studyA}`, {}, 400, /nothing to change/],
  ['bio', 'patch', () => `/api/studies/${A().studyA}`, { name: null }, 400, /name/],
  ['bio', 'delete', () => `/api/studies/${A().studyA}`, { confirmName: 'wrong' }, 400, /confirmName/],
  ['bio', 'post', '/api/studies/999999/conditions', { name: 'x' }, 404, /no study/],
  ['bio', 'post', () => `/api/studies/${A().studyA}/conditions`, { name: ['x'] }, 400, /name/],
  ['bio', 'patch', '/api/conditions/999999', { name: 'x' }, 404, /no condition with id 999999/],
  ['bio', 'delete', '/api/conditions/0', undefined, 400, /"0"/],
  ['bio', 'post', '/api/conditions/999999/coverslips', {}, 404, /no condition/],
  ['bio', 'post', () => `/api/conditions/${A().conditionA}/coverslips`, { replicate: 'two' }, 400, /replicate/],
  ['bio', 'post', () => `/api/conditions/${A().conditionA}/coverslips`, { replicate: -1 }, 400, /replicate/],
  ['bio', 'patch', '/api/coverslips/999999', { name: 'x' }, 404, /no coverslip with id 999999/],
  ['bio', 'patch', () => `/api/coverslips/${A().coverslipA}`, { preparedOn: 'yesterday' }, 400, /YYYY-MM-DD/],
  ['bio', 'post', () => `/api/studies/${A().studyA}/reorder`, { conditionIds: 'all' }, 400, /conditionIds/],
  ['mgr', 'post', '/api/users', { email: 'a@b.test', name: 'A', roles: [] }, 400, /role/],
  ['mgr', 'post', '/api/users', { email: 'a@b.test', name: 'A', roles: ['microscopist', 'microscopist'] }, 400, /twice/],
  ['mgr', 'post', '/api/users', { name: 'A', roles: ['biologist'] }, 400, /email/],
  ['mgr', 'patch', '/api/users/999999', { name: 'x' }, 404, /no user with id 999999/],
  ['mgr', 'patch', () => `/api/users/${A().users.collaborator.id}`, { disabled: 'yes' }, 400, /disabled/],
  ['mgr', 'post', '/api/labs', { name: '' }, 400, /lab name/],
  ['mgr', 'put', '/api/labs/999999/members/1', undefined, 404, /no lab/],
  ['mgr', 'put', () => `/api/labs/${A().labA}/members/999999`, undefined, 404, /no user/],
  ['mgr', 'get', '/api/outbox/999999', undefined, 404, /no message/],
  ['mgr', 'get', '/api/outbox?limit=0', undefined, 400, /limit/],
  ['mgr', 'get', '/api/outbox?limit=abc', undefined, 400, /limit/],
];

const noStack = (text: string) => {
  expect(text).not.toMatch(/\n\s+at /);
  expect(text).not.toMatch(/\.ts:\d+|\/work\/|node_modules|Error:/);
};

describe('bad requests → 4xx JSON with a message', () => {
  for (const [who, method, path, body, status, message] of CASES) {
    const p = typeof path === 'string' ? path : path.toString().replace(/^.*=> /, '');
    it(`${who} ${method.toUpperCase()} ${p} ${JSON.stringify(body) ?? ''} → ${status}`, async () => {
      const agent = who === 'anon' ? request(t.app) : as[who];
      let req = agent[method](typeof path === 'string' ? path : path());
      if (body !== undefined) req = req.send(body as object);
      const res = await req;
      expect(res.status).toBe(status);
      expect(res.headers['content-type']).toMatch(/application\/json/);
      expect(typeof res.body.error).toBe('string');
      expect(res.body.error).toMatch(message);
      noStack(res.text);
    });
  }

  it('broken JSON, a JSON string body and an oversized body', async () => {
    const broken = await as.bio.post('/api/studies').set('content-type', 'application/json').send('{"name": ');
    expect(broken.status).toBe(400);
    expect(broken.body.error).toMatch(/not valid JSON/);
    noStack(broken.text);
    const str = await as.bio.post('/api/studies').set('content-type', 'application/json').send('"just a string"');
    expect(str.status).toBe(400);
    noStack(str.text);
    const big = await as.bio.post('/api/studies').set('content-type', 'application/json').send(JSON.stringify({ name: 'x', description: 'y'.repeat(3 * 1024 * 1024) }));
    expect(big.status).toBe(413);
    noStack(big.text);
  });

  it('zod issues carry the field path for the form beside the field', async () => {
    const res = await as.mgr.post('/api/users').send({ email: 'nope', name: '', roles: ['microscopist'] });
    expect(res.status).toBe(400);
    expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['email', 'name']);
  });

  it('a refused field quotes the value received, except secrets', async () => {
    const res = await as.mgr.post('/api/users').send({ email: 'nope@', name: 'A', roles: ['astronaut'] });
    expect(res.status).toBe(400);
    const byPath = Object.fromEntries(res.body.issues.map((i: { path: string; message: string }) => [i.path, i.message]));
    expect(byPath.email).toContain('(received "nope@")');
    expect(byPath['roles.0']).toContain('"astronaut"');
    const pw = await request(t.app).post('/api/auth/login').send({ email: 'x@y.test', password: 12345 });
    expect(pw.status).toBe(400);
    expect(pw.text).not.toContain('12345');
  });
});
