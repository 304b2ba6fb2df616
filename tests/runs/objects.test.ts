/**
 * Runs with the recipe's objects section on: the stored object measures and spots equal `measureObjects` /
 * `analyzeObjects` (shared/analysis/objects.ts, itself checked against skimage, SciPy and astropy in
 * tests/analysis) on the same pixels and cell outlines; the spots endpoint and its permissions; µm settings
 * converted with the field's pixel size. Planted spot positions: our own synthetic field (common practice).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { measurements, spots } from '../../server/db/schema.js';
import { analyzeObjects, measureObjects, objectMeasures, OBJECT_MEASURE_KEYS, Xoshiro128 } from '../../shared/analysis/index.js';
import { cellIndices } from '../../shared/schemas/cells.js';
import { FieldSpotsResponse } from '../../shared/schemas/runs.js';
import { Comparison } from '../../shared/schemas/compare.js';
import type { CellGeometry } from '../../server/db/schema.js';
import { addField, waitForRun } from './helpers.js';

let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent, mgr: Agent, col: Agent, outsider: Agent;
const W = 96, H = 64;
const PIXEL_UM = 0.1;
const SIGMA = 1.5;

/** Gaussian spots of width σ on a flat background with seeded Poisson-like noise (normal approximation). */
function spotField(points: [number, number][], amplitude: number, seed: number): Uint16Array {
  const rng = new Xoshiro128(seed);
  const out = new Uint16Array(W * H);
  for (let y = 0; y < H; y++)
    for (let x = 0; x < W; x++) {
      let v = 100;
      for (const [px, py] of points) v += amplitude * Math.exp(-((x + 0.5 - px) ** 2 + (y + 0.5 - py) ** 2) / (2 * SIGMA * SIGMA));
      // Box–Muller normal noise with the variance of Poisson counts at this mean
      const g = Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
      out[y * W + x] = Math.max(0, Math.round(v + Math.sqrt(v) * g));
    }
  return out;
}

// channel 1: 6 spots in the left cell, 3 in the right; channel 2: partners 0.8 px away for 4 of the left ones, plus 2 loners
const left1: [number, number][] = [[10.3, 10.6], [24.5, 12.2], [12.7, 30.1], [30.2, 28.8], [20.4, 48.3], [36.6, 50.5]];
const right1: [number, number][] = [[62.2, 14.4], [80.5, 30.3], [70.1, 50.7]];
const ch2Points: [number, number][] = [...left1.slice(0, 4).map(([x, y]): [number, number] => [x + 0.8, y]), [40.4, 8.2], [8.6, 56.1], [84.4, 50.2]];
const ch1 = spotField([...left1, ...right1], 600, 3);
const ch2 = spotField(ch2Points, 600, 4);
const cellShapes: CellGeometry[] = [
  { kind: 'rect', x: 2, y: 2, width: 44, height: 60 },
  { kind: 'ellipse', cx: 71, cy: 32, rx: 22, ry: 29 },
];
let fieldId: number;
let cellIds: number[];

async function approvedRecipe(settings: object, name: string) {
  const r = (await mic.post('/api/recipes').send({ name, settings })).body;
  await mic.post(`/api/recipes/${r.id}/submit`);
  await mgr.post(`/api/recipes/${r.id}/approve`);
  return r.id as number;
}

async function runOnField(recipeId: number) {
  const res = await mic.post('/api/runs').send({ recipeId, scope: { kind: 'field', id: fieldId } });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const run = await waitForRun(async () => (await mic.get(`/api/runs/${res.body.id}`)).body);
  expect(run.status, JSON.stringify(run)).toBe('done');
  return res.body.id as number;
}

beforeAll(async () => {
  t = await makeTestApp({ WORKERS: '1' });
  [mic, mgr, col, outsider] = await Promise.all([t.login('microscopist'), t.login('manager'), t.login('collaborator'), t.login('outsider')]);
  const f = await addField(t.ctx, t.world.coverslipA, { name: 'Spots', width: W, height: H, ch1, ch2, cells: cellShapes.map((geometry) => ({ geometry })), pixelSizeUm: PIXEL_UM });
  fieldId = f.fieldId;
  cellIds = f.cellIds;
});
afterAll(() => t.close());

describe('a run with the objects section on', () => {
  let runId: number;
  const objects = { enabled: true, scale: { kind: 'pixels', sigmaPx: SIGMA }, k: 5, pairDistance: { kind: 'um', um: 0.2 }, placements: 199, seed: 5 };
  beforeAll(async () => {
    runId = await runOnField(await approvedRecipe({ threshold: { method: 'none' }, objects }, 'Spots on'));
  });

  it('stores every object measure equal to measureObjects on the same pixels (d = 0.2 µm / 0.1 µm per px = 2 px)', () => {
    const rows = t.ctx.db.select().from(measurements).where(eq(measurements.runId, runId)).all();
    expect(rows.length).toBe(2);
    for (const [k, cellId] of cellIds.entries()) {
      const row = rows.find((r) => r.cellId === cellId)!;
      const idx = cellIndices(cellShapes[k], W, H);
      const ref = objectMeasures(measureObjects(ch1, ch2, W, H, idx, { spotSigma: SIGMA, spotK: 5, pairDistance: 2, placements: 199, seed: 5 }));
      for (const key of OBJECT_MEASURE_KEYS) expect(row[key], `cell ${k + 1} ${key}`).toBe(ref[key]);
      expect(row.provenance).toMatchObject({ objects: { sigmaPx: SIGMA, k: 5, minSeparationPx: 2 * SIGMA, pairDistancePx: 2, placements: 199, seed: 5 } });
    }
    // the planted spots are found (common practice: the synthetic field's own truth, SNR ≈ 60)
    const left = rows.find((r) => r.cellId === cellIds[0])!;
    expect(left.spotCount1).toBe(6);
    expect(left.spotCount2).toBe(6);
    expect(left.spotPaired1).toBeCloseTo(4 / 6, 12);
    expect(left.spotPaired2).toBeCloseTo(4 / 6, 12);
    expect(left.spotMutualPairs).toBe(4);
    expect(left.spotPValue).toBeGreaterThanOrEqual(1 / 200);
    expect(left.spotPValue).toBeLessThan(0.05);
    const right = rows.find((r) => r.cellId === cellIds[1])!;
    expect(right.spotCount1).toBe(3);
    expect(right.spotCount2).toBe(1);
    expect(right.spotPaired1).toBe(0);
    // pixel measures are still there
    expect(left.pearson).not.toBeNull();
  });

  it('stores the detected spots (centre, peak, integrated) of each cell and channel, as analyzeObjects finds them', async () => {
    const res = await col.get(`/api/runs/${runId}/fields/${fieldId}/spots`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const body = FieldSpotsResponse.parse(res.body);
    expect(body).toMatchObject({ runId, fieldId, settings: { sigmaPx: SIGMA, k: 5, pairDistancePx: 2, placements: 199, seed: 5 } });
    for (const [k, cellId] of cellIds.entries()) {
      const a = analyzeObjects(ch1, ch2, W, H, cellIndices(cellShapes[k], W, H), { spotSigma: SIGMA, spotK: 5, pairDistance: 2, placements: 199, seed: 5 });
      for (const [channel, det] of [[1, a.detection1], [2, a.detection2]] as const) {
        const got = body.spots.filter((s) => s.cellId === cellId && s.channel === channel);
        expect(got.map(({ x, y, peak, integrated }) => ({ x, y, peak, integrated })), `cell ${k + 1} channel ${channel}`).toEqual(
          det!.spots.map(({ x, y, peak, integrated }) => ({ x, y, peak, integrated })),
        );
      }
      // the same centres as the measures' spot lists
      expect(body.spots.filter((s) => s.cellId === cellId && s.channel === 1).map((s) => [s.x, s.y])).toEqual(a.result.spots1);
    }
    // every planted channel-1 spot has a stored centre within 0.3 px (common practice)
    const stored1 = body.spots.filter((s) => s.channel === 1);
    for (const [px, py] of [...left1, ...right1]) expect(Math.min(...stored1.map((s) => Math.hypot(s.x - px, s.y - py)))).toBeLessThan(0.3);
    expect(t.ctx.db.select().from(spots).where(and(eq(spots.runId, runId), eq(spots.fieldId, fieldId))).all().length).toBe(body.spots.length);
  });

  it('the spots endpoint is read like the run: 404 for outsiders and for a field outside the run, 400 for a bad id', async () => {
    expect((await outsider.get(`/api/runs/${runId}/fields/${fieldId}/spots`)).status).toBe(404);
    const other = await mic.get(`/api/runs/${runId}/fields/${fieldId + 999}/spots`);
    expect(other.status).toBe(404);
    expect(other.body.error).toContain(String(fieldId + 999));
    const bad = await mic.get(`/api/runs/${runId}/fields/x1/spots`);
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/fieldId/);
    expect((await mic.get(`/api/runs/${runId + 999}/fields/${fieldId}/spots`)).status).toBe(404);
  });

  it('the Cell table offers the object measures from the registry', async () => {
    const res = await mic.get(`/api/studies/${t.world.studyA}/cell-table?fieldId=${fieldId}&sort=cell`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const rows = res.body.rows as Record<string, unknown>[];
    expect(rows.map((r) => r.spotCount1)).toEqual([6, 3]);
    expect(rows[0].spotPaired1).toBeCloseTo(4 / 6, 12);
  });

  it('Compare averages a paired fraction as a plain mean of the cells (no Fisher z)', async () => {
    const res = await mic.get(`/api/studies/${t.world.studyA}/compare?coefficient=spotPaired1&resamples=200`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const c = Comparison.parse(res.body);
    expect(c.averaging).toBe('arithmetic');
    expect(c.source.recipeName).toBe('Spots on');
    // the one coverslip: the plain mean of its two cells, 4/6 and 0/3
    expect(c.coverslips.map((x) => [x.nCells, x.mean])).toEqual([[2, (4 / 6 + 0) / 2]]);
  });
});

describe('a run with the objects section off', () => {
  it('stores no spots and null object measures; the endpoint says so with settings null', async () => {
    const runId = await runOnField(await approvedRecipe({ threshold: { method: 'none' } }, 'Spots off'));
    const rows = t.ctx.db.select().from(measurements).where(eq(measurements.runId, runId)).all();
    expect(rows.length).toBe(2);
    for (const r of rows) for (const key of OBJECT_MEASURE_KEYS) expect(r[key], key).toBeNull();
    const res = await mic.get(`/api/runs/${runId}/fields/${fieldId}/spots`);
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ runId, fieldId, settings: null, spots: [] });
  });

  it('a µm setting on a field without pixel size fails that field with a one-line reason', async () => {
    const g = await addField(t.ctx, t.world.coverslipA, { name: 'No size', width: W, height: H, ch1, ch2, cells: [{ geometry: cellShapes[0] }], pixelSizeUm: null });
    const recipeId = await approvedRecipe({ objects: { enabled: true, pairDistance: { kind: 'um', um: 0.2 } } }, 'Spots µm');
    const res = await mic.post('/api/runs').send({ recipeId, scope: { kind: 'field', id: g.fieldId } });
    const run = await waitForRun(async () => (await mic.get(`/api/runs/${res.body.id}`)).body);
    expect(run.status).toBe('failed');
    expect((run as unknown as { fields: { error: string }[] }).fields[0].error).toMatch(/pair distance is given in µm.*pixel size/);
  });
});
