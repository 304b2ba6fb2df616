/** Accounts and labs managed by facility managers; mail relay mode (SMTP_URL) against a loopback SMTP server. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import { eq } from 'drizzle-orm';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';
import { auditEvents, outgoingMail } from '../../server/db/schema.js';
import { LabListResponse, UserListResponse, UserRow } from '../../shared/schemas/people.js';

let t: TestApp;
let mgr: Awaited<ReturnType<TestApp['login']>>;
beforeAll(async () => {
  t = await makeTestApp();
  mgr = await t.login('manager');
});
afterAll(() => t.close());

describe('users', () => {
  it('lists every account with status and labs, never a password hash', async () => {
    const res = await mgr.get('/api/users');
    const list = UserListResponse.parse(res.body);
    expect(list.users.length).toBe(5);
    expect(list.users.find((u) => u.email === 'microscopist@test.example')).toMatchObject({ status: 'active', labIds: [t.world.labA] });
    expect(JSON.stringify(res.body)).not.toMatch(/passwordHash|\$2[aby]\$/);
  });

  it('changes roles (several per user) and the change is audited', async () => {
    const id = t.world.users.microscopist.id;
    const res = await mgr.patch(`/api/users/${id}`).send({ roles: ['microscopist', 'biologist'] });
    expect(res.status).toBe(200);
    expect(UserRow.parse(res.body).roles).toEqual(['microscopist', 'biologist']);
    const me = await (await t.login('microscopist')).get('/api/auth/me');
    expect(me.body.user.roles).toEqual(['microscopist', 'biologist']);
    expect(t.ctx.db.select().from(auditEvents).where(eq(auditEvents.action, 'user_updated')).all().length).toBeGreaterThan(0);
    expect((await mgr.patch(`/api/users/${id}`).send({ roles: [] })).status).toBe(400);
    expect((await mgr.patch(`/api/users/${id}`).send({ roles: ['wizard'] })).status).toBe(400);
    await mgr.patch(`/api/users/${id}`).send({ roles: ['microscopist'] });
  });

  it('a manager cannot disable themself or drop their own manager role', async () => {
    const id = t.world.users.manager.id;
    expect((await mgr.patch(`/api/users/${id}`).send({ disabled: true })).status).toBe(400);
    expect((await mgr.patch(`/api/users/${id}`).send({ roles: ['biologist'] })).status).toBe(400);
  });

  it('disable signs the user out everywhere; enable lets them sign in again (same password)', async () => {
    const id = t.world.users.biologist.id;
    const bio = await t.login('biologist');
    expect((await mgr.patch(`/api/users/${id}`).send({ disabled: true })).body.status).toBe('disabled');
    expect((await bio.get('/api/studies')).status).toBe(401);
    expect((await mgr.patch(`/api/users/${id}`).send({ disabled: false })).body.status).toBe('active');
    expect((await bio.get('/api/studies')).status).toBe(401); // the old session stays ended
    await t.login('biologist');
  });

  it('unknown user id: 404; bad id: 400 quoting it', async () => {
    expect((await mgr.patch('/api/users/9999').send({ name: 'x' })).status).toBe(404);
    const bad = await mgr.patch('/api/users/abc').send({ name: 'x' });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toContain('"abc"');
  });
});

describe('labs', () => {
  it('create, rename, members in and out, delete only when empty', async () => {
    let res = await mgr.post('/api/labs').send({ name: 'Membrane lab' });
    expect(res.status).toBe(201);
    const lab = res.body;
    expect((await mgr.post('/api/labs').send({ name: 'membrane LAB' })).status).toBe(409);
    res = await mgr.patch(`/api/labs/${lab.id}`).send({ name: 'Membrane biology lab' });
    expect(res.body.name).toBe('Membrane biology lab');
    res = await mgr.put(`/api/labs/${lab.id}/members/${t.world.users.collaborator.id}`);
    expect(res.body.members.map((m: { id: number }) => m.id)).toEqual([t.world.users.collaborator.id]);
    res = await mgr.put(`/api/labs/${lab.id}/members/${t.world.users.collaborator.id}`); // twice: no duplicate
    expect(res.body.members.length).toBe(1);
    const coll = await t.login('collaborator');
    const mine = LabListResponse.parse((await coll.get('/api/labs')).body);
    expect(mine.labs.map((l) => l.id)).toEqual([lab.id]);
    res = await mgr.delete(`/api/labs/${lab.id}/members/${t.world.users.collaborator.id}`);
    expect(res.body.members).toEqual([]);
    expect((await mgr.delete(`/api/labs/${t.world.labA}`)).status).toBe(409);
    expect((await mgr.delete(`/api/labs/${lab.id}`)).status).toBe(200);
    expect((await mgr.patch(`/api/labs/${lab.id}`).send({ name: 'x' })).status).toBe(404);
    const all = LabListResponse.parse((await mgr.get('/api/labs')).body);
    expect(all.labs.find((l) => l.id === t.world.labA)).toMatchObject({ studyCount: 1 });
  });

  it('inviting into an unknown lab is 400 naming labIds', async () => {
    const res = await mgr.post('/api/users').send({ email: 'q@test.example', name: 'Q', roles: ['biologist'], labIds: [424242] });
    expect(res.status).toBe(400);
    expect(res.body.issues[0].path).toBe('labIds');
  });
});

describe('mail through a relay (SMTP_URL)', () => {
  let relay: SMTPServer;
  let port = 0;
  const received: { to: string; subject: string; text: string }[] = [];
  let tr: TestApp;
  beforeAll(async () => {
    relay = new SMTPServer({
      authOptional: true,
      disabledCommands: ['STARTTLS', 'AUTH'],
      logger: false,
      onData(stream, _s, cb) {
        simpleParser(stream).then((m) => {
          received.push({ to: m.to && !Array.isArray(m.to) ? m.to.text : '', subject: m.subject ?? '', text: m.text ?? '' });
          cb();
        }, cb);
      },
    });
    await new Promise<void>((r) => relay.listen(0, '127.0.0.1', () => r()));
    port = (relay.server.address() as import('node:net').AddressInfo).port;
    tr = await makeTestApp({ SMTP_URL: `smtp://127.0.0.1:${port}` });
  });
  afterAll(async () => {
    await tr.close();
    await new Promise<void>((r) => relay.close(() => r()));
  });

  it('hands the invitation to the relay and records it in the outbox as "relay"', async () => {
    const m = await tr.login('manager');
    expect((await m.post('/api/users').send({ email: 'relayed@test.example', name: 'Relayed', roles: ['collaborator'] })).status).toBe(201);
    expect(received).toHaveLength(1);
    expect(received[0].to).toBe('relayed@test.example');
    expect(received[0].text).toMatch(/\/invite\/[A-Za-z0-9_-]{43}/);
    const rows = tr.ctx.db.select().from(outgoingMail).all();
    expect(rows.map((r) => r.via)).toEqual(['relay']);
  });
});

describe('mail relay down', () => {
  let td: TestApp;
  beforeAll(async () => {
    td = await makeTestApp({ SMTP_URL: 'smtp://127.0.0.1:1' });
  });
  afterAll(() => td.close());
  it('inviting answers 502 JSON naming the problem; the account exists as "invited" and can be re-sent later', async () => {
    const m = await td.login('manager');
    const res = await m.post('/api/users').send({ email: 'unlucky@test.example', name: 'Unlucky', roles: ['biologist'] });
    expect(res.status).toBe(502);
    expect(res.body.error).toMatch(/could not be sent/);
    const list = UserListResponse.parse((await m.get('/api/users')).body);
    expect(list.users.find((u) => u.email === 'unlucky@test.example')?.status).toBe('invited');
    expect(td.ctx.db.select().from(outgoingMail).all()).toEqual([]);
  });
});

it('TEST_PASSWORD accounts still sign in (sanity)', async () => {
  expect((await request(t.app).post('/api/auth/login').send({ email: 'outsider@test.example', password: TEST_PASSWORD })).status).toBe(200);
});
