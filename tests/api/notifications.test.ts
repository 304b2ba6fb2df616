/**
 * E-mail notifications through the one mail path (captured by the outbox sink in tests): recipe submitted →
 * facility managers; approved or returned with the note → the proposer; run finished or partly failed, naming
 * the failing fields → who started it; a calibration approved → its proposer. Each user may turn each kind off; disabled users get nothing.
 * (common practice; no outside reference value)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { fields, outgoingMail, users } from '../../server/db/schema.js';
import { keyForSha } from '../../server/images/store.js';
import { NotificationSettings } from '../../shared/schemas/notifications.js';
import { addField, gridCells, syntheticPair, waitForRun } from '../runs/helpers.js';

let t: TestApp;
let mic: Awaited<ReturnType<TestApp['login']>>;
let mgr: Awaited<ReturnType<TestApp['login']>>;

beforeAll(async () => {
  t = await makeTestApp({ WORKERS: '1' });
  [mic, mgr] = await Promise.all([t.login('microscopist'), t.login('manager')]);
});
afterAll(() => t.close());

const mailTo = (email: string) => t.ctx.db.select().from(outgoingMail).where(eq(outgoingMail.to, email)).all();
const email = (who: 'microscopist' | 'manager') => t.world.users[who].email;
async function until<T>(get: () => T | undefined, ms = 10_000): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const v = get();
    if (v !== undefined) return v;
    if (Date.now() > end) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, 50));
  }
}

describe('recipes', () => {
  it('a submitted recipe reaches the facility managers; approval and return reach the proposer, with the note', async () => {
    const r = (await mic.post('/api/recipes').send({ name: 'Notice recipe' })).body;
    const before = mailTo(email('manager')).length;
    expect((await mic.post(`/api/recipes/${r.id}/submit`)).status).toBe(200);
    const toMgr = mailTo(email('manager')).slice(before);
    expect(toMgr.map((m) => m.subject)).toEqual([`Recipe to review: Notice recipe v${r.version}`]);
    expect(toMgr[0].text).toMatch(/submitted the recipe Notice recipe v\d+ for review/);
    expect(toMgr[0].text).toMatch(new RegExp(`/recipes/${r.id}`));
    expect(mailTo(email('microscopist')).filter((m) => m.subject.startsWith('Recipe to review'))).toEqual([]); // not the submitter

    expect((await mgr.post(`/api/recipes/${r.id}/return`).send({ note: 'Use Costes thresholds, please.' })).status).toBe(200);
    const returned = mailTo(email('microscopist')).find((m) => m.subject === `Recipe returned: Notice recipe v${r.version}`)!;
    expect(returned.text).toMatch(/Their note: Use Costes thresholds, please\./);
    await mic.post(`/api/recipes/${r.id}/submit`);
    await mgr.post(`/api/recipes/${r.id}/approve`);
    expect(mailTo(email('microscopist')).some((m) => m.subject === `Recipe approved: Notice recipe v${r.version}`)).toBe(true);
  });

  it('a kind turned off is not sent, the others still are; choices are per user', async () => {
    const off = await mgr.put('/api/notifications').send({ off: ['recipe_submitted'] });
    expect(off.status).toBe(200);
    const s = NotificationSettings.parse(off.body);
    expect(s.kinds.map((k) => [k.kind, k.on])).toEqual([
      ['recipe_submitted', false],
      ['recipe_reviewed', true],
      ['calibration_approved', true],
      ['run_finished', true],
    ]);
    expect(NotificationSettings.parse((await mic.get('/api/notifications')).body).kinds.every((k) => k.on)).toBe(true);
    const r = (await mic.post('/api/recipes').send({ name: 'Quiet recipe' })).body;
    const before = mailTo(email('manager')).length;
    await mic.post(`/api/recipes/${r.id}/submit`);
    expect(mailTo(email('manager')).length).toBe(before);
    await mgr.put('/api/notifications').send({ off: [] });
    expect(NotificationSettings.parse((await mgr.get('/api/notifications')).body).kinds.every((k) => k.on)).toBe(true);
  });

  it('refuses an unknown kind with a 400 quoting it', async () => {
    const res = await mgr.put('/api/notifications').send({ off: ['everything'] });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/off\.0/);
    expect(res.body.error).toMatch(/everything/);
  });

  it('a disabled user gets nothing', async () => {
    t.ctx.db.update(users).set({ disabled: true }).where(eq(users.id, t.world.users.manager.id)).run();
    const r = (await mic.post('/api/recipes').send({ name: 'Unread recipe' })).body;
    const before = mailTo(email('manager')).length;
    await mic.post(`/api/recipes/${r.id}/submit`);
    expect(mailTo(email('manager')).length).toBe(before);
    t.ctx.db.update(users).set({ disabled: false }).where(eq(users.id, t.world.users.manager.id)).run();
  });
});

describe('calibrations', () => {
  it('an approved calibration reaches its proposer (with the note and a link to the instrument), unless turned off', async () => {
    mgr = await t.login('manager');
    const inst = (await mgr.post('/api/instruments').send({ name: 'Spinning disk 3', objective: '60×', channel1: 'GFP', channel2: 'RFP' })).body.id as number;
    const propose = async () => {
      const c = (await mic.post(`/api/instruments/${inst}/calibrations`).send({ dx: 0.5, dy: -0.25 })).body;
      expect((await mic.post(`/api/calibrations/${c.id}/submit`).send({})).status).toBe(200);
      return c as { id: number; version: number };
    };
    const c = await propose();
    expect((await mgr.post(`/api/calibrations/${c.id}/approve`).send({ note: 'Beads look fine.' })).status).toBe(200);
    const m = mailTo(email('microscopist')).find((x) => x.subject === `Calibration approved: calibration v${c.version} of Spinning disk 3`)!;
    expect(m.text).toMatch(/approved your calibration v\d+ of Spinning disk 3\./);
    expect(m.text).toMatch(/Their note: Beads look fine\./);
    expect(m.text).toContain(`/instruments/${inst}`);
    // turned off: the next approval sends nothing to the proposer
    expect((await mic.put('/api/notifications').send({ off: ['calibration_approved'] })).status).toBe(200);
    const c2 = await propose();
    const before = mailTo(email('microscopist')).length;
    expect((await mgr.post(`/api/calibrations/${c2.id}/approve`).send({})).status).toBe(200);
    expect(mailTo(email('microscopist')).length).toBe(before);
    await mic.put('/api/notifications').send({ off: [] });
  });
});

describe('runs', () => {
  it('a run that partly failed tells who started it which fields failed and why', async () => {
    mgr = await t.login('manager'); // disabling ended the earlier session
    const W = 24, H = 24;
    const ok = await addField(t.ctx, t.world.coverslipA, { name: 'Good field', width: W, height: H, ...pair(W, H, 1), cells: gridCells(W, H, 2) });
    const bad = await addField(t.ctx, t.world.coverslipA, { name: 'Lost field', width: W, height: H, ...pair(W, H, 2), cells: gridCells(W, H, 2) });
    const lost = t.ctx.db.select().from(fields).where(eq(fields.id, bad.fieldId)).get()!;
    await t.ctx.store.delete(keyForSha(lost.file1Sha)); // its image is gone: the field fails
    const r = (await mic.post('/api/recipes').send({ name: 'Run notice', settings: { minCellPixels: 5 } })).body;
    await mic.post(`/api/recipes/${r.id}/submit`);
    await mgr.post(`/api/recipes/${r.id}/approve`);
    const run = await mic.post('/api/runs').send({ recipeId: r.id, scope: { kind: 'coverslip', id: t.world.coverslipA } });
    expect(run.status, JSON.stringify(run.body)).toBe(201);
    const done = (await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body)) as { status: string };
    expect(done.status).toBe('partial');
    const m = await until(() => mailTo(email('microscopist')).find((x) => x.subject.includes(`run ${run.body.id} `)));
    expect(m.subject).toBe(`Run finished with failures: run ${run.body.id} (Run notice v${r.version})`);
    expect(m.text).toMatch(/1 field measured, 1 failed/);
    expect(m.text).toMatch(/• Lost field: /);
    expect(m.text).not.toMatch(/Good field/);
    expect(m.text).toMatch(new RegExp(`/runs\\?run=${run.body.id}`));
    expect(ok.fieldId).toBeGreaterThan(0);
  }, 120_000);
});

function pair(W: number, H: number, seed: number) {
  const [ch1, ch2] = syntheticPair(W, H, seed);
  return { ch1, ch2 };
}
