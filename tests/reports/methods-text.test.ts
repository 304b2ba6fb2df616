/**
 * The methods paragraph reads as a journal methods section (issue 19 item 4): how the outlines were made
 * (drawn, imported, found automatically with their settings and units), the pixel size, z handling in
 * 1-based words, every recipe parameter in words (a change of any setting changes the text), and cells
 * "excluded after measurement" when they were. Unit tests on the text of one report snapshot, varied by hand
 * (methodsParagraph is a pure function of the snapshot). Wording checks are our own rules (common practice).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { methodsParagraph, settingLeaves } from '../../shared/reports/methods.js';
import { PROJECTION_CAUTION, RecipeSettings, type RecipeSettingsInput } from '../../shared/schemas/recipes.js';
import type { ReportSnapshot } from '../../shared/schemas/reports.js';
import type { CellOrigin, FoundWith } from '../../shared/schemas/cells.js';
import { buildReportWorld, excludeCell, insertRun } from './fixtures.js';
import { eq, inArray } from 'drizzle-orm';
import { fields, measurements } from '../../server/db/schema.js';

let t: TestApp;
let base: ReportSnapshot;

beforeAll(async () => {
  t = await makeTestApp();
  const rw = await buildReportWorld(t.ctx, t.world);
  insertRun(t.ctx, t.world.studyA, rw, (s, c) => 0.2 + 0.1 * s + 0.01 * c);
  excludeCell(t.ctx, rw.cellIds[0][0], 'out of focus', t.world.users.biologist.id);
  const bio = await t.login('biologist');
  const res = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Methods text', coefficients: ['pearson', 'mandersM1'] });
  expect(res.status).toBe(201);
  base = res.body.snapshot;
});
afterAll(() => t?.close());

const FOUND: FoundWith = { channel: 'sum', method: 'otsu', level: 812, smoothing: 15, z: null, fillHoles: true, split: true, seedDistance: 80, minPixels: 9467, maxPixels: 473373, pixelSizeUm: 0.065 };

function withOrigins(origins: (i: number) => CellOrigin | undefined, pixelSizeUm: number | null = 0.065): ReportSnapshot {
  const s = structuredClone(base);
  s.cells.forEach((c, i) => (c.origin = origins(i)));
  for (const f of s.fields) f.pixelSizeUm = pixelSizeUm;
  return s;
}

describe('how the outlines were made', () => {
  it('found automatically: the channel, smoothing, threshold method, level, splitting and sizes, each with its unit', () => {
    const text = methodsParagraph(withOrigins(() => ({ how: 'found', settings: FOUND, edited: false })));
    expect(text).toContain(
      `Outlines: ${base.cells.length} cells were found automatically from the sum of both channels, smoothed with a Gaussian of σ = 15 pixels (0.975 µm), thresholded at Otsu's level of the intensities clipped at their 99.5th percentile, holes filled, touching cells split by a distance-transform watershed with seeds at least 80 pixels (5.2 µm) apart, objects kept of 9,467 to 473,373 pixels (40 to 2,000 µm²), at threshold level 812 intensity units (Otsu 1979 [`,
    );
    expect(text).toContain('Pixel size: 0.065 µm, as recorded in the image files.');
    expect(text).toMatch(/\[\d+\] Otsu N \(1979\)/);
  });

  it('levels that differ per field are given as a range; a manual level is said to be set by hand', () => {
    const text = methodsParagraph(withOrigins((i) => ({ how: 'found', settings: { ...FOUND, level: i % 2 ? 900 : 700 }, edited: false })));
    expect(text).toContain('at threshold levels 700 to 900 intensity units across fields (Otsu 1979 [');
    const manual = methodsParagraph(withOrigins(() => ({ how: 'found', settings: { ...FOUND, method: 'manual', smoothing: 0 }, edited: false })));
    expect(manual).toContain('the sum of both channels, unsmoothed, thresholded at a level set by hand');
    expect(manual).not.toContain('Otsu 1979');
  });

  it('a mix: drawn, imported (naming the file), found, with corrections by hand counted', () => {
    const n = base.cells.length;
    const text = methodsParagraph(
      withOrigins((i) => (i < 4 ? { how: 'drawn' } : i < 8 ? { how: 'imported', file: 'nuclei-labels.tif', label: i, edited: i === 4 } : { how: 'found', settings: FOUND, edited: i === 8 })),
    );
    expect(text).toContain(`Outlines: 4 cells were outlined by hand; 4 cells were imported from label images (nuclei-labels.tif), one cell per label; and ${n - 8} cells were found automatically from`);
    expect(text).toContain('2 imported or found outlines were then corrected by hand.');
  });

  it('without a pixel size, sizes are in pixels only and the text says so; reports made before origins were recorded say that', () => {
    const text = methodsParagraph(withOrigins(() => ({ how: 'found', settings: { ...FOUND, pixelSizeUm: null }, edited: false }), null));
    expect(text).toContain('The image files recorded no pixel size, so sizes are given in pixels.');
    expect(text).toContain('objects kept of 9,467 to 473,373 pixels, at threshold level');
    expect(text).not.toContain('µm');
    const old = methodsParagraph(withOrigins(() => undefined));
    expect(old).toContain(`Outlines: for ${base.cells.length} cells the report does not record how the outline was made.`);
  });

  it('pixel sizes that differ between fields are listed with their field counts', () => {
    const s = withOrigins(() => ({ how: 'drawn' }));
    s.fields.forEach((f, i) => (f.pixelSizeUm = i === 0 ? null : i < 3 ? 0.1 : 0.065));
    expect(methodsParagraph(s)).toContain(`Pixel sizes: 0.065 µm (${s.fields.length - 3} fields), 0.1 µm (2 fields), as recorded in the image files; not recorded for 1 field.`);
  });
});

describe('exclusions', () => {
  it('a cell excluded after it was measured is said to be excluded after measurement', () => {
    expect(base.exclusions).toHaveLength(1);
    expect(base.methods).toContain('1 cell was excluded after measurement, with a recorded reason');
    expect(base.methods).not.toContain('before analysis');
  });
  it('a cell never measured is excluded before it was measured', () => {
    const s = structuredClone(base);
    s.cells.find((c) => c.cellId === s.exclusions[0].cellId)!.runId = null;
    expect(methodsParagraph(s)).toContain('1 cell was excluded before it was measured');
  });
});

describe('recipe settings in words', () => {
  const stacked = (settings: RecipeSettingsInput) => {
    const s = structuredClone(base);
    for (const f of s.fields) f.sizeZ = 5;
    s.recipes[0].settings = RecipeSettings.parse(settings);
    return methodsParagraph(s);
  };

  it('z handling is written 1-based for stacks: "slice 1 of each stack", never slice 0', () => {
    const text = stacked({ z: { mode: 'slice', slice: 0 } });
    expect(text).toContain('Slice 1 of each stack is measured');
    expect(text).not.toMatch(/slice 0|z handling/i);
    expect(stacked({ z: { mode: 'range', from: 1, to: 3 } })).toContain('slices 2 to 4');
    expect(stacked({ z: { mode: 'mip' } })).toContain('maximum-intensity projection of all slices');
  });

  it('a projection carries the caution that it creates false co-localization; a slice or 3D does not', () => {
    for (const z of [{ mode: 'mip' }, { mode: 'range', from: 0, to: 2 }] as const) expect(stacked({ z })).toContain(`Caution: ${PROJECTION_CAUTION}`);
    for (const z of [{ mode: 'slice', slice: 0 }, { mode: 'volume' }] as const) expect(stacked({ z })).not.toContain(PROJECTION_CAUTION);
    expect(PROJECTION_CAUTION).toMatch(/false co-localization/);
  });

  it('every setting changes the text when it changes (none is left out), and no setting key appears', () => {
    const baseSettings: RecipeSettingsInput = {
      background: { method: 'constant', ch1: 97, ch2: 83 },
      saturation: 'exclude',
      threshold: { method: 'costes', regression: 'orthogonal', belowSet: 'both', stoppingRule: { kind: 'r_at_most', r: 0.05 } },
      thresholdScope: 'cell',
      randomization: { enabled: true, count: 321, blockSize: { kind: 'pixels', pixels: 5 } },
      z: { mode: 'slice', slice: 2 },
      minCellPixels: 37,
      coefficients: ['pearson', 'manders'],
      seed: 4242,
    };
    const variants: Record<string, RecipeSettingsInput> = {
      'background.method': { ...baseSettings, background: { method: 'region' } },
      'background.ch1': { ...baseSettings, background: { method: 'constant', ch1: 98, ch2: 83 } },
      'background.ch2': { ...baseSettings, background: { method: 'constant', ch1: 97, ch2: 84 } },
      saturation: { ...baseSettings, saturation: 'keep' },
      'threshold.method': { ...baseSettings, threshold: { method: 'otsu' } },
      'threshold.regression': { ...baseSettings, threshold: { method: 'costes', regression: 'ols', belowSet: 'both', stoppingRule: { kind: 'r_at_most', r: 0.05 } } },
      'threshold.belowSet': { ...baseSettings, threshold: { method: 'costes', regression: 'orthogonal', belowSet: 'either', stoppingRule: { kind: 'r_at_most', r: 0.05 } } },
      'threshold.stoppingRule.r': { ...baseSettings, threshold: { method: 'costes', regression: 'orthogonal', belowSet: 'both', stoppingRule: { kind: 'r_at_most', r: 0.1 } } },
      thresholdScope: { ...baseSettings, thresholdScope: 'field' },
      'randomization.enabled': { ...baseSettings, randomization: { enabled: false, count: 321, blockSize: { kind: 'pixels', pixels: 5 } } },
      'randomization.count': { ...baseSettings, randomization: { enabled: true, count: 322, blockSize: { kind: 'pixels', pixels: 5 } } },
      'randomization.blockSize.kind': { ...baseSettings, randomization: { enabled: true, count: 321, blockSize: { kind: 'psf', psfWidthUm: 0.3 } } },
      'randomization.blockSize.pixels': { ...baseSettings, randomization: { enabled: true, count: 321, blockSize: { kind: 'pixels', pixels: 6 } } },
      'z.mode': { ...baseSettings, z: { mode: 'mip' } },
      'z.slice': { ...baseSettings, z: { mode: 'slice', slice: 3 } },
      minCellPixels: { ...baseSettings, minCellPixels: 38 },
      seed: { ...baseSettings, seed: 4243 },
      calibration: { ...baseSettings, calibration: 'approved' },
    };
    // settings stated only when their part is on (MICe computed, spots on): each variant against that part on
    const micOn: RecipeSettingsInput = { ...baseSettings, coefficients: ['pearson', 'manders', 'mic'], mic: { alpha: 0.6, c: 15 } };
    const spotsOn: RecipeSettingsInput = { ...baseSettings, objects: { enabled: true } };
    const spots = (o: object): RecipeSettingsInput => ({ ...baseSettings, objects: { enabled: true, ...o } });
    const onVariants: Record<string, [RecipeSettingsInput, RecipeSettingsInput]> = {
      'mic.alpha': [micOn, { ...micOn, mic: { alpha: 0.7, c: 15 } }],
      'mic.c': [micOn, { ...micOn, mic: { alpha: 0.6, c: 16 } }],
      'objects.enabled': [baseSettings, spotsOn],
      'objects.k': [spotsOn, spots({ k: 6 })],
      'objects.minSeparationPx': [spotsOn, spots({ minSeparationPx: 4 })],
      'objects.pairDistance.kind': [spotsOn, spots({ pairDistance: { kind: 'um', um: 0.2 } })],
      'objects.pairDistance.pixels': [spotsOn, spots({ pairDistance: { kind: 'pixels', pixels: 3 } })],
      'objects.placements': [spotsOn, spots({ placements: 499 })],
      'objects.scale.kind': [spotsOn, spots({ scale: { kind: 'psf', psfWidthUm: 0.3, pixelSizeUm: 0.1 } })],
      'objects.scale.sigmaPx': [spotsOn, spots({ scale: { kind: 'pixels', sigmaPx: 2 } })],
      'objects.seed': [spotsOn, spots({ seed: 12 })],
      'objects.axial': [spotsOn, spots({ axial: { kind: 'slices', sigmaZ: 1.2 } })],
      'objects.axial.kind': [spots({ axial: { kind: 'slices', sigmaZ: 1.2 } }), spots({ axial: { kind: 'psf', psfDepthUm: 0.7 } })],
      'objects.axial.sigmaZ': [spots({ axial: { kind: 'slices', sigmaZ: 1.2 } }), spots({ axial: { kind: 'slices', sigmaZ: 1.3 } })],
      'objects.axial.psfDepthUm': [spots({ axial: { kind: 'psf', psfDepthUm: 0.7 } }), spots({ axial: { kind: 'psf', psfDepthUm: 0.8 } })],
      'objects.axial.zStepUm': [spots({ axial: { kind: 'psf', psfDepthUm: 0.7 } }), spots({ axial: { kind: 'psf', psfDepthUm: 0.7, zStepUm: 0.25 } })],
    };
    for (const [p, [on, v]] of Object.entries(onVariants)) {
      const text = stacked(v);
      expect(text, p).not.toBe(stacked(on));
      expect(text, p).not.toMatch(/\b[a-z]+\.[a-z][A-Za-z]* = /);
    }
    // the variants cover every setting of the recipe (the coefficient list is stated in its own paragraph from
    // the report's coefficients; the stopping rule has one kind only)
    const covered = new Set([...Object.keys(variants), ...Object.keys(onVariants)]);
    for (const [p] of settingLeaves(RecipeSettings.parse(baseSettings))) if (p !== 'coefficients' && p !== 'threshold.stoppingRule.kind') expect(covered, p).toContain(p);
    const ref = stacked(baseSettings);
    for (const [p, v] of Object.entries(variants)) {
      const text = stacked(v);
      expect(text, p).not.toBe(ref);
      expect(text, p).not.toMatch(/\b[a-z]+\.[a-z][A-Za-z]* = /);
    }
    expect(ref).toContain('Slice 3 of each stack is measured');
  });

  it('every paragraph reads as sentences: a capital first, a full stop last, no doubled parentheses', () => {
    const text = methodsParagraph(withOrigins((i) => (i < 4 ? { how: 'drawn' } : { how: 'found', settings: FOUND, edited: false })));
    const paragraphs = text.split('\n\nReferences\n')[0].split('\n\n');
    expect(paragraphs.length).toBeGreaterThan(4);
    for (const p of paragraphs) expect(p, p.slice(0, 60)).toMatch(/^[A-Z].*\.$/s);
    expect(text.match(/.{60}\) \(.{40}/g)).toBeNull();
  });
});

describe('spots found in 3D', () => {
  const group = { sigmaPx: 1.5, sigmaZ: 0.75, zScale: 2, pixelSizeUm: 0.1, zStepUm: 0.2, pairDistancePx: 2, cells: 8 };
  const with3d = (spots3d: ReportSnapshot['spots3d']) => methodsParagraph({ ...structuredClone(base), spots3d });

  it('states that spots were found in 3D, σz in slices and µm, and that distances are specimen distances with z scaled by the z step, in µm', () => {
    const text = with3d({ groups: [group], planeCells: 0 });
    // voxel 0.1 × 0.1 × 0.2 µm: σz = 1.5 · 0.1 / 0.2 = 0.75 slices = 0.15 µm, as wide as σ = 1.5 px = 0.15 µm across; one slice = 2 pixel widths; d = 2 px = 0.2 µm
    expect(text).toContain('Spots in 3D: for 8 cells of z-stacks measured in 3D, spots were found in 3D over the cell\'s voxels with the Laplacian-of-Gaussian filter at σ = 1.5 pixels across the plane and σz = σ × pixel size / z step = 0.75 slices along the optical axis (voxel 0.1 × 0.1 × 0.2 µm, so the filter is 0.15 µm wide in x, y and 0.15 µm in z)');
    expect(text).toContain('nearest-neighbour distances, pairing within d and the chance placements use distances in the specimen: a z difference counts 2 pixel widths per slice (the z step over the pixel size), so distances are in pixel widths of 0.1 µm and d = 2 pixels is 0.2 µm.');
    expect(text).not.toContain('found within one plane');
    // no 3D spots (the base report, or an older report without the record): no such paragraph
    expect(base.spots3d).toEqual({ groups: [], planeCells: 0 });
    expect(base.methods).not.toContain('Spots in 3D');
    expect(with3d(undefined)).not.toContain('Spots in 3D');
  });

  it("states the recipe's axial width by its rule: σz in slices as set, or from the axial point-spread width", () => {
    const slices = with3d({ groups: [{ ...group, sigmaZ: 1.1, sigmaZFrom: 'slices', psfDepthUm: null }], planeCells: 0 });
    expect(slices).toContain('at σ = 1.5 pixels across the plane and σz = 1.1 slices (set in the recipe) along the optical axis (voxel 0.1 × 0.1 × 0.2 µm, so the filter is 0.15 µm wide in x, y and 0.22 µm in z)');
    const psf = with3d({ groups: [{ ...group, sigmaZ: 0.7 / 2.3548 / 0.2, sigmaZFrom: 'psf', psfDepthUm: 0.7 }], planeCells: 0 });
    expect(psf).toContain('and σz = axial point-spread width (FWHM 0.7 µm) / 2.355 / z step = 1.49 slices along the optical axis (voxel 0.1 × 0.1 × 0.2 µm, so the filter is 0.15 µm wide in x, y and 0.297 µm in z)');
    const unknown = with3d({ groups: [{ ...group, sigmaZ: null, zScale: null, pixelSizeUm: null, zStepUm: null, sigmaZFrom: 'slices', psfDepthUm: null }], planeCells: 0 });
    expect(unknown).toContain('and σz set in the recipe along the optical axis (the voxel size is not recorded');
  });

  it('without a recorded voxel size the axial scale is named but no value or µm is invented; cells found within a plane are counted', () => {
    const text = with3d({ groups: [{ ...group, sigmaZ: null, zScale: null, pixelSizeUm: null, zStepUm: null, cells: 5 }], planeCells: 3 });
    expect(text).toContain('for 5 cells of z-stacks measured in 3D, spots were found in 3D over the cell\'s voxels with the Laplacian-of-Gaussian filter at σ = 1.5 pixels across the plane and σz = σ × pixel size / z step along the optical axis (the voxel size is not recorded, so its value is not stated here)');
    expect(text).toContain('use distances in the specimen, z differences scaled by the z step, measured in pixel widths. The spots of the other 3 cells were found within one plane.');
    const para = text.split('\n\n').find((p) => p.startsWith('Spots in 3D'))!;
    expect(para).not.toContain('µm');
    expect(para).toMatch(/^[A-Z].*\.$/s);
  });

  it('a report collects them from the measurements\' provenance (the field\'s voxel size for rows recorded before it), one group per voxel size', async () => {
    const rows = t.ctx.db.select({ id: measurements.id, fieldId: measurements.fieldId, provenance: measurements.provenance }).from(measurements).all();
    const fieldIds = [...new Set(rows.map((r) => r.fieldId))].sort((a, b) => a - b);
    expect(fieldIds).toHaveLength(6);
    // fields 3 and 4 carry voxel 0.1 × 0.1 × 0.3 µm, used for their rows that predate the record
    t.ctx.db.update(fields).set({ pixelSizeUm: 0.1, zStepUm: 0.3, sizeZ: 5 }).where(inArray(fields.id, fieldIds.slice(2, 4))).run();
    const applied = { sigmaPx: 1.5, k: 5, minSeparationPx: 3, pairDistancePx: 2, placements: 99, seed: 1 };
    for (const r of rows) {
      const i = fieldIds.indexOf(r.fieldId);
      const objects = i === 0 ? { ...applied, volume: { pixelSizeUm: 0.1, zStepUm: 0.2, zScale: 2, sigmaZ: 0.75 } } : i === 1 ? { ...applied, volume: { pixelSizeUm: 0.1, zStepUm: 0.2, zScale: 2, sigmaZ: 0.75, sigmaZFrom: 'lateral' } } : applied;
      t.ctx.db.update(measurements).set({ provenance: { ...(r.provenance as object), objects, z: i < 4 ? '3D 0-4' : 'slice 2' } }).where(eq(measurements.id, r.id)).run();
    }
    const bio = await t.login('biologist');
    const res = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Spots in 3D', coefficients: ['pearson'] });
    expect(res.status).toBe(201);
    const snap = res.body.snapshot as ReportSnapshot;
    // 24 cells, the first (field 1) excluded: 7 + 8 found in 3D, 8 within a plane
    expect(snap.spots3d!.planeCells).toBe(8);
    const [a, b] = snap.spots3d!.groups;
    expect(snap.spots3d!.groups).toHaveLength(2);
    // rows recorded before sigmaZFrom (field 1) and after it (field 2) with today's rule form one group
    expect(a).toEqual({ sigmaPx: 1.5, sigmaZ: 0.75, sigmaZFrom: 'lateral', psfDepthUm: null, zScale: 2, pixelSizeUm: 0.1, zStepUm: 0.2, pairDistancePx: 2, cells: 7 });
    expect(b).toMatchObject({ sigmaPx: 1.5, pixelSizeUm: 0.1, zStepUm: 0.3, pairDistancePx: 2, cells: 8 });
    expect(b.zScale!).toBeCloseTo(3, 12);
    expect(b.sigmaZ!).toBeCloseTo(0.5, 12);
    expect(snap.methods).toContain('for 7 cells of z-stacks measured in 3D');
    expect(snap.methods).toContain('for 8 cells of z-stacks measured in 3D, spots were found in 3D over the cell\'s voxels with the Laplacian-of-Gaussian filter at σ = 1.5 pixels across the plane and σz = σ × pixel size / z step = 0.5 slices along the optical axis (voxel 0.1 × 0.1 × 0.3 µm, so the filter is 0.15 µm wide in x, y and 0.15 µm in z)');
    expect(snap.methods).toContain('a z difference counts 3 pixel widths per slice');
    expect(snap.methods).toContain('The spots of the other 8 cells were found within one plane.');
  });
});
