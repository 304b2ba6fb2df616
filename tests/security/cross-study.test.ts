/**
 * References to another lab's data hidden in bodies and query strings (the path-based matrix cannot see
 * these): run ids, condition / coverslip / field ids in filters, report sources, reorder lists, run scopes.
 * A lab-A biologist naming lab-B ids gets a 4xx or an empty result — never a row of study B.
 * (OWASP ASVS v4.0.3 §4.2.1, insecure direct object references; expected codes: common practice.)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { coverslips, measurements, recipes, runs } from '../../server/db/schema.js';
import { addField, gridCells, syntheticPair } from '../runs/helpers.js';
import { buildLabA, type LabAEntities } from './world.js';

let t: TestApp;
let e: LabAEntities;
let bio: Awaited<ReturnType<TestApp['login']>>;
const B = { conditionId: 0, coverslipId: 0, fieldId: 0, cellIds: [] as number[], runId: 0, recipeId: 0 };

beforeAll(async () => {
  t = await makeTestApp();
  e = await buildLabA(t);
  // study B (lab B): one field with cells and a finished run with measurements
  B.coverslipId = t.world.coverslipB;
  B.conditionId = t.ctx.db.select().from(coverslips).where(eq(coverslips.id, B.coverslipId)).get()!.conditionId;
  const [a, b] = syntheticPair(48, 48, 7);
  const f = await addField(t.ctx, B.coverslipId, { name: 'secret B field', width: 48, height: 48, ch1: a, ch2: b, cells: gridCells(48, 48, 4).map((c, i) => ({ ...c, name: `secret B cell ${i}` })) });
  B.fieldId = f.fieldId;
  B.cellIds = f.cellIds;
  B.recipeId = t.ctx.db.insert(recipes).values({ name: 'B recipe', version: 1, status: 'approved', settings: {} }).returning().get().id;
  B.runId = t.ctx.db.insert(runs).values({ studyId: t.world.studyB, recipeId: B.recipeId, scopeKind: 'study', scopeId: t.world.studyB, status: 'done' }).returning().get().id;
  for (const cellId of B.cellIds) t.ctx.db.insert(measurements).values({ runId: B.runId, cellId, fieldId: B.fieldId, pixels: 100, pearson: 0.99, provenance: {} }).run();
  bio = await t.login('biologist');
}, 120_000);
afterAll(() => t?.close());

const noB = (body: unknown) => expect(JSON.stringify(body)).not.toMatch(/secret B/);

describe('lab-B ids in lab-A requests', () => {
  it('the Cell table, its CSV and Compare refuse a run of study B as the source', async () => {
    for (const url of [`/api/studies/${e.studyId}/cell-table`, `/api/studies/${e.studyId}/compare`, `/api/studies/${e.studyId}/cells.csv`]) {
      const res = await bio.get(url).query({ runId: B.runId });
      expect(res.status, url).toBe(400);
      noB(res.body ?? res.text);
    }
  });

  it('filters naming study-B conditions, coverslips or fields return nothing of study B', async () => {
    for (const [p, v] of [['conditionId', B.conditionId], ['coverslipId', B.coverslipId], ['fieldId', B.fieldId]] as const) {
      const grid = await bio.get(`/api/studies/${e.studyId}/cell-table`).query({ [p]: v });
      expect([200, 400]).toContain(grid.status);
      if (grid.status === 200) expect(grid.body.total, p).toBe(0);
      noB(grid.body);
      const csv = await bio.get(`/api/studies/${e.studyId}/cells.csv`).query({ [p]: v });
      noB(csv.text);
    }
    const cmp = await bio.get(`/api/studies/${e.studyId}/compare`).query({ conditionIds: String(B.conditionId) });
    expect(cmp.status).toBeGreaterThanOrEqual(400);
    noB(cmp.body);
  });

  it('a report cannot be built from study-B runs or conditions', async () => {
    const byRun = await bio.post(`/api/studies/${e.studyId}/reports`).send({ title: 'steal', coefficients: ['pearson'], runId: B.runId });
    expect(byRun.status).toBe(400);
    const byCond = await bio.post(`/api/studies/${e.studyId}/reports`).send({ title: 'steal', coefficients: ['pearson'], conditionIds: [B.conditionId] });
    expect(byCond.status).toBe(400);
    noB([byRun.body, byCond.body]);
  });

  it('reorder cannot move a study-B coverslip into study A', async () => {
    const res = await bio.post(`/api/studies/${e.studyId}/reorder`).send({ coverslips: [{ conditionId: e.conditionId, coverslipIds: [B.coverslipId] }] });
    expect(res.status).toBe(400);
    expect(t.ctx.db.select().from(coverslips).where(eq(coverslips.id, B.coverslipId)).get()!.conditionId).toBe(B.conditionId);
  });

  it('a run cannot be started on study-B scopes, and study-B runs are not listed', async () => {
    for (const scope of [{ kind: 'study', id: t.world.studyB }, { kind: 'condition', id: B.conditionId }, { kind: 'coverslip', id: B.coverslipId }, { kind: 'field', id: B.fieldId }]) {
      const res = await bio.post('/api/runs').send({ recipeId: e.recipeId, scope });
      expect(res.status, JSON.stringify(scope)).toBe(404);
    }
    expect((await bio.get('/api/runs').query({ studyId: t.world.studyB })).status).toBe(404);
    const mine = await bio.get('/api/runs');
    expect(mine.status).toBe(200);
    expect(mine.body.runs.map((r: { id: number }) => r.id)).not.toContain(B.runId);
    const studies = await bio.get('/api/studies');
    expect(studies.body.studies.map((s: { id: number }) => s.id)).not.toContain(t.world.studyB);
  });

  it('cells of study B cannot be excluded, renamed or read through their ids', async () => {
    const id = B.cellIds[0];
    expect((await bio.post(`/api/cells/${id}/exclusion`).send({ reason: 'x' })).status).toBe(404);
    expect((await bio.patch(`/api/cells/${id}`).send({ name: 'mine now' })).status).toBe(404);
    expect((await bio.get(`/api/cells/${id}/exclusion-history`)).status).toBe(404);
    expect((await bio.get(`/api/fields/${B.fieldId}/cells`)).status).toBe(404);
    expect((await bio.get(`/api/fields/${B.fieldId}/preview.png`)).status).toBe(404);
  });
});
