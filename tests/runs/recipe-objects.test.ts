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
  spotSigmaZSlices,
} from '../../shared/schemas/recipes.js';
import { computeFieldResult, objectOptions, FieldJobError } from '../../server/runs/compute.js';
import type { FieldJob } from '../../server/runs/job.js';

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
    expect(s.objects).toEqual({ enabled: false, scale: { kind: 'pixels', sigmaPx: 1.5 }, axial: null, k: 5, minSeparationPx: null, pairDistance: { kind: 'pixels', pixels: 2 }, placements: 999, seed: 1 });
    // a recipe stored before the section existed reads as "off"
    const old = RecipeSettings.parse({ threshold: { method: 'otsu' } });
    expect(old.objects.enabled).toBe(false);
    // a Spots section stored before the axial width existed keeps today's rule (σz = σ × pixel size / z step)
    const before = RecipeSettings.parse({ objects: { enabled: true, scale: { kind: 'pixels', sigmaPx: 2 }, k: 6, minSeparationPx: null, pairDistance: { kind: 'pixels', pixels: 2 }, placements: 99, seed: 3 } });
    expect(before.objects.axial).toBeNull();
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
    [{ axial: { kind: 'slices', sigmaZ: 0 } }, 'objects.axial.sigmaZ'],
    [{ axial: { kind: 'slices', sigmaZ: 51 } }, 'objects.axial.sigmaZ'],
    [{ axial: { kind: 'psf', psfDepthUm: -0.5 } }, 'objects.axial.psfDepthUm'],
    [{ axial: { kind: 'psf', psfDepthUm: 0.7, zStepUm: 0 } }, 'objects.axial.zStepUm'],
    [{ axial: { kind: 'microns', um: 1 } }, 'objects.axial.kind'],
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

  it('gives σz in slices: σ / zScale when unset, the recipe\'s slices, or the axial FWHM / 2.355 over the recipe\'s z step before the field\'s', () => {
    // zScale 4 (0.4 µm steps, 0.1 µm pixels), σ = 2 px
    expect(spotSigmaZSlices(ObjectsSetting.parse({}), 2, 4, 0.4)).toBe(0.5);
    expect(spotSigmaZSlices(ObjectsSetting.parse({ axial: { kind: 'slices', sigmaZ: 1.25 } }), 2, 4, 0.4)).toBe(1.25);
    const psf = ObjectsSetting.parse({ axial: { kind: 'psf', psfDepthUm: 0.7 } });
    expect(spotSigmaZSlices(psf, 2, 4, 0.4)).toBeCloseTo(0.7 / 2.354820045 / 0.4, 8);
    expect(spotSigmaZSlices(ObjectsSetting.parse({ axial: { kind: 'psf', psfDepthUm: 0.7, zStepUm: 0.2 } }), 2, 4, 0.4)).toBeCloseTo(0.7 / 2.354820045 / 0.2, 8);
    expect(() => spotSigmaZSlices(psf, 2, 4, null)).toThrow(/z step/);
  });
});

describe('objects section in a run of a float field', () => {
  it('refuses NaN pixels with their count (the filter reaches beyond the cell), and measures once they are gone', () => {
    const W = 24, H = 24;
    const ch1 = new Float32Array(W * H).fill(10), ch2 = new Float32Array(W * H).fill(10);
    ch2[5] = NaN;
    ch2[7] = NaN;
    const job: FieldJob = {
      runId: 1, fieldId: 1, fieldName: 'Float', width: W, height: H, sizeZ: 1, bitDepth: 32, sampleFormat: 'float', pixelSizeUm: null,
      sources: [{ key: 'k', sha256: 'a'.repeat(64), channel: 1 }, { key: 'k', sha256: 'a'.repeat(64), channel: 2 }],
      cells: [{ id: 1, role: 'cell', geometry: { kind: 'rect', x: 2, y: 2, width: 20, height: 20 } }],
      settings: RecipeSettings.parse({ threshold: { method: 'none' }, objects: { enabled: true } }),
      recipe: { id: 1, name: 'R', version: 1, status: 'approved' }, provisional: false, calibration: null, calibrationProblem: null,
    };
    expect(() => computeFieldResult(job, { width: W, height: H, ch1, ch2 })).toThrow(/channel 2 of field "Float" has 2 pixels without one \(NaN\)/);
    ch2[5] = 10;
    ch2[7] = 10;
    // flat channels: no spots (noise 0), counts 0, fractions null
    const r = computeFieldResult(job, { width: W, height: H, ch1, ch2 });
    expect(r.spots).toEqual([]);
    expect(r.measurements[0]).toMatchObject({ spotCount1: 0, spotCount2: 0, spotPaired1: null, spotPValue: null });
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
    const axial = (a: object | null) => describeObjectSettings(ObjectsSetting.parse({ enabled: true, axial: a })).find((x) => x.key === 'axial')!.sentence;
    expect(axial(null)).toContain('σz = σ × pixel size / z step slices');
    expect(axial({ kind: 'slices', sigmaZ: 1.25 })).toContain('σz = 1.25 slices');
    expect(axial({ kind: 'psf', psfDepthUm: 0.7 })).toContain("0.7 µm gives σz = 0.7 µm / 2.355 at the field's z step");
    expect(axial({ kind: 'psf', psfDepthUm: 0.7, zStepUm: 0.3 })).toContain('0.3 µm between slices');
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
