/**
 * The recipe's objects section: validation (shared/schemas/recipes.ts), its sentences, the conversion of µm
 * settings to pixels, and its place in the recipe life cycle (edited as a draft, frozen once approved, shown in
 * the diff). Rules: the product brief and issue text (no outside source); σ from the PSF's full width at half
 * maximum uses FWHM = 2√(2 ln 2) σ of a Gaussian (from memory, any statistics text).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import {
  DEFAULT_OBJECTS_SETTING,
  OBJECT_SETTING_KEYS,
  ObjectsSetting,
  RecipeSettings,
  describeObjectSettings,
  describeSetting,
  diffSettings,
  pairDistancePx,
  spotSigmaPx,
} from '../../shared/schemas/recipes.js';
import { objectOptions, FieldJobError } from '../../server/runs/compute.js';

let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let mic: Agent, mgr: Agent;

beforeAll(async () => {
  t = await makeTestApp();
  [mic, mgr] = await Promise.all([t.login('microscopist'), t.login('manager')]);
});
afterAll(() => t.close());

describe('objects section schema', () => {
  it('is off by default with the engine defaults (σ 1.5 px, k 5, separation 2σ, d 2 px, 999 placements, seed 1)', () => {
    const s = RecipeSettings.parse({});
    expect(s.objects).toEqual(DEFAULT_OBJECTS_SETTING);
    expect(s.objects).toEqual({ enabled: false, scale: { kind: 'pixels', sigmaPx: 1.5 }, k: 5, minSeparationPx: null, pairDistance: { kind: 'pixels', pixels: 2 }, placements: 999, seed: 1 });
    // a recipe stored before the section existed reads as "off"
    const old = RecipeSettings.parse({ threshold: { method: 'otsu' } });
    expect(old.objects.enabled).toBe(false);
  });

  it.each([
    [{ scale: { kind: 'pixels', sigmaPx: 0 } }, 'objects.scale.sigmaPx'],
    [{ scale: { kind: 'pixels', sigmaPx: 51 } }, 'objects.scale.sigmaPx'],
    [{ scale: { kind: 'psf', psfWidthUm: -1 } }, 'objects.scale.psfWidthUm'],
    [{ k: 0 }, 'objects.k'],
    [{ minSeparationPx: -1 }, 'objects.minSeparationPx'],
    [{ pairDistance: { kind: 'um', um: -0.1 } }, 'objects.pairDistance.um'],
    [{ pairDistance: { kind: 'um', um: 0.2, pixelSizeUm: 0 } }, 'objects.pairDistance.pixelSizeUm'],
    [{ pairDistance: { kind: 'furlongs', furlongs: 1 } }, 'objects.pairDistance.kind'],
    [{ placements: 0 }, 'objects.placements'],
    [{ placements: 10.5 }, 'objects.placements'],
    [{ seed: -1 }, 'objects.seed'],
  ])('refuses %j through the API with 400 naming %s', async (objects, path) => {
    const res = await mic.post('/api/recipes').send({ name: 'bad objects', settings: { objects: { enabled: true, ...objects } } });
    expect(res.status).toBe(400);
    expect(res.body.error).toContain(path);
  });

  it('turns σ from the PSF width and d in µm into pixels, with the recipe pixel size before the field one', () => {
    const psf = ObjectsSetting.parse({ scale: { kind: 'psf', psfWidthUm: 0.3 }, pairDistance: { kind: 'um', um: 0.25 } });
    // FWHM = 2√(2 ln 2) σ ≈ 2.3548 σ
    expect(spotSigmaPx(psf, 0.1)).toBeCloseTo(0.3 / 2.354820045 / 0.1, 8);
    expect(pairDistancePx(psf, 0.1)).toBeCloseTo(2.5, 12);
    const own = ObjectsSetting.parse({ scale: { kind: 'psf', psfWidthUm: 0.3, pixelSizeUm: 0.05 }, pairDistance: { kind: 'um', um: 0.25, pixelSizeUm: 0.05 } });
    expect(pairDistancePx(own, 0.1)).toBeCloseTo(5, 12);
    expect(spotSigmaPx(own, 0.1)).toBeCloseTo(0.3 / 2.354820045 / 0.05, 8);
    expect(() => pairDistancePx(psf, null)).toThrow(/pixel size/);
    // runs: off → null; on → engine options, minimum separation 2σ when unset; missing pixel size → a field error
    expect(objectOptions(RecipeSettings.parse({}), null)).toBeNull();
    expect(objectOptions(RecipeSettings.parse({ objects: { enabled: true } }), null)).toEqual({ spotSigma: 1.5, spotK: 5, minSeparation: 3, pairDistance: 2, placements: 999, seed: 1 });
    expect(() => objectOptions(RecipeSettings.parse({ objects: { ...psf, enabled: true } }), null)).toThrow(FieldJobError);
  });
});

describe('objects section sentences', () => {
  it('has one sentence per part; d says what it means physically, placements what they cost', () => {
    const o = ObjectsSetting.parse({ enabled: true, pairDistance: { kind: 'um', um: 0.2 }, placements: 499 });
    const d = describeObjectSettings(o);
    expect(d.map((x) => x.key)).toEqual([...OBJECT_SETTING_KEYS]);
    for (const x of d) expect(x.sentence).toMatch(/^[A-Z].*\.$/);
    const pair = d.find((x) => x.key === 'pairDistance')!.sentence;
    expect(pair).toContain('0.2 µm in the specimen');
    expect(pair).toMatch(/chromatic shift/);
    const plc = d.find((x) => x.key === 'placements')!.sentence;
    expect(plc).toContain('499 times');
    expect(plc).toContain('cannot be below 0.002');
    expect(plc).toMatch(/time grows in proportion/);
    expect(describeSetting('objects', RecipeSettings.parse({}))).toBe('No spots are detected (object-based measures are off).');
    expect(describeSetting('objects', RecipeSettings.parse({ objects: o }))).toBe(d.map((x) => x.sentence).join(' '));
  });
});

describe('objects section in the life cycle', () => {
  it('is edited in a draft, reviewed and approved with the recipe, frozen afterwards, and shown in the diff', async () => {
    const r = (await mic.post('/api/recipes').send({ name: 'Puncta', settings: {} })).body;
    const ed = await mic.patch(`/api/recipes/${r.id}`).send({ settings: { objects: { enabled: true, k: 7 } } });
    expect(ed.status, JSON.stringify(ed.body)).toBe(200);
    expect(ed.body.settings.objects).toMatchObject({ enabled: true, k: 7, placements: 999 });
    await mic.post(`/api/recipes/${r.id}/submit`).send({});
    const ap = await mgr.post(`/api/recipes/${r.id}/approve`).send({});
    expect(ap.body.status).toBe('approved');
    expect((await mic.patch(`/api/recipes/${r.id}`).send({ settings: { objects: { enabled: false } } })).status).toBe(409);
    const v2 = await mic.post(`/api/recipes/${r.id}/versions`).send({});
    expect(v2.status, JSON.stringify(v2.body)).toBe(201);
    expect(v2.body.settings.objects.k).toBe(7);
    await mic.patch(`/api/recipes/${v2.body.id}`).send({ settings: { ...v2.body.settings, objects: { ...v2.body.settings.objects, k: 9 } } });
    const diff = await mic.get(`/api/recipes/${r.id}/diff/${v2.body.id}`);
    expect(diff.status).toBe(200);
    const entry = diff.body.entries.find((e: { key: string }) => e.key === 'objects');
    expect(entry).toMatchObject({ label: 'Spots', changed: true });
    expect(entry.a).toContain('more than 7 times');
    expect(entry.b).toContain('more than 9 times');
    const same = diffSettings(RecipeSettings.parse({}), RecipeSettings.parse({}));
    expect(same.find((e) => e.key === 'objects')!.changed).toBe(false);
  });
});
