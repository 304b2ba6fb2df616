/** Recipe life cycle and its permission matrix, through the API. Rules: the product brief (no outside source). */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents } from '../../server/db/schema.js';
import { DEFAULT_RECIPE_SETTINGS, RecipeSettings, describeSettings, SETTING_KEYS } from '../../shared/schemas/recipes.js';
import { eq } from 'drizzle-orm';

let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent, mgr: Agent, bio: Agent, col: Agent;

beforeAll(async () => {
  t = await makeTestApp();
  [mic, mgr, bio, col] = await Promise.all([t.login('microscopist'), t.login('manager'), t.login('biologist'), t.login('collaborator')]);
});
afterAll(() => t.close());

const create = async (a: Agent, name = 'Nuclear Costes') => {
  const res = await a.post('/api/recipes').send({ name, description: 'for tests', settings: { threshold: { method: 'otsu' } } });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body as { id: number; familyId: number; version: number; status: string };
};

describe('settings schema', () => {
  it('fills defaults and explains every setting in one sentence', () => {
    const s = RecipeSettings.parse({});
    expect(s).toEqual(DEFAULT_RECIPE_SETTINGS);
    expect(s.randomization.count).toBe(200);
    const d = describeSettings(s);
    expect(d.map((x) => x.key)).toEqual([...SETTING_KEYS]);
    for (const x of d) expect(x.sentence).toMatch(/^[A-Z].*\.$/);
  });
  it('refuses an inverted z range and names it', () => {
    const r = RecipeSettings.safeParse({ z: { mode: 'range', from: 3, to: 1 } });
    expect(r.success).toBe(false);
    expect(JSON.stringify(r.error?.issues)).toMatch(/from/);
  });
  it('rejects a bad setting with 400 and the field path', async () => {
    const res = await mic.post('/api/recipes').send({ name: 'x', settings: { randomization: { count: -5 } } });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/randomization\.count/);
  });
});

describe('life cycle', () => {
  it('draft → submitted → returned (note) → edited → submitted → approved, each audited', async () => {
    const r = await create(mic);
    expect(r).toMatchObject({ status: 'draft', version: 1, familyId: r.id });
    expect((await mic.post(`/api/recipes/${r.id}/submit`).send({})).body.status).toBe('submitted');
    // editing while submitted: 409
    expect((await mic.patch(`/api/recipes/${r.id}`).send({ description: 'x' })).status).toBe(409);
    // returning needs a note
    expect((await mgr.post(`/api/recipes/${r.id}/return`).send({})).status).toBe(400);
    const ret = await mgr.post(`/api/recipes/${r.id}/return`).send({ note: 'use orthogonal regression' });
    expect(ret.body).toMatchObject({ status: 'returned', reviewNote: 'use orthogonal regression' });
    const ed = await mic.patch(`/api/recipes/${r.id}`).send({ settings: { threshold: { method: 'costes' } } });
    expect(ed.status).toBe(200);
    expect(ed.body.settings.threshold).toEqual({ method: 'costes', regression: 'orthogonal', belowSet: 'either', stoppingRule: { kind: 'r_at_most', r: 0 } });
    await mic.post(`/api/recipes/${r.id}/submit`).send({});
    const ap = await mgr.post(`/api/recipes/${r.id}/approve`).send({ note: 'fine' });
    expect(ap.body.status).toBe('approved');
    expect(ap.body.reviewer.name).toBe('manager');
    const ev = t.ctx.db.select().from(auditEvents).where(eq(auditEvents.entityId, r.id)).all().filter((e) => e.entity === 'recipe');
    expect(ev.map((e) => e.action)).toEqual(['recipe.create', 'recipe.submit', 'recipe.return', 'recipe.edit', 'recipe.submit', 'recipe.approve']);
    expect(ev[2]).toMatchObject({ actorId: t.world.users.manager.id, details: expect.objectContaining({ note: 'use orthogonal regression' }) });
    expect(ev.every((e) => typeof e.at === 'string' && e.at.length > 10)).toBe(true);
    const detail = (await mic.get(`/api/recipes/${r.id}`)).body;
    expect(detail.history.map((h: { action: string }) => h.action)).toEqual(['create', 'submit', 'return', 'edit', 'submit', 'approve']);
  });

  it('approved is immutable; editing makes a new draft version in the family; retire, never delete', async () => {
    const r = await create(mic, 'Immutable');
    await mic.post(`/api/recipes/${r.id}/submit`);
    await mgr.post(`/api/recipes/${r.id}/approve`);
    expect((await mgr.patch(`/api/recipes/${r.id}`).send({ name: 'changed' })).status).toBe(409);
    expect((await mgr.post(`/api/recipes/${r.id}/approve`)).status).toBe(409);
    const v2 = await bio.post(`/api/recipes/${r.id}/versions`).send({ settings: { saturation: 'exclude' } });
    expect(v2.status).toBe(201);
    expect(v2.body).toMatchObject({ familyId: r.id, version: 2, status: 'draft', proposer: { name: 'biologist' } });
    expect(v2.body.settings.saturation).toBe('exclude');
    const v1 = (await mic.get(`/api/recipes/${r.id}`)).body;
    expect(v1.status).toBe('approved');
    expect(v1.settings.saturation).toBe('keep');
    expect(v1.versions.map((v: { version: number }) => v.version)).toEqual([2, 1]);
    // a new version from a draft is refused
    expect((await mic.post(`/api/recipes/${v2.body.id}/versions`).send({})).status).toBe(409);
    // side-by-side difference
    const diff = (await mic.get(`/api/recipes/${r.id}/diff/${v2.body.id}`)).body;
    const changed = diff.entries.filter((e: { changed: boolean }) => e.changed).map((e: { key: string }) => e.key);
    expect(changed).toEqual(['saturation']);
    // retire, and no DELETE route
    expect((await mgr.post(`/api/recipes/${r.id}/retire`)).body.status).toBe('retired');
    expect((await mgr.post(`/api/recipes/${r.id}/retire`)).status).toBe(409);
    expect((await mgr.delete(`/api/recipes/${r.id}`)).status).toBe(404);
    expect((await mic.get(`/api/recipes/${r.id}`)).body.status).toBe('retired');
    // list with status filter
    const list = (await mic.get('/api/recipes?status=retired')).body.recipes;
    expect(list.map((x: { id: number }) => x.id)).toContain(r.id);
    expect(list.every((x: { status: string }) => x.status === 'retired')).toBe(true);
  });

  it('illegal transitions are 409', async () => {
    const r = await create(mic, 'Illegal');
    expect((await mgr.post(`/api/recipes/${r.id}/approve`)).status).toBe(409); // draft → approved
    expect((await mgr.post(`/api/recipes/${r.id}/return`).send({ note: 'x' })).status).toBe(409);
    await mic.post(`/api/recipes/${r.id}/submit`);
    expect((await mic.post(`/api/recipes/${r.id}/submit`)).status).toBe(409); // submitted → submitted
  });
});

describe('permission matrix', () => {
  it('a microscopist proposes and submits but cannot approve, return or retire', async () => {
    const r = await create(mic, 'Matrix');
    await mic.post(`/api/recipes/${r.id}/submit`);
    for (const tr of ['approve', 'return', 'retire']) expect((await mic.post(`/api/recipes/${r.id}/${tr}`).send({ note: 'n' })).status, tr).toBe(403);
    expect((await bio.post(`/api/recipes/${r.id}/approve`)).status).toBe(403);
    // another user may not submit or edit someone else's draft
    const r2 = await create(mic, 'Mine');
    expect((await bio.post(`/api/recipes/${r2.id}/submit`)).status).toBe(403);
    expect((await bio.patch(`/api/recipes/${r2.id}`).send({ name: 'hijack' })).status).toBe(403);
    const detail = (await mic.get(`/api/recipes/${r.id}`)).body;
    expect(detail.allowed).toEqual([]);
    expect((await mgr.get(`/api/recipes/${r.id}`)).body.allowed).toEqual(['approve', 'return', 'retire']);
  });
  it('a collaborator can do nothing', async () => {
    const r = await create(mic, 'Hidden');
    const calls = [
      col.get('/api/recipes'),
      col.get(`/api/recipes/${r.id}`),
      col.post('/api/recipes').send({ name: 'x' }),
      col.patch(`/api/recipes/${r.id}`).send({ name: 'x' }),
      col.post(`/api/recipes/${r.id}/submit`),
      col.post(`/api/recipes/${r.id}/approve`),
      col.post(`/api/recipes/${r.id}/return`).send({ note: 'x' }),
      col.post(`/api/recipes/${r.id}/retire`),
      col.post(`/api/recipes/${r.id}/versions`),
      col.get(`/api/recipes/${r.id}/diff/${r.id}`),
    ];
    for (const res of await Promise.all(calls)) expect(res.status).toBe(403);
  });
  it('signed out: 401', async () => {
    const { default: request } = await import('supertest');
    expect((await request(t.app).get('/api/recipes')).status).toBe(401);
  });
});
