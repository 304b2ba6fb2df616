/**
 * Runs that apply an instrument's approved calibration (issue 15), through the API: a field is given its
 * instrument, a recipe asks for the approved calibration, and each measurement equals the engine on channels
 * corrected independently (alignChannel, then unmixChannels: identity check, common practice) and records the
 * calibration in its provenance. A field without an instrument, or whose instrument has no approved
 * calibration, fails with the reason instead of being measured uncorrected.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { measurements } from '../../server/db/schema.js';
import path from 'node:path';
import { FieldSummary, UploadResponse } from '../../shared/schemas/fields.js';
import { MeasurementProvenance } from '../../shared/schemas/runs.js';
import { alignChannel, measureRegion, unmixChannels } from '../../shared/analysis/index.js';
import { cellIndices } from '../../shared/schemas/cells.js';
import { addField, syntheticPair, waitForRun } from './helpers.js';

const W = 64, H = 48;
const [A, B] = syntheticPair(W, H, 5);
const geometry = { kind: 'rect' as const, x: 30, y: 0, width: 34, height: 30 };
let t: TestApp;
let fieldId: number;
let cellId: number;
let instrumentId: number;
let calibrationId: number;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent, fm: Agent;

beforeAll(async () => {
  t = await makeTestApp();
  mic = await t.login('microscopist');
  fm = await t.login('manager');
  const f = await addField(t.ctx, t.world.coverslipA, { name: 'beads', width: W, height: H, ch1: A, ch2: B, cells: [{ geometry }] });
  fieldId = f.fieldId;
  cellId = f.cellIds[0];
  instrumentId = (await fm.post('/api/instruments').send({ name: 'Confocal 1', objective: '63×', channel1: 'GFP', channel2: 'RFP' })).body.id;
  calibrationId = (await mic.post(`/api/instruments/${instrumentId}/calibrations`).send({ dx: 1.5, dy: -0.75, a21: 0.1, a12: 0.04 })).body.id;
});
afterAll(() => t?.close());

async function runWith(settings: Record<string, unknown>, field = fieldId) {
  const recipe = await mic.post('/api/recipes').send({ name: `calibrated ${Math.random()}`, settings: { threshold: { method: 'none' }, coefficients: ['pearson', 'spearman', 'manders'], ...settings } });
  expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
  const run = await mic.post('/api/runs').send({ recipeId: recipe.body.id, scope: { kind: 'field', id: field } });
  expect(run.status, JSON.stringify(run.body)).toBe(201);
  await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body);
  return (await mic.get(`/api/runs/${run.body.id}`)).body as { id: number; status: string; fields: { status: string; error: string | null }[] };
}

describe('runs with the approved calibration', () => {
  it("a field is given its instrument (edit_images; an unknown instrument is 404; collaborators 403)", async () => {
    const res = await mic.put(`/api/fields/${fieldId}/instrument`).send({ instrumentId });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(FieldSummary.parse(res.body).instrumentId).toBe(instrumentId);
    expect((await mic.put(`/api/fields/${fieldId}/instrument`).send({ instrumentId: 999999 })).body.error).toMatch(/no instrument with id 999999/);
    expect((await (await t.login('collaborator')).put(`/api/fields/${fieldId}/instrument`).send({ instrumentId: null })).status).toBe(403);
    expect((await mic.put(`/api/fields/${fieldId}/instrument`).send({ instrumentId: 'x' })).status).toBe(400);
  });

  it('the instrument can be given at upload, per field of the plan; an unknown one refuses the upload', async () => {
    const pair = path.join(import.meta.dirname, '../fixtures/calibration/pair.tif');
    const up = await mic
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ name: 'with instrument', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, instrumentId }]))
      .attach('files', pair);
    expect(up.status, JSON.stringify(up.body)).toBe(201);
    const r = UploadResponse.parse(up.body).results[0];
    expect(r.ok && r.field.instrumentId).toBe(instrumentId);
    const bad = await mic
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, instrumentId: 424242 }]))
      .attach('files', pair);
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/names instrument 424242, which does not exist/);
    if (r.ok) expect((await mic.delete(`/api/fields/${r.field.id}`)).status).toBe(200);
  });

  it('the field fails with the reason while the instrument has no approved calibration', async () => {
    const run = await runWith({ calibration: 'approved' });
    expect(run.status).not.toBe('done');
    expect(run.fields[0].status).toBe('failed');
    expect(run.fields[0].error).toMatch(/instrument Confocal 1 of field beads has no approved calibration/);
  });

  it('once approved: aligned, unmixed, measured as the engine on the corrected channels, calibration in the provenance', async () => {
    await mic.post(`/api/calibrations/${calibrationId}/submit`).send({});
    expect((await fm.post(`/api/calibrations/${calibrationId}/approve`).send({})).body.status).toBe('approved');
    const run = await runWith({ calibration: 'approved' });
    expect(run.status, JSON.stringify(run)).toBe('done');
    const row = t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.id)).all().find((m) => m.cellId === cellId)!;
    const { t1, t2 } = unmixChannels(A, alignChannel(B, W, H, 1.5, -0.75), 0.1, 0.04);
    const idx = Uint32Array.from(cellIndices(geometry, W, H).filter((i) => !Number.isNaN(t2[i])));
    const ref = measureRegion(t1, t2, idx, { width: W, height: H, threshold: { method: 'none' } });
    expect(row.pixels).toBe(ref.pixels);
    expect(row.pearson).toBe(ref.pearson);
    expect(row.spearman).toBe(ref.spearman);
    expect(row.mandersM1).toBe(ref.mandersM1);
    const p = MeasurementProvenance.parse(row.provenance);
    expect(p.calibration).toEqual({ id: calibrationId, instrumentId, instrument: 'Confocal 1', version: 1, dx: 1.5, dy: -0.75, a21: 0.1, a12: 0.04 });
    // the report's methods paragraph states the shift and the coefficients used, and cites both methods
    const bio = await t.login('biologist');
    const rep = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'calibrated', coefficients: ['pearson'], runId: run.id });
    expect(rep.status, JSON.stringify(rep.body).slice(0, 400)).toBe(201);
    const methods = (await bio.get(`/api/reports/${rep.body.id}`)).body.snapshot.methods as string;
    expect(methods).toMatch(/Channel calibration: calibration v1 of instrument Confocal 1 for 1 cell: channel 2 shifted into register by dx = 1.5 px, dy = -0.75 px/);
    expect(methods).toMatch(/linear unmixing with a21 = 0.1 and a12 = 0.04/);
    expect(methods).toContain('Guizar-Sicairos M, Thurman ST, Fienup JR (2008)');
    expect(methods).toContain('Zimmermann T, Rietdorf J, Pepperkok R (2003)');
    expect(methods).not.toMatch(/mix calibrations/);
  });

  it('with a background (region or constant) between alignment and unmixing: as align, subtract, unmix done independently', async () => {
    // the run does the three steps in one pass (alignAndUnmix); the reference does them one after the other.
    // The background region reaches the border, where channel 2's aligned pixels are not measured (NaN).
    const region = { kind: 'rect' as const, x: 56, y: 0, width: 8, height: 48 };
    const f = await addField(t.ctx, t.world.coverslipA, { name: 'beads bg', width: W, height: H, ch1: A, ch2: B, cells: [{ geometry }, { role: 'background', geometry: region }] });
    expect((await mic.put(`/api/fields/${f.fieldId}/instrument`).send({ instrumentId })).status).toBe(200);
    const aligned = alignChannel(B, W, H, 1.5, -0.75);
    const sub = (a: ArrayLike<number>, b: number) => Float64Array.from(a, (v) => (v > b ? v - b : v === v ? 0 : NaN));
    const inRegion = cellIndices(region, W, H).filter((i) => !Number.isNaN(aligned[i]));
    expect(inRegion.length).toBeLessThan(cellIndices(region, W, H).length);
    const mean = (a: ArrayLike<number>) => inRegion.reduce((s, i) => s + a[i], 0) / inRegion.length;
    for (const [background, bg1, bg2] of [
      [{ method: 'region' }, mean(A), mean(aligned)],
      [{ method: 'constant', ch1: 120, ch2: 90.5 }, 120, 90.5],
    ] as const) {
      const run = await runWith({ calibration: 'approved', background }, f.fieldId);
      expect(run.status, JSON.stringify(run)).toBe('done');
      const row = t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.id)).all().find((m) => m.cellId === f.cellIds[0])!;
      const { t1, t2 } = unmixChannels(sub(A, bg1), sub(aligned, bg2), 0.1, 0.04);
      const idx = Uint32Array.from(cellIndices(geometry, W, H).filter((i) => !Number.isNaN(t2[i])));
      const ref = measureRegion(t1, t2, idx, { width: W, height: H, threshold: { method: 'none' } });
      expect(MeasurementProvenance.parse(row.provenance).background).toEqual([bg1, bg2]);
      expect(row.pixels).toBe(ref.pixels);
      expect(row.pearson).toBe(ref.pearson);
      expect(row.spearman).toBe(ref.spearman);
      expect(row.mandersM1).toBe(ref.mandersM1);
    }
  });

  it('a recipe without the setting measures the channels as recorded (no calibration in the provenance)', async () => {
    const run = await runWith({});
    expect(run.status).toBe('done');
    const row = t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.id)).get()!;
    expect(row.pixels).toBe(cellIndices(geometry, W, H).length);
    expect(MeasurementProvenance.parse(row.provenance).calibration).toBeNull();
  });

  it('a field without an instrument fails with the reason', async () => {
    await mic.put(`/api/fields/${fieldId}/instrument`).send({ instrumentId: null });
    const run = await runWith({ calibration: 'approved' });
    expect(run.fields[0].error).toMatch(/field beads has no instrument/);
  });
});

describe('Compare warns when measurements mix calibrations', () => {
  it('one recipe, field 1 measured with calibration v1 and field 2 with v2 → a warning; one calibration → none', async () => {
    const f2 = await addField(t.ctx, t.world.coverslipA, { name: 'beads 2', width: W, height: H, ch1: A, ch2: B, cells: [{ geometry }] });
    for (const id of [fieldId, f2.fieldId]) expect((await mic.put(`/api/fields/${id}/instrument`).send({ instrumentId })).status).toBe(200);
    const recipe = (await mic.post('/api/recipes').send({ name: 'mixed calibrations', settings: { threshold: { method: 'none' }, coefficients: ['pearson'], calibration: 'approved' } })).body;
    const runOn = async (id: number) => {
      const run = await mic.post('/api/runs').send({ recipeId: recipe.id, scope: { kind: 'field', id } });
      expect((await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body)).status).toBe('done');
    };
    const warnings = async () => ((await mic.get(`/api/studies/${t.world.studyA}/compare`).query({ recipeId: recipe.id })).body as { warnings: string[] }).warnings;
    await runOn(fieldId);
    await runOn(f2.fieldId);
    expect((await warnings()).some((w) => /mix channel calibrations/.test(w))).toBe(false);
    const v2 = (await mic.post(`/api/instruments/${instrumentId}/calibrations`).send({ dx: 1.4 })).body.id;
    await mic.post(`/api/calibrations/${v2}/submit`).send({});
    await fm.post(`/api/calibrations/${v2}/approve`).send({});
    await runOn(f2.fieldId);
    expect(await warnings()).toContain('The measurements mix channel calibrations (2 different): shift and bleed-through corrections differ between cells, so differences may come from the calibration.');
  });
});
