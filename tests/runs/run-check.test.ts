/**
 * The pre-run input check (issue 15): `POST /api/runs/check` applies to every field of a scope the rules the
 * run itself fails a field with (one function, checkFieldInputs, used by both), and `POST /api/runs
 * { onlyReady: true }` starts on the ready fields only. The messages are the run's own: a run started without
 * onlyReady fails the blocked field with the same sentence the check gave (identity check, common practice).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { RunCheckResponse, RunDetail } from '../../shared/schemas/runs.js';
import { addField, syntheticPair, waitForRun } from './helpers.js';

const W = 48, H = 40;
const [A, B] = syntheticPair(W, H, 11);
const cell = { geometry: { kind: 'rect' as const, x: 4, y: 4, width: 30, height: 30 } };
const background = { role: 'background' as const, geometry: { kind: 'rect' as const, x: 40, y: 30, width: 6, height: 6 } };
let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent;
let withBg: number, withoutBg: number;

beforeAll(async () => {
  t = await makeTestApp();
  mic = await t.login('microscopist');
  withBg = (await addField(t.ctx, t.world.coverslipA, { name: 'marked', width: W, height: H, ch1: A, ch2: B, cells: [cell, background], pixelSizeUm: 0.1 })).fieldId;
  withoutBg = (await addField(t.ctx, t.world.coverslipA, { name: 'unmarked', width: W, height: H, ch1: A, ch2: B, cells: [cell] })).fieldId;
});
afterAll(() => t?.close());

async function recipe(settings: Record<string, unknown>) {
  const r = await mic.post('/api/recipes').send({ name: `checked ${Math.random()}`, settings: { threshold: { method: 'none' }, coefficients: ['pearson'], ...settings } });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return r.body.id as number;
}
const scope = () => ({ kind: 'coverslip', id: t.world.coverslipA });
async function check(recipeId: number) {
  const res = await mic.post('/api/runs/check').send({ recipeId, scope: scope() });
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return RunCheckResponse.parse(res.body);
}

describe('POST /api/runs/check', () => {
  it('a recipe that subtracts a marked background region blocks the field without one, with a link to its workspace', async () => {
    const id = await recipe({ background: { method: 'region' } });
    const c = await check(id);
    expect(c.ready).toEqual([withBg]);
    expect(c.blocked).toEqual([
      { fieldId: withoutBg, fieldName: 'control / CS1 / unmarked', problem: 'the recipe subtracts the mean of a marked background region, but field "unmarked" has none marked', fixUrl: `/studies/${t.world.studyA}/fields/${withoutBg}` },
    ]);
  });

  it('µm settings without a pixel size block the field that has none (the recipe gives none either)', async () => {
    const id = await recipe({ randomization: { enabled: true, blockSize: { kind: 'psf', psfWidthUm: 0.3 }, iterations: 20 } });
    const c = await check(id);
    expect(c.ready).toEqual([withBg]);
    expect(c.blocked.map((b) => b.fieldId)).toEqual([withoutBg]);
    expect(c.blocked[0].problem).toMatch(/neither the recipe nor the field gives a pixel size/);
  });

  it('a field without an instrument blocks a recipe applying the approved calibration (fixed on the field)', async () => {
    const id = await recipe({ calibration: 'approved' });
    const c = await check(id);
    expect(c.ready).toEqual([]);
    expect(c.blocked.map((b) => b.problem)).toEqual([
      "field marked has no instrument, so the recipe's calibration cannot be applied",
      "field unmarked has no instrument, so the recipe's calibration cannot be applied",
    ]);
    expect(c.blocked[0].fixUrl).toBe(`/studies/${t.world.studyA}/fields/${withBg}`);
  });

  it('an instrument without an approved calibration links to the instrument', async () => {
    const fm = await t.login('manager');
    const inst = (await fm.post('/api/instruments').send({ name: 'Widefield 2', objective: '40×', channel1: 'GFP', channel2: 'RFP' })).body.id as number;
    expect((await mic.put(`/api/fields/${withBg}/instrument`).send({ instrumentId: inst })).status).toBe(200);
    const c = await check(await recipe({ calibration: 'approved' }));
    const b = c.blocked.find((x) => x.fieldId === withBg)!;
    expect(b.problem).toBe('instrument Widefield 2 of field marked has no approved calibration');
    expect(b.fixUrl).toBe(`/instruments/${inst}`);
    expect((await mic.put(`/api/fields/${withBg}/instrument`).send({ instrumentId: null })).status).toBe(200);
  });

  it('a recipe problem (a slice the fields do not have) links to the recipe', async () => {
    const id = await recipe({ z: { mode: 'slice', slice: 3 } });
    const c = await check(id);
    expect(c.ready).toEqual([]);
    expect(c.blocked[0]).toMatchObject({ problem: 'the recipe asks for slice 4, but the field has 1 slice', fixUrl: `/recipes/${id}` });
  });

  it('every field ready: nothing blocked', async () => {
    const c = await check(await recipe({}));
    expect(c).toEqual({ ready: [withBg, withoutBg], blocked: [] });
  });

  it('refuses what POST /api/runs refuses: an unknown recipe (404), a collaborator (403), a bad body (400)', async () => {
    expect((await mic.post('/api/runs/check').send({ recipeId: 999999, scope: scope() })).body.error).toMatch(/no recipe with id 999999/);
    const id = await recipe({});
    expect((await (await t.login('collaborator')).post('/api/runs/check').send({ recipeId: id, scope: scope() })).status).toBe(403);
    expect((await mic.post('/api/runs/check').send({ recipeId: id, scope: { kind: 'galaxy', id: 1 } })).status).toBe(400);
  });
});

describe('POST /api/runs { onlyReady: true }', () => {
  it('starts on the ready fields only; without it the blocked field fails with the sentence the check gave', async () => {
    const id = await recipe({ background: { method: 'region' } });
    const problem = (await check(id)).blocked[0].problem;
    const only = await mic.post('/api/runs').send({ recipeId: id, scope: scope(), onlyReady: true });
    expect(only.status, JSON.stringify(only.body)).toBe(201);
    const done = RunDetail.parse(await waitForRun(async () => (await mic.get(`/api/runs/${only.body.id}`)).body));
    expect(done.status).toBe('done');
    expect(done.fields.map((f) => f.fieldId)).toEqual([withBg]);
    const all = await mic.post('/api/runs').send({ recipeId: id, scope: scope() });
    const partial = RunDetail.parse(await waitForRun(async () => (await mic.get(`/api/runs/${all.body.id}`)).body));
    expect(partial.status).toBe('partial');
    expect(partial.fields.find((f) => f.fieldId === withoutBg)?.error).toBe(problem);
  });

  it('no ready field: 409 quoting the first problem', async () => {
    const id = await recipe({ calibration: 'approved' });
    const res = await mic.post('/api/runs').send({ recipeId: id, scope: scope(), onlyReady: true });
    expect(res.status).toBe(409);
    expect(res.body.error).toMatch(/no field of coverslip "control \/ CS1" can be measured .*: control \/ CS1 \/ marked: field marked has no instrument.* \(and 1 more field\)/);
  });
});
