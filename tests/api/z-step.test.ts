/**
 * µm between z slices for stacks whose files state none (issue 16): `PUT /api/fields/:id/z-step` and `zStepUm`
 * per field of the upload plan (and the sample sheet's `z_step_um` column, which fills it). Bad values are refused with the value quoted, a single plane has no z step,
 * a file's own z step is kept over the plan's; once set, a recipe whose 3D randomization blocks take their
 * depth from the axial point-spread width passes the pre-run check (it was blocked before) and runs, a report's
 * methods paragraph states the voxel size with it, and the change is audited.
 */
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents } from '../../server/db/schema.js';
import { FieldSummary, UploadResponse } from '../../shared/schemas/fields.js';
import { RunCheckResponse } from '../../shared/schemas/runs.js';
import { SampleSheetApplyResponse, SampleSheetCheckResponse } from '../../shared/schemas/sample-sheet.js';
import crypto from 'node:crypto';
import { buildSnapshot } from '../../server/reports/snapshot.js';
import { readFileSync } from 'node:fs';
import { syntheticPair, tiff16, waitForRun } from '../runs/helpers.js';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent;

async function upload(file: string, extra: Record<string, unknown> = {}) {
  const plan = JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, ...extra }]);
  return mic.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', dir + file);
}
const fieldOf = (res: { body: unknown }) => {
  const r = UploadResponse.parse(res.body).results[0];
  if (!r.ok) throw new Error(r.error);
  return r.field;
};

beforeAll(async () => {
  t = await makeTestApp();
  mic = await t.login('microscopist');
}, 60_000);
afterAll(() => t?.close());

describe('zStepUm in the upload plan', () => {
  it('gives a stack without a stated z step the plan value; a file that states one keeps its own', async () => {
    const stated = fieldOf(await upload('u16.stated.tif', { zStepUm: 0.35, pixelSizeUm: 0.1 }));
    expect(stated.sizeZ).toBe(5);
    expect(stated.zStepUm).toBe(0.35);
    const plain = fieldOf(await upload('u16.stated.tif'));
    expect(plain.zStepUm).toBeNull();
    const ome = fieldOf(await upload('u16.xyzct.ome.tif'));
    expect(ome.zStepUm).not.toBeNull();
    const omeWithPlan = fieldOf(await upload('u16.xyzct.ome.tif', { zStepUm: 7 }));
    expect(omeWithPlan.zStepUm).toBe(ome.zStepUm);
  });
  it('a single plane has no z step: the plan value is not used there', async () => {
    const [A, B] = syntheticPair(16, 12, 2);
    const plan = JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 }, zStepUm: 0.5 }]);
    const res = await mic.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', tiff16(16, 12, [A, B]), 'flat.tif');
    expect(fieldOf(res).zStepUm).toBeNull();
  });
  it('a bad value refuses the upload with it quoted', async () => {
    for (const [v, msg] of [
      [0, /the z step must be above 0 µm between slices, got 0/],
      [2000, /the z step must be at most 1000 µm between slices, got 2000/],
      ['0.3', /the z step must be a number of µm between slices, got "0.3"/],
    ] as const) {
      const bad = await upload('u16.stated.tif', { zStepUm: v });
      expect(bad.status).toBe(400);
      expect(bad.body.error).toMatch(msg);
    }
  });
});

describe('PUT /api/fields/:id/z-step', () => {
  it('refuses values that are not a z step, quoting them, and a z step for a single plane', async () => {
    const field = fieldOf(await upload('u16.stated.tif'));
    for (const [v, msg] of [
      ['0.5', /must be a number of µm between slices, got "0.5"/],
      [-1, /must be above 0 µm between slices, got -1/],
      [1e4, /must be at most 1000 µm between slices, got 10000/],
    ] as const) {
      const res = await mic.put(`/api/fields/${field.id}/z-step`).send({ zStepUm: v });
      expect(res.status).toBe(400);
      expect(res.body.error).toMatch(msg);
    }
    expect((await (await t.login('collaborator')).put(`/api/fields/${field.id}/z-step`).send({ zStepUm: 0.5 })).status).toBe(403);
    expect((await mic.put('/api/fields/999999/z-step').send({ zStepUm: 0.5 })).status).toBe(404);
    const [A, B] = syntheticPair(16, 12, 4);
    const flat = fieldOf(await mic.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', tiff16(16, 12, [A, B]), 'flat.tif'));
    const single = await mic.put(`/api/fields/${flat.id}/z-step`).send({ zStepUm: 0.5 });
    expect(single.status).toBe(409);
    expect(single.body.error).toBe('field "flat" is a single plane, so it has no z step to set (got 0.5 µm)');
  });

  it('unblocks 3D randomization blocks sized from the axial PSF width: blocked before, measured after, audited', async () => {
    const field = fieldOf(await upload('u16.stated.tif', { pixelSizeUm: 0.1 }));
    const cell = await mic.post(`/api/fields/${field.id}/cells`).send({ geometry: { kind: 'rect', x: 2, y: 2, width: 16, height: 12 } });
    expect(cell.status, JSON.stringify(cell.body)).toBe(201);
    const recipe = await mic.post('/api/recipes').send({
      name: 'axial blocks',
      settings: { threshold: { method: 'none' }, coefficients: ['pearson'], randomization: { enabled: true, count: 20, blockSize: { kind: 'psf', psfWidthUm: 0.2, psfDepthUm: 0.8 } } },
    });
    expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
    const body = { recipeId: recipe.body.id, scope: { kind: 'field', id: field.id } };
    const before = RunCheckResponse.parse((await mic.post('/api/runs/check').send(body)).body);
    expect(before.blocked[0]?.problem).toMatch(/neither the recipe nor field ".*" gives the z step between slices/);
    const res = await mic.put(`/api/fields/${field.id}/z-step`).send({ zStepUm: 0.4 });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(FieldSummary.parse(res.body).zStepUm).toBe(0.4);
    expect((await mic.get(`/api/fields/${field.id}`)).body.zStepUm).toBe(0.4);
    expect(RunCheckResponse.parse((await mic.post('/api/runs/check').send(body)).body)).toEqual({ ready: [field.id], blocked: [] });
    const run = await mic.post('/api/runs').send(body);
    expect((await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body)).status).toBe('done');
    // the methods paragraph of a report over the run states the voxel size with the z step given by hand
    const snap = await buildSnapshot(t.ctx, t.world.studyA, { coefficients: ['pearson'], runId: run.body.id });
    expect(snap.methods).toMatch(/voxel size [^)]*0\.1 × 0\.1 × 0\.4 µm/);
    const ev = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'field.z_step'), eq(auditEvents.entityId, field.id))).get();
    expect(ev?.details).toEqual({ from: null, to: 0.4 });
    expect(FieldSummary.parse((await mic.put(`/api/fields/${field.id}/z-step`).send({ zStepUm: null })).body).zStepUm).toBeNull();
  });
});

describe('z_step_um in the sample sheet', () => {
  it('is checked with the value quoted and carried into the upload plan, which gives the stack its z step', async () => {
    const owner = await t.login('biologist');
    const bad = SampleSheetCheckResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv: 'file,condition,coverslip,z_step_um\ns.tif,control,CS1,-1\n' })).body);
    expect(bad.problems).toEqual([{ line: 2, message: 'z_step_um must be a number of µm between slices above 0 (at most 1000), got "-1"' }]);
    const bytes = readFileSync(dir + 'u16.stated.tif');
    const files = [{ name: 'sheet-stack.tif', sha256: crypto.createHash('sha256').update(bytes).digest('hex') }];
    const csv = 'file,condition,coverslip,name,z_step_um\nsheet-stack.tif,control,sheet slip,from the sheet,0.45\n';
    const checked = SampleSheetCheckResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv, files })).body);
    expect(checked.rows[0].zStepUm).toBe(0.45);
    const applied = SampleSheetApplyResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/apply`).send({ csv, files })).body);
    const u = applied.uploads[0];
    expect(u.plan[0].zStepUm).toBe(0.45);
    const res = await owner.post(`/api/coverslips/${u.coverslipId}/fields`).attach('files', bytes, 'sheet-stack.tif').field('plan', JSON.stringify(u.plan));
    expect(fieldOf(res).zStepUm).toBe(0.45);
  });
});
