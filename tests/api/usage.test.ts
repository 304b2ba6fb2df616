/**
 * Facility usage per lab and UTC month: counts and sums checked against the rows this test inserts (by
 * definition; no outside reference value); only facility managers may read it; the CSV holds the same rows.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents, fields, recipes, runs, studies } from '../../server/db/schema.js';
import { addField, syntheticPair } from '../runs/helpers.js';
import { USAGE_CSV_COLUMNS, UsageResponse } from '../../shared/schemas/usage.js';

let t: TestApp;
let mgr: Awaited<ReturnType<TestApp['login']>>;

beforeAll(async () => {
  t = await makeTestApp();
  mgr = await t.login('manager');
  const db = t.ctx.db;
  const w = t.world;
  // January 2026, lab A: one study, two fields (sizes recorded), two runs (90 s and one unfinished), two people
  const jan = db.insert(studies).values({ labId: w.labA, ownerId: w.users.biologist.id, name: 'January study', createdAt: '2026-01-05T09:00:00.000Z' }).returning().get();
  const [a, b] = syntheticPair(8, 8, 1);
  for (const name of ['J1', 'J2']) {
    const f = await addField(t.ctx, w.coverslipA, { name, width: 8, height: 8, ch1: a, ch2: b, cells: [] });
    db.update(fields).set({ createdAt: '2026-01-20T10:00:00.000Z' }).where(eq(fields.id, f.fieldId)).run();
  }
  const recipe = db.insert(recipes).values({ name: 'R', version: 1, status: 'approved', settings: {} }).returning().get();
  const run = (over: Partial<typeof runs.$inferInsert>) =>
    db.insert(runs).values({ studyId: w.studyA, recipeId: recipe.id, scopeKind: 'study', scopeId: w.studyA, status: 'done', seed: 1, engineVersion: 'e', fieldsTotal: 1, fieldsDone: 1, ...over }).run();
  run({ createdAt: '2026-01-21T10:00:00.000Z', startedAt: '2026-01-21T10:00:00.000Z', finishedAt: '2026-01-21T10:01:30.000Z', startedBy: w.users.microscopist.id });
  run({ createdAt: '2026-01-22T10:00:00.000Z', startedAt: null, finishedAt: null, status: 'queued', startedBy: w.users.microscopist.id });
  db.insert(auditEvents).values({ actorId: w.users.biologist.id, action: 'study_created', entity: 'study', entityId: jan.id, studyId: jan.id, at: '2026-01-05T09:00:00.000Z' }).run();
  // February 2026, lab B: one run of 2.5 s, one person
  run({ studyId: w.studyB, scopeId: w.studyB, createdAt: '2026-02-02T00:00:00.000Z', startedAt: '2026-02-02T00:00:00.000Z', finishedAt: '2026-02-02T00:00:02.500Z', startedBy: w.users.outsider.id });
});
afterAll(() => t?.close());

describe('GET /api/usage', () => {
  it('counts per lab and month, every month of every lab a row', async () => {
    const res = await mgr.get('/api/usage?from=2026-01&to=2026-03');
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const u = UsageResponse.parse(res.body);
    expect([u.from, u.to]).toEqual(['2026-01', '2026-03']);
    expect(u.rows).toHaveLength(2 * 3); // two labs × three months
    const row = (labId: number, month: string) => u.rows.find((r) => r.labId === labId && r.month === month)!;
    const fileBytes = t.ctx.db.select().from(fields).where(eq(fields.createdAt, '2026-01-20T10:00:00.000Z')).all().reduce((s, f) => s + f.fileSize, 0);
    expect(row(t.world.labA, '2026-01')).toMatchObject({ studies: 1, fields: 2, storedBytes: fileBytes, runs: 2, computeSeconds: 90, activeUsers: 2 });
    expect(row(t.world.labB, '2026-02')).toMatchObject({ studies: 0, fields: 0, storedBytes: 0, runs: 1, computeSeconds: 2.5, activeUsers: 1 });
    expect(row(t.world.labA, '2026-03')).toMatchObject({ studies: 0, fields: 0, storedBytes: 0, runs: 0, computeSeconds: 0, activeUsers: 0 });
    expect(fileBytes).toBeGreaterThan(0);
  });

  it('the CSV holds the same rows', async () => {
    const json = UsageResponse.parse((await mgr.get('/api/usage?from=2026-01&to=2026-02')).body);
    const res = await mgr.get('/api/usage.csv?from=2026-01&to=2026-02');
    expect(res.headers['content-disposition']).toContain('syntopy-usage-2026-01-to-2026-02.csv');
    const [head, ...lines] = res.text.split('\r\n').filter(Boolean);
    expect(head).toBe(USAGE_CSV_COLUMNS.join(','));
    expect(lines).toEqual(json.rows.map((r) => USAGE_CSV_COLUMNS.map((c) => String(r[c])).join(',')));
  });

  it('defaults to the last six months and refuses bad months with a 400 quoting them; others get 403', async () => {
    const now = new Date().toISOString().slice(0, 7);
    const d = UsageResponse.parse((await mgr.get('/api/usage')).body);
    expect(d.to).toBe(now);
    expect(new Set(d.rows.map((r) => r.month)).size).toBe(6);
    const bad = await mgr.get('/api/usage?from=2026-13');
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/"2026-13"/);
    const back = await mgr.get('/api/usage?from=2026-05&to=2026-01');
    expect(back.status).toBe(400);
    expect(back.body.error).toMatch(/from \(2026-05\) must not be after to \(2026-01\)/);
    expect((await mgr.get('/api/usage?from=2020-01&to=2026-01')).status).toBe(400);
    expect((await (await t.login('biologist')).get('/api/usage')).status).toBe(403);
  });
});
