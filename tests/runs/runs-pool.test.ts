/**
 * Runs through the in-process worker pool: numbers equal direct engine calls on the same pixels and outlines,
 * provenance and provisional marking, a failing field does not stop the others, permissions.
 * Reference: shared/analysis measureRegion (the engine, itself checked against SciPy / R in tests/analysis).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { measurements, files } from '../../server/db/schema.js';
import { measureRegion } from '../../shared/analysis/index.js';
import { cellIndices } from '../../shared/schemas/cells.js';
import { addField, gridCells, syntheticPair, waitForRun } from './helpers.js';

let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent, mgr: Agent, col: Agent, outsider: Agent;
const W = 96, H = 80;
const fieldsA: { fieldId: number; cellIds: number[]; ch1: Uint16Array; ch2: Uint16Array; cells: ReturnType<typeof gridCells> }[] = [];

async function approvedRecipe(settings: object, name = 'Pool recipe') {
  const r = (await mic.post('/api/recipes').send({ name, settings })).body;
  await mic.post(`/api/recipes/${r.id}/submit`);
  await mgr.post(`/api/recipes/${r.id}/approve`);
  return r.id as number;
}

beforeAll(async () => {
  t = await makeTestApp({ WORKERS: '2' });
  [mic, mgr, col, outsider] = await Promise.all([t.login('microscopist'), t.login('manager'), t.login('collaborator'), t.login('outsider')]);
  for (let i = 0; i < 3; i++) {
    const [ch1, ch2] = syntheticPair(W, H, 10 + i);
    const cells = gridCells(W, H, 6);
    cells.push({ role: 'background', geometry: { kind: 'rect', x: 0, y: 0, width: 6, height: 6 } });
    const f = await addField(t.ctx, t.world.coverslipA, { name: `F${i + 1}`, width: W, height: H, ch1, ch2, cells, split: i === 1 });
    fieldsA.push({ fieldId: f.fieldId, cellIds: f.cellIds, ch1, ch2, cells });
  }
});
afterAll(() => t.close());

describe('a run over a coverslip', () => {
  it('writes one measurement per cell, equal to direct engine calls, with provenance', async () => {
    const settings = { threshold: { method: 'costes' }, randomization: { enabled: true, count: 25, blockSize: { kind: 'pixels', pixels: 4 } }, seed: 7, minCellPixels: 5 };
    const recipeId = await approvedRecipe(settings);
    const res = await mic.post('/api/runs').send({ recipeId, scope: { kind: 'coverslip', id: t.world.coverslipA } });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body).toMatchObject({ provisional: false, fieldsTotal: 3, scope: { kind: 'coverslip', name: 'control / CS1' } });
    const run = (await waitForRun(async () => (await mic.get(`/api/runs/${res.body.id}`)).body)) as Record<string, any>;
    expect(run.status, JSON.stringify(run.fields)).toBe('done');
    expect(run.fieldsDone).toBe(3);
    expect(run.measurements).toBe(18);
    expect(run.fields.map((f: { measurements: number }) => f.measurements)).toEqual([6, 6, 6]);

    const rows = t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.id)).all();
    expect(rows.length).toBe(18);
    expect(new Set(rows.map((r) => r.cellId)).size).toBe(18);
    for (const f of fieldsA) {
      for (const [k, cellId] of f.cellIds.entries()) {
        if (f.cells[k].role === 'background') {
          expect(rows.find((r) => r.cellId === cellId)).toBeUndefined();
          continue;
        }
        const row = rows.find((r) => r.cellId === cellId)!;
        const idx = cellIndices(f.cells[k].geometry, W, H);
        const ref = measureRegion(f.ch1, f.ch2, idx, {
          width: W,
          height: H,
          threshold: { method: 'costes', costes: { regression: 'orthogonal', belowSet: 'either', stopAt: 0 } },
          randomization: { count: 25, blockSize: 4, seed: 7 },
        });
        expect(row.pixels).toBe(ref.pixels);
        for (const key of ['pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'dcorPValue', 'mandersM1', 'mandersM2', 'overlap', 'k1', 'k2', 'icq', 'randomizationP'] as const)
          expect(row[key], key).toBe(ref[key]);
        expect(row.threshold1).toBe(ref.thresholds.ch1);
        expect(row.threshold2).toBe(ref.thresholds.ch2);
        expect(row.provisional).toBe(false);
        const p = row.provenance as Record<string, any>;
        expect(p).toMatchObject({ recipeId, recipeVersion: 1, seed: 7, z: 'slice 0', randomizationBlock: 4, randomizationCount: 25 });
        expect(p.engineVersion).toMatch(/^syntopy-analysis\//);
        expect(p.inputSha256).toHaveLength(2);
        expect(p.inputSha256[0]).toMatch(/^[0-9a-f]{64}$/);
        expect(typeof p.computedAt).toBe('string');
      }
    }
  });

  it('a draft recipe makes a provisional run; background region subtraction is applied', async () => {
    const r = (await mic.post('/api/recipes').send({ name: 'Draft bg', settings: { background: { method: 'region' }, threshold: { method: 'otsu' }, coefficients: ['pearson', 'manders'] } })).body;
    const res = await mic.post('/api/runs').send({ recipeId: r.id, scope: { kind: 'field', id: fieldsA[0].fieldId } });
    expect(res.body.provisional).toBe(true);
    const run = (await waitForRun(async () => (await mic.get(`/api/runs/${res.body.id}`)).body)) as Record<string, any>;
    expect(run.status).toBe('done');
    const rows = t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.id)).all();
    expect(rows.length).toBe(6);
    const f = fieldsA[0];
    // background = mean of the 6×6 corner (rect cell) per channel, computed here independently
    let b1 = 0, b2 = 0;
    for (let y = 0; y < 6; y++) for (let x = 0; x < 6; x++) (b1 += f.ch1[y * W + x]), (b2 += f.ch2[y * W + x]);
    b1 /= 36;
    b2 /= 36;
    for (const row of rows) {
      expect(row.provisional).toBe(true);
      expect(row.background1).toBeCloseTo(b1, 10);
      expect(row.background2).toBeCloseTo(b2, 10);
      expect(row.spearman).toBeNull(); // not chosen
      expect(row.kendallTauB).toBeNull();
      expect(row.pearson).not.toBeNull();
      expect((row.provenance as { recipeStatus: string }).recipeStatus).toBe('draft');
    }
    const k = f.cellIds.indexOf(rows[0].cellId);
    const idx = cellIndices(f.cells[k].geometry, W, H);
    const s1 = Float64Array.from(f.ch1, (v) => Math.max(0, v - b1));
    const s2 = Float64Array.from(f.ch2, (v) => Math.max(0, v - b2));
    const ref = measureRegion(s1, s2, idx, { threshold: { method: 'otsu' } });
    expect(rows[0].pearson).toBe(ref.pearson);
    expect(rows[0].mandersM1).toBe(ref.mandersM1);
  });

  it('a field that fails records its message and the others go on (partial)', async () => {
    const recipeId = await approvedRecipe({ threshold: { method: 'none' } }, 'Partial');
    // make the 2nd field's channel-2 file vanish from the store
    const f2 = fieldsA[1];
    const { fields } = await import('../../server/db/schema.js');
    const row = t.ctx.db.select().from(fields).where(eq(fields.id, f2.fieldId)).get()!;
    const key = t.ctx.db.select().from(files).where(eq(files.sha256, row.file2Sha)).get()!.storeKey;
    const saved = await t.ctx.store.get(key);
    await t.ctx.store.delete(key);
    try {
      const res = await mic.post('/api/runs').send({ recipeId, scope: { kind: 'condition', id: t.world.conditionA } });
      const run = (await waitForRun(async () => (await mic.get(`/api/runs/${res.body.id}`)).body)) as Record<string, any>;
      expect(run.status).toBe('partial');
      expect(run.fieldsFailed).toBe(1);
      const failed = run.fields.find((x: { fieldId: number }) => x.fieldId === f2.fieldId);
      expect(failed.status).toBe('failed');
      expect(failed.error).toMatch(/./);
      expect(run.measurements).toBe(12);
      expect(run.error).toMatch(/1 of 3 fields failed/);
    } finally {
      const fs = await import('node:fs');
      const tmp = `${t.dataDir}/restore.tmp`;
      fs.writeFileSync(tmp, saved);
      await t.ctx.store.putFile(key, tmp);
    }
  });
});

describe('run permissions and refusals', () => {
  it('a collaborator cannot start runs; an outsider cannot see them; retired recipes refused', async () => {
    const recipeId = await approvedRecipe({}, 'Perm');
    expect((await col.post('/api/runs').send({ recipeId, scope: { kind: 'study', id: t.world.studyA } })).status).toBe(403);
    expect((await outsider.post('/api/runs').send({ recipeId, scope: { kind: 'study', id: t.world.studyA } })).status).toBe(404);
    const list = (await mic.get(`/api/runs?studyId=${t.world.studyA}`)).body.runs;
    expect(list.length).toBeGreaterThan(0);
    expect((await col.get(`/api/runs/${list[0].id}`)).status).toBe(200);
    expect((await outsider.get(`/api/runs/${list[0].id}`)).status).toBe(404);
    expect((await outsider.get('/api/runs')).body.runs).toEqual([]);
    await mgr.post(`/api/recipes/${recipeId}/retire`);
    expect((await mic.post('/api/runs').send({ recipeId, scope: { kind: 'study', id: t.world.studyA } })).status).toBe(409);
    expect((await mic.post('/api/runs').send({ recipeId: 99999, scope: { kind: 'study', id: t.world.studyA } })).status).toBe(404);
    expect((await mic.post('/api/runs').send({ recipeId, scope: { kind: 'planet', id: 1 } })).status).toBe(400);
  });
});
