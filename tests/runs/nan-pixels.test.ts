/**
 * NaN pixels in float images, through the API end to end: a float32 field (tests/fixtures/analysis/f32nan.tif,
 * 21 NaN pixels, some inside cells, some in one channel only) is uploaded, outlined and run with field-level
 * Otsu thresholds — without background subtraction, with a constant background and with a background region
 * that holds a NaN pixel. Every stored pixel count, mean, Pearson's r and threshold must equal NumPy/SciPy on
 * the pixels left after dropping those with NaN in either channel (tests/fixtures/analysis/generate.py,
 * `nanField`), to 1e-9 relative; a cell that falls below the smallest-cell size only because of its NaN
 * pixels gets no coefficients and takes no part in the field thresholds; the field facts skip NaN; the report's
 * methods text says how many pixels were left out.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { UploadResponse } from '../../shared/schemas/fields.js';
import { GridResponse } from '../../shared/schemas/cell-table.js';
import { MeasurementProvenance } from '../../shared/schemas/runs.js';
import { measurements } from '../../server/db/schema.js';
import { eq } from 'drizzle-orm';
import { waitForRun } from './helpers.js';

const DIR = path.join(import.meta.dirname, '../fixtures/analysis');
type CellRef = { pixels: number; mean1: number | null; mean2: number | null; pearson: number | null };
const ref = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8')).nanField as {
  width: number;
  height: number;
  cells: { name: string; rect: [number, number, number, number] }[];
  background: { name: string; rect: [number, number, number, number] };
  minCellPixels: number;
  nanPixels: Record<string, number>;
  facts: Record<'ch1' | 'ch2', { min: number; max: number; mean: number; nan: number }>;
  variants: { background: 'none' | 'constant' | 'region'; b: [number, number] | null; cells: Record<string, CellRef>; otsu: [number, number] }[];
};

const rel = (a: number | null, b: number | null, what: string) => {
  if (b === null) return expect(a, what).toBeNull();
  expect(a, what).not.toBeNull();
  expect(Math.abs((a as number) - b) / Math.max(Math.abs(b), 1e-300), `${what}: ${a} vs ${b}`).toBeLessThan(1e-9);
};

let t: TestApp;
let mic: Awaited<ReturnType<TestApp['login']>>;
let fieldId: number;
const cellIds: Record<string, number> = {};
beforeAll(async () => {
  t = await makeTestApp();
  mic = await t.login('microscopist');
});
afterAll(() => t.close());

describe('NaN pixels in a float32 field', () => {
  it('upload: facts skip NaN (min, max and mean over the pixels with a value)', async () => {
    const res = await mic
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ name: 'float with NaN', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]))
      .attach('files', path.join(DIR, 'f32nan.tif'));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const r = UploadResponse.parse(res.body).results[0];
    if (!r.ok) throw new Error(r.error);
    fieldId = r.field.id;
    expect(r.field).toMatchObject({ width: ref.width, height: ref.height, sampleFormat: 'float', bitDepth: 32 });
    for (const k of ['ch1', 'ch2'] as const) {
      expect(ref.facts[k].nan).toBeGreaterThan(0);
      rel(r.field.facts[k].min, ref.facts[k].min, `${k} min`);
      rel(r.field.facts[k].max, ref.facts[k].max, `${k} max`);
      rel(r.field.facts[k].mean, ref.facts[k].mean, `${k} mean`);
    }
    for (const c of [...ref.cells.map((c) => ({ ...c, role: 'cell' })), { ...ref.background, role: 'background' }]) {
      const [x, y, width, height] = c.rect;
      const cr = await mic.post(`/api/fields/${fieldId}/cells`).send({ name: c.name, role: c.role, geometry: { kind: 'rect', x, y, width, height } });
      expect(cr.status, JSON.stringify(cr.body)).toBe(201);
      cellIds[c.name] = cr.body.cell.id;
    }
  });

  it('upload: a channel with no value at all (every pixel NaN) is refused with a message', async () => {
    const res = await mic
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ name: 'empty channel', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]))
      .attach('files', path.join(DIR, 'f32nan_empty.tif'));
    const r = UploadResponse.parse(res.body).results[0];
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toMatch(/channel 2 holds no intensity: all 48 of its pixels are NaN/);
  });

  for (const v of ref.variants) {
    it(`run with field Otsu thresholds, background ${v.background}: counts, means, Pearson and thresholds over the NaN-dropped pixels`, async () => {
      const background = v.background === 'constant' ? { method: 'constant', ch1: v.b![0], ch2: v.b![1] } : { method: v.background };
      const recipe = await mic
        .post('/api/recipes')
        .send({ name: `NaN ${v.background}`, settings: { background, threshold: { method: 'otsu' }, thresholdScope: 'field', minCellPixels: ref.minCellPixels, coefficients: ['pearson'] } });
      expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
      const run = await mic.post('/api/runs').send({ recipeId: recipe.body.id, scope: { kind: 'field', id: fieldId } });
      expect(run.status, JSON.stringify(run.body)).toBe(201);
      const done = (await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body)) as { status: string };
      expect(done.status, JSON.stringify(done)).toBe('done');

      const grid = await mic.get(`/api/studies/${t.world.studyA}/cell-table`).query({ runId: run.body.id, pageSize: 500 });
      expect(grid.status, JSON.stringify(grid.body)).toBe(200);
      const rows = GridResponse.parse(grid.body).rows;
      expect(rows.map((r) => r.cell).sort()).toEqual(ref.cells.map((c) => c.name).sort());
      const prov = new Map(
        t.ctx.db
          .select()
          .from(measurements)
          .where(eq(measurements.runId, run.body.id))
          .all()
          .map((m) => [m.cellId, MeasurementProvenance.parse(m.provenance)]),
      );
      for (const row of rows) {
        const want = v.cells[row.cell];
        const what = `${v.background} cell ${row.cell}`;
        expect(row.pixels, `${what} pixels`).toBe(want.pixels);
        expect(prov.get(row.cellId)!.nanPixels, `${what} NaN pixels recorded`).toBe(ref.nanPixels[row.cell]);
        rel(row.mean1, want.mean1, `${what} mean1`);
        rel(row.mean2, want.mean2, `${what} mean2`);
        rel(row.pearson, want.pearson, `${what} pearson`);
        if (want.pearson === null) {
          // below the smallest-cell size only because of its NaN pixels
          expect(want.pixels + ref.nanPixels[row.cell]).toBeGreaterThanOrEqual(ref.minCellPixels);
          expect(row.threshold1).toBeNull();
          continue;
        }
        rel(row.threshold1, v.otsu[0], `${what} field Otsu ch1`);
        rel(row.threshold2, v.otsu[1], `${what} field Otsu ch2`);
        if (v.b) {
          rel(row.background1, v.b[0], `${what} background ch1`);
          rel(row.background2, v.b[1], `${what} background ch2`);
        }
      }
    });
  }

  it('the methods paragraph of a report says how many pixels were left out as NaN', async () => {
    const bio = await t.login('biologist');
    const res = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'NaN', coefficients: ['pearson'] });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const measuredCells = ref.cells.filter((c) => ref.nanPixels[c.name] > 0);
    const total = measuredCells.reduce((s, c) => s + ref.nanPixels[c.name], 0);
    expect(res.body.snapshot.nanPixels).toEqual({ pixels: total, cells: measuredCells.length });
    expect(res.body.snapshot.methods).toContain(`${total} pixels in ${measuredCells.length} cells had no value (NaN) in at least one channel`);
    // the report's cell scatter counts only pixels with a value in both channels
    expect(res.body.snapshot.scatters.length).toBeGreaterThan(0);
    for (const sc of res.body.snapshot.scatters as { cellName: string; pixels: number; counts: number[] }[]) {
      const want = ref.variants[0].cells[sc.cellName].pixels;
      expect(sc.pixels, sc.cellName).toBe(want);
      expect(sc.counts.reduce((a, b) => a + b, 0), sc.cellName).toBe(want);
    }
  });
});
