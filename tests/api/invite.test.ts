/**
 * Invitation flow through the REAL embedded SMTP sink (smtp-server + mailparser, no stub): a facility
 * manager invites, the message arrives in the outbox, its link shows the invitation and sets a password
 * once; expired and re-sent links stop working.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import nodemailer from 'nodemailer';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { invitations, outgoingMail, users } from '../../server/db/schema.js';
import type { SyntopyMailer } from '../../server/mail/transport.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({ PUBLIC_URL: 'https://syntopy.example.org/' });
});
afterAll(() => t.close());

const linkIn = (text: string) => text.match(/https?:\/\/\S+\/invite\/([A-Za-z0-9_-]+)/);

describe('the embedded SMTP sink', () => {
  it('listens on loopback and stores what any SMTP client sends (an outside nodemailer client here)', async () => {
    const sink = (t.ctx.mail as SyntopyMailer).sink!;
    expect(sink.host).toBe('127.0.0.1');
    expect(sink.port).toBeGreaterThan(0);
    const client = nodemailer.createTransport({ host: sink.host, port: sink.port, secure: false, ignoreTLS: true });
    await client.sendMail({ from: 'Someone <a@x.test>', to: 'b@x.test, c@x.test', subject: 'Grüße', text: 'plain body', html: '<b>html body</b>' });
    client.close();
    const m = t.ctx.db.select().from(outgoingMail).all().at(-1)!;
    expect(m).toMatchObject({ from: 'Someone <a@x.test>', to: 'b@x.test, c@x.test', subject: 'Grüße', text: 'plain body', html: '<b>html body</b>', via: 'sink' });
    expect(m.messageId).toMatch(/^<.+>$/);
  });
});

describe('invitation', () => {
  let token = '';
  it('a facility manager invites: 201, the user waits as "invited", the e-mail is stored with a link under PUBLIC_URL', async () => {
    const manager = await t.login('manager');
    const res = await manager.post('/api/users').send({ email: 'New.Person@Example.test', name: 'New Person', roles: ['microscopist'], labIds: [t.world.labA] });
    expect(res.status).toBe(201);
    expect(res.body.user).toMatchObject({ email: 'new.person@example.test', status: 'invited', roles: ['microscopist'], labIds: [t.world.labA] });
    // ctx.mail.send resolved before the response, so the message is already stored
    const box = await manager.get('/api/outbox');
    expect(box.status).toBe(200);
    const summary = box.body.messages[0];
    expect(summary).toMatchObject({ to: 'new.person@example.test', via: 'sink' });
    const msg = await manager.get(`/api/outbox/${summary.id}`);
    expect(msg.status).toBe(200);
    const m = linkIn(msg.body.text)!;
    expect(m[0].startsWith('https://syntopy.example.org/invite/')).toBe(true);
    expect(msg.body.html).toContain(m[0]);
    token = m[1];
    // only the hash is stored
    const row = t.ctx.db.select().from(invitations).all().at(-1)!;
    expect(row.tokenHash).not.toContain(token);
    // the expiry in the one date format, with its time zone (shared/format/datetime.ts)
    const until = `${row.expiresAt.slice(0, 10)} ${row.expiresAt.slice(11, 16)} UTC`;
    expect(msg.body.text).toContain(`until ${until})`);
    expect(msg.body.html).toContain(`until ${until})`);
  });

  it('the link shows name and e-mail; an invited user cannot sign in yet', async () => {
    const info = await request(t.app).get(`/api/auth/invitations/${token}`);
    expect(info.status).toBe(200);
    expect(info.body).toMatchObject({ email: 'new.person@example.test', name: 'New Person', roles: ['microscopist'] });
    expect((await request(t.app).post('/api/auth/login').send({ email: 'new.person@example.test', password: 'anything-at-all' })).status).toBe(401);
  });

  it('accepting sets the password and signs in; the link then works no more', async () => {
    const short = await request(t.app).post(`/api/auth/invitations/${token}/accept`).send({ password: 'short' });
    expect(short.status).toBe(400);
    const agent = request.agent(t.app);
    const ok = await agent.post(`/api/auth/invitations/${token}/accept`).send({ password: 'my own new password' });
    expect(ok.status).toBe(200);
    expect(ok.body.user.email).toBe('new.person@example.test');
    expect((await agent.get('/api/auth/me')).status).toBe(200);
    const again = await request(t.app).post(`/api/auth/invitations/${token}/accept`).send({ password: 'an attacker password' });
    expect(again.status).toBe(410);
    expect((await request(t.app).get(`/api/auth/invitations/${token}`)).status).toBe(410);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'new.person@example.test', password: 'an attacker password' })).status).toBe(401);
    expect((await request(t.app).post('/api/auth/login').send({ email: 'new.person@example.test', password: 'my own new password' })).status).toBe(200);
  });

  it('two concurrent accepts of one link: exactly one succeeds', async () => {
    const manager = await t.login('manager');
    await manager.post('/api/users').send({ email: 'race@example.test', name: 'Race', roles: ['biologist'] });
    const tok = linkIn(t.ctx.db.select().from(outgoingMail).all().at(-1)!.text)![1];
    const [a, b] = await Promise.all([
      request(t.app).post(`/api/auth/invitations/${tok}/accept`).send({ password: 'first password here' }),
      request(t.app).post(`/api/auth/invitations/${tok}/accept`).send({ password: 'second password here' }),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 410]);
  });

  it('an expired link is 410; a re-sent invitation replaces the old link; unknown tokens are 404', async () => {
    const manager = await t.login('manager');
    const res = await manager.post('/api/users').send({ email: 'late@example.test', name: 'Late', roles: ['collaborator'] });
    const userId = res.body.user.id;
    const tok1 = linkIn(t.ctx.db.select().from(outgoingMail).all().at(-1)!.text)![1];
    t.ctx.db.update(invitations).set({ expiresAt: new Date(Date.now() - 1000).toISOString() }).where(eq(invitations.userId, userId)).run();
    expect((await request(t.app).get(`/api/auth/invitations/${tok1}`)).status).toBe(410);
    expect((await request(t.app).post(`/api/auth/invitations/${tok1}/accept`).send({ password: 'some good password' })).status).toBe(410);
    const resend = await manager.post(`/api/users/${userId}/invite`);
    expect(resend.status).toBe(200);
    const tok2 = linkIn(t.ctx.db.select().from(outgoingMail).all().at(-1)!.text)![1];
    expect(tok2).not.toBe(tok1);
    expect((await request(t.app).get(`/api/auth/invitations/${tok2}`)).status).toBe(200);
    expect((await request(t.app).get(`/api/auth/invitations/${'x'.repeat(43)}`)).status).toBe(404);
    expect((await request(t.app).get('/api/auth/invitations/short')).status).toBe(404);
    // a new invitation to an address with an account is refused
    expect((await manager.post('/api/users').send({ email: 'late@example.test', name: 'Late', roles: ['collaborator'] })).status).toBe(409);
    // once the password is set, re-sending is refused
    await request(t.app).post(`/api/auth/invitations/${tok2}/accept`).send({ password: 'some good password' });
    expect((await manager.post(`/api/users/${userId}/invite`)).status).toBe(409);
    expect(t.ctx.db.select().from(users).where(eq(users.id, userId)).get()!.passwordHash).toBeTruthy();
  });
});

describe('without PUBLIC_URL the link uses the request origin', () => {
  let t2: TestApp;
  beforeAll(async () => {
    t2 = await makeTestApp();
  });
  afterAll(() => t2.close());
  it('Host header decides the link', async () => {
    const manager = await t2.login('manager');
    const res = await manager.post('/api/users').set('Host', 'portal.local:8123').send({ email: 'x@example.test', name: 'X', roles: ['biologist'] });
    expect(res.status).toBe(201);
    const text = t2.ctx.db.select().from(outgoingMail).all().at(-1)!.text;
    expect(text).toMatch(/http:\/\/portal\.local:8123\/invite\/[A-Za-z0-9_-]{43}/);
  });
});
