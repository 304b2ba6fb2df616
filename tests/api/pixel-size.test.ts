/**
 * µm per pixel for fields whose files carry none (issue 15): `PUT /api/fields/:id/pixel-size` and
 * `pixelSizeUm` per field of the upload plan. Bad values are refused with the value quoted; once set, a
 * recipe with µm settings passes the pre-run check and runs (it was blocked before), and the value is audited.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents } from '../../server/db/schema.js';
import { FieldSummary, UploadResponse } from '../../shared/schemas/fields.js';
import { RunCheckResponse } from '../../shared/schemas/runs.js';
import { addField, syntheticPair, tiff16, waitForRun } from '../runs/helpers.js';

const W = 40, H = 32;
const [A, B] = syntheticPair(W, H, 3);
let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent;
let fieldId: number;

beforeAll(async () => {
  t = await makeTestApp();
  mic = await t.login('microscopist');
  fieldId = (await addField(t.ctx, t.world.coverslipA, { name: 'no scale', width: W, height: H, ch1: A, ch2: B, cells: [{ geometry: { kind: 'rect', x: 2, y: 2, width: 30, height: 26 } }] })).fieldId;
});
afterAll(() => t?.close());

describe('PUT /api/fields/:id/pixel-size', () => {
  it('refuses values that are not a pixel size, quoting them', async () => {
    for (const [v, msg] of [
      ['0.1', /must be a number of µm per pixel, got "0.1"/],
      [0, /must be above 0 µm per pixel, got 0/],
      [-0.2, /must be above 0 µm per pixel, got -0.2/],
      [250, /must be at most 100 µm per pixel, got 250/],
    ] as const) {
      const res = await mic.put(`/api/fields/${fieldId}/pixel-size`).send({ pixelSizeUm: v });
      expect(res.status).toBe(400);
      expect(res.body.error).toMatch(msg);
    }
    expect((await (await t.login('collaborator')).put(`/api/fields/${fieldId}/pixel-size`).send({ pixelSizeUm: 0.1 })).status).toBe(403);
    expect((await mic.put('/api/fields/999999/pixel-size').send({ pixelSizeUm: 0.1 })).status).toBe(404);
  });

  it('unblocks a recipe with µm settings: blocked before, measured after, the change audited', async () => {
    const recipe = await mic.post('/api/recipes').send({ name: 'psf blocks', settings: { threshold: { method: 'none' }, coefficients: ['pearson'], randomization: { enabled: true, blockSize: { kind: 'psf', psfWidthUm: 0.4 }, iterations: 20 } } });
    expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
    const body = { recipeId: recipe.body.id, scope: { kind: 'field', id: fieldId } };
    const before = RunCheckResponse.parse((await mic.post('/api/runs/check').send(body)).body);
    expect(before.blocked[0].problem).toMatch(/neither the recipe nor the field gives a pixel size/);
    const res = await mic.put(`/api/fields/${fieldId}/pixel-size`).send({ pixelSizeUm: 0.1 });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(FieldSummary.parse(res.body).pixelSizeUm).toBe(0.1);
    expect(RunCheckResponse.parse((await mic.post('/api/runs/check').send(body)).body)).toEqual({ ready: [fieldId], blocked: [] });
    const run = await mic.post('/api/runs').send(body);
    expect((await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body)).status).toBe('done');
    const ev = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'field.pixel_size'), eq(auditEvents.entityId, fieldId))).get();
    expect(ev?.details).toEqual({ from: null, to: 0.1 });
    // null clears it again
    expect(FieldSummary.parse((await mic.put(`/api/fields/${fieldId}/pixel-size`).send({ pixelSizeUm: null })).body).pixelSizeUm).toBeNull();
  });
});

describe('pixelSizeUm in the upload plan', () => {
  it('gives the field the plan value when its file carries none; a bad value refuses the upload with it quoted', async () => {
    const file = tiff16(W, H, [A, B]);
    const up = await mic
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ name: 'scaled at upload', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, pixelSizeUm: 0.065 }]))
      .attach('files', file, 'scaled.tif');
    expect(up.status, JSON.stringify(up.body)).toBe(201);
    const r = UploadResponse.parse(up.body).results[0];
    expect(r.ok && r.field.pixelSizeUm).toBe(0.065);
    const bad = await mic
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, pixelSizeUm: -1 }]))
      .attach('files', file, 'scaled.tif');
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/must be above 0 µm per pixel, got -1/);
  });
});
