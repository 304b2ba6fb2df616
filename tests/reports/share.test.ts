/**
 * Share by e-mail: the message goes through the real embedded SMTP sink (server/mail/sink.ts stores it in
 * outgoing_mail before acknowledging), its link opens the report without an account, openings are logged,
 * revoked / expired links answer 410, a tampered token 401, and a token for report A never opens report B.
 * Token format: RFC 7519 JWT / RFC 7515 JWS compact serialization (header.payload.signature, base64url).
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import request from 'supertest';
import { desc, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents, outgoingMail, shareLinks, shareOpenings, studyMembers, users } from '../../server/db/schema.js';
import { signShareToken } from '../../server/reports/tokens.js';
import { buildReportWorld, insertRun } from './fixtures.js';

let t: TestApp;
let reportA: number;
let reportB: number;

beforeAll(async () => {
  t = await makeTestApp();
  const rw = await buildReportWorld(t.ctx, t.world);
  insertRun(t.ctx, t.world.studyA, rw, (s, c) => 0.3 + 0.05 * s + 0.01 * c);
  const bio = await t.login('biologist');
  reportA = (await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Report A', coefficients: ['pearson'] })).body.id;
  reportB = (await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Report B', coefficients: ['spearman'] })).body.id;
});
afterAll(() => t?.close());

const mailTo = (to: string) => t.ctx.db.select().from(outgoingMail).where(eq(outgoingMail.to, to)).orderBy(desc(outgoingMail.id)).all();
const tokenIn = (text: string) => {
  const m = /\/shared\/([A-Za-z0-9_-]+\.[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+)/.exec(text);
  if (!m) throw new Error(`no share link in the message: ${text}`);
  return m[1];
};
/** base64url JSON segment helpers (RFC 7515 §2) */
const b64 = (o: unknown) => Buffer.from(JSON.stringify(o)).toString('base64url');
const unb64 = (s: string) => JSON.parse(Buffer.from(s, 'base64url').toString('utf8'));

async function share(reportId: number, emails: string[], extra: Record<string, unknown> = {}) {
  const bio = await t.login('biologist');
  const res = await bio.post(`/api/reports/${reportId}/shares`).send({ emails, message: 'Here are the numbers we discussed.', ...extra });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body.links as { id: number; email: string; state: string; expiresAt: string }[];
}

describe('share links', () => {
  let tokenA: string;
  let linkA: number;

  it('e-mails each recipient a personal link through the SMTP sink', async () => {
    const links = await share(reportA, ['Ada@Example.org', 'ben@example.org']);
    expect(links.map((l) => [l.email, l.state])).toEqual(
      expect.arrayContaining([
        ['ada@example.org', 'active'],
        ['ben@example.org', 'active'],
      ]),
    );
    const ada = mailTo('ada@example.org');
    expect(ada).toHaveLength(1);
    expect(ada[0].via).toBe('sink');
    expect(ada[0].subject).toContain('Report A');
    expect(ada[0].text).toContain('Here are the numbers we discussed.');
    expect(ada[0].html).toContain('/shared/');
    expect(ada[0].text).toMatch(/works until \d{4}-\d\d-\d\d \d\d:\d\d UTC\):/);
    tokenA = tokenIn(ada[0].text);
    expect(tokenIn(mailTo('ben@example.org')[0].text)).not.toBe(tokenA);
    linkA = links.find((l) => l.email === 'ada@example.org')!.id;
    // default lifetime 30 days
    const days = (new Date(links[0].expiresAt).getTime() - Date.now()) / 86400_000;
    expect(days).toBeGreaterThan(29.9);
    expect(days).toBeLessThanOrEqual(30);
    const header = unb64(tokenA.split('.')[0]);
    const payload = unb64(tokenA.split('.')[1]);
    expect(header.alg).toBe('HS256');
    expect(payload).toMatchObject({ typ: 'share', rid: reportA });
    expect(payload.jti).toBe(t.ctx.db.select().from(shareLinks).where(eq(shareLinks.id, linkA)).get()!.tokenId);
    expect(t.ctx.db.select().from(auditEvents).where(eq(auditEvents.action, 'share.create')).all()).toHaveLength(2);
  });

  it('opens the read-only report without an account and logs each opening', async () => {
    const anon = request(t.app);
    const res = await anon.get(`/api/shared/${tokenA}`).set('user-agent', 'ReportReader/1.0');
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.report.id).toBe(reportA);
    expect(res.body.report.title).toBe('Report A');
    expect(res.body.report.canShare).toBe(false);
    expect(res.body.recipient).toBe('ada@example.org');
    expect(res.body.report.snapshot.methods).toMatch(/Pearson/);
    await anon.get(`/api/shared/${tokenA}`).set('user-agent', 'ReportReader/2.0');
    const opens = t.ctx.db.select().from(shareOpenings).where(eq(shareOpenings.shareLinkId, linkA)).all();
    expect(opens.map((o) => o.userAgent)).toEqual(['ReportReader/1.0', 'ReportReader/2.0']);
    expect(opens[0].ip).toMatch(/127\.0\.0\.1|::1|::ffff:127\.0\.0\.1/);
    const csv = await anon.get(`/api/shared/${tokenA}/csv/cells`);
    expect(csv.status).toBe(200);
    expect(csv.text.split('\r\n')[0]).toContain('pearson');
    // the owner sees state, last opening and the openings
    const bio = await t.login('biologist');
    const list = (await bio.get(`/api/reports/${reportA}/shares`)).body.links as { id: number; openCount: number; lastOpenedAt: string | null; openings: unknown[] }[];
    const mine = list.find((l) => l.id === linkA)!;
    expect(mine.openCount).toBe(2);
    expect(mine.lastOpenedAt).not.toBeNull();
    expect(mine.openings).toHaveLength(2);
    // a link gives no account access
    expect((await anon.get(`/api/reports/${reportA}`)).status).toBe(401);
  });

  it('a token for report A never opens report B', async () => {
    const [h, p, sig] = tokenA.split('.');
    const forged = `${h}.${b64({ ...unb64(p), rid: reportB })}.${sig}`;
    expect((await request(t.app).get(`/api/shared/${forged}`)).status).toBe(401);
    // even a correctly signed token that names B but carries A's link id is refused (the database binds the link to A)
    const jti = t.ctx.db.select().from(shareLinks).where(eq(shareLinks.id, linkA)).get()!.tokenId;
    const crossed = await signShareToken(t.ctx, { tokenId: jti, reportId: reportB, expiresAt: new Date(Date.now() + 86400_000).toISOString() });
    const res = await request(t.app).get(`/api/shared/${crossed}`);
    expect(res.status).toBe(401);
    // and A's own token still opens A, not B
    expect((await request(t.app).get(`/api/shared/${tokenA}`)).body.report.id).toBe(reportA);
  });

  it('a tampered token answers 401', async () => {
    const [h, p, sig] = tokenA.split('.');
    const flip = (s: string, i: number) => s.slice(0, i) + (s[i] === 'A' ? 'B' : 'A') + s.slice(i + 1);
    for (const bad of [`${h}.${p}.${flip(sig, 5)}`, `${h}.${flip(p, 10)}.${sig}`, `${b64({ alg: 'none', typ: 'JWT' })}.${p}.`, 'not-a-token', `${h}.${p}`]) {
      const res = await request(t.app).get(`/api/shared/${encodeURIComponent(bad)}`);
      expect(res.status, bad).toBe(401);
      expect(res.body.error).toMatch(/not valid/);
    }
    // a session token is not a share token
    const login = await request(t.app).post('/api/auth/login').send({ email: 'biologist@test.example', password: 'correct horse battery' });
    const session = /syntopy_session=([^;]+)/.exec(String(login.headers['set-cookie']))![1];
    expect((await request(t.app).get(`/api/shared/${session}`)).status).toBe(401);
  });

  it('after revocation the link answers 410; resend is refused', async () => {
    const ben = mailTo('ben@example.org')[0];
    const tokenBen = tokenIn(ben.text);
    const benLink = t.ctx.db.select().from(shareLinks).where(eq(shareLinks.email, 'ben@example.org')).get()!;
    const bio = await t.login('biologist');
    const rev = await bio.post(`/api/shares/${benLink.id}/revoke`);
    expect(rev.status).toBe(200);
    expect(rev.body.state).toBe('revoked');
    const res = await request(t.app).get(`/api/shared/${tokenBen}`);
    expect(res.status).toBe(410);
    expect(res.body.error).toMatch(/withdrawn/);
    expect((await request(t.app).get(`/api/shared/${tokenBen}/csv/cells`)).status).toBe(410);
    expect((await bio.post(`/api/shares/${benLink.id}/resend`)).status).toBe(409);
    // Ada's link is untouched
    expect((await request(t.app).get(`/api/shared/${tokenA}`)).status).toBe(200);
  });

  it('after expiry the link answers 410 (settable lifetime; the clock moved past it)', async () => {
    const [link] = await share(reportB, ['cleo@example.org'], { expiresInDays: 2 });
    const days = (new Date(link.expiresAt).getTime() - Date.now()) / 86400_000;
    expect(days).toBeGreaterThan(1.99);
    expect(days).toBeLessThanOrEqual(2);
    const token = tokenIn(mailTo('cleo@example.org')[0].text);
    expect((await request(t.app).get(`/api/shared/${token}`)).status).toBe(200);
    vi.useFakeTimers({ toFake: ['Date'] });
    try {
      vi.setSystemTime(Date.now() + 2 * 86400_000 + 1000);
      const res = await request(t.app).get(`/api/shared/${token}`);
      expect(res.status).toBe(410);
      expect(res.body.error).toMatch(/expired/);
      const bio = await t.login('biologist');
      const list = (await bio.get(`/api/reports/${reportB}/shares`)).body.links;
      expect(list[0].state).toBe('expired');
    } finally {
      vi.useRealTimers();
    }
    // the database date alone also ends a link (expiry shortened on the row)
    t.ctx.db.update(shareLinks).set({ expiresAt: new Date(Date.now() - 1000).toISOString() }).where(eq(shareLinks.id, link.id)).run();
    expect((await request(t.app).get(`/api/shared/${token}`)).status).toBe(410);
  });

  it('resend e-mails the same working link again', async () => {
    const bio = await t.login('biologist');
    const before = mailTo('ada@example.org').length;
    const res = await bio.post(`/api/shares/${linkA}/resend`);
    expect(res.status).toBe(200);
    const mails = mailTo('ada@example.org');
    expect(mails).toHaveLength(before + 1);
    expect(mails[0].subject).toMatch(/^Reminder/);
    const again = await request(t.app).get(`/api/shared/${tokenIn(mails[0].text)}`);
    expect(again.status).toBe(200);
    expect(again.body.report.id).toBe(reportA);
  });

  it('can invite the recipient to read this study only', async () => {
    await share(reportA, ['dana@example.org'], { inviteToStudy: true });
    const u = t.ctx.db.select().from(users).where(eq(users.email, 'dana@example.org')).get()!;
    expect(u.roles).toEqual(['collaborator']);
    expect(t.ctx.db.select().from(studyMembers).where(eq(studyMembers.userId, u.id)).all()).toEqual([{ studyId: t.world.studyA, userId: u.id, access: 'read' }]);
    const mails = mailTo('dana@example.org');
    expect(mails.map((m) => m.subject).sort()).toEqual(expect.arrayContaining([expect.stringMatching(/choose a password/), expect.stringMatching(/shared a Syntopy report/)]));
    const bio = await t.login('biologist');
    const list = (await bio.get(`/api/reports/${reportA}/shares`)).body.links;
    expect(list.find((l: { email: string }) => l.email === 'dana@example.org').invited).toBe(true);
  });

  it('a mail server failure leaves the link in place and names the address', async () => {
    const send = t.ctx.mail.send;
    t.ctx.mail.send = async (m) => {
      if (m.to === 'down@example.org') throw new Error('550 mailbox unavailable');
      return send.call(t.ctx.mail, m);
    };
    try {
      const bio = await t.login('biologist');
      const res = await bio.post(`/api/reports/${reportA}/shares`).send({ emails: ['down@example.org', 'up@example.org'] });
      expect(res.status).toBe(201);
      expect(res.body.notSent).toEqual(['down@example.org']);
      expect(res.body.links.filter((l: { email: string }) => ['down@example.org', 'up@example.org'].includes(l.email))).toHaveLength(2);
      expect(mailTo('up@example.org')).toHaveLength(1);
      expect(mailTo('down@example.org')).toHaveLength(0);
    } finally {
      t.ctx.mail.send = send;
    }
    // "send again" delivers it once the mail server answers
    const bio = await t.login('biologist');
    const link = t.ctx.db.select().from(shareLinks).where(eq(shareLinks.email, 'down@example.org')).get()!;
    expect((await bio.post(`/api/shares/${link.id}/resend`)).status).toBe(200);
    expect(mailTo('down@example.org')).toHaveLength(1);
  });

  it('checks who may share and what they send', async () => {
    const collab = await t.login('collaborator');
    expect((await collab.post(`/api/reports/${reportA}/shares`).send({ emails: ['x@example.org'] })).status).toBe(403);
    expect((await collab.get(`/api/reports/${reportA}/shares`)).status).toBe(403);
    expect((await collab.post(`/api/shares/${linkA}/revoke`)).status).toBe(403);
    const outsider = await t.login('outsider');
    expect((await outsider.post(`/api/reports/${reportA}/shares`).send({ emails: ['x@example.org'] })).status).toBe(404);
    expect((await outsider.post(`/api/shares/${linkA}/revoke`)).status).toBe(404);
    const bio = await t.login('biologist');
    const bad = await bio.post(`/api/reports/${reportA}/shares`).send({ emails: ['not an address'] });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/e-mail/);
    expect((await bio.post(`/api/reports/${reportA}/shares`).send({ emails: ['a@example.org'], expiresInDays: 0 })).status).toBe(400);
    expect((await bio.post(`/api/reports/${reportA}/shares`).send({ emails: [] })).status).toBe(400);
    expect((await request(t.app).post(`/api/reports/${reportA}/shares`).send({ emails: ['a@example.org'] })).status).toBe(401);
  });
});
