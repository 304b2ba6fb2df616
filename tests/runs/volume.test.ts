/**
 * Recipes measuring every slice voxel by voxel in 3D (z 'volume', the default): a cell's outline applies to
 * every slice of the stack. Reference values: tests/fixtures/volumes/generate.py (SciPy pearsonr / spearmanr /
 * kendalltau, R energy, NumPy definitions) for the one-plane label image extruded over every slice, whose two
 * labels are the two rectangles used here.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { computeField, describeZ, FieldJobError, loadJobPixels } from '../../server/runs/compute.js';
import { selectZ } from '../../server/images/intake.js';
import { decodeChannel } from '../../server/images/decode.js';
import { concatSlices } from '../../server/images/projection.js';
import type { FieldJob } from '../../server/runs/job.js';
import type { FileStore } from '../../server/services.js';
import { RecipeSettings, describeSetting, type RecipeSettingsInput } from '../../shared/schemas/recipes.js';
import { COEFFICIENTS } from '../../shared/coefficients.js';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
const expected = JSON.parse(readFileSync(dir + 'expected.json', 'utf8'));
const u16 = expected.cases.find((c: { name: string }) => c.name === 'u16');
const W = 22, H = 18, NZ = 5;
const rect = (x: number, y: number, w: number, h: number) => ({ kind: 'rect' as const, x, y, width: w, height: h });
// labels2d.tif of the fixture: label 2 = rows 3..9 × columns 4..12, label 3 = rows 11..16 × columns 14..20
const cells: FieldJob['cells'] = [
  { id: 2, role: 'cell', geometry: rect(4, 3, 9, 7) },
  { id: 3, role: 'cell', geometry: rect(14, 11, 7, 6) },
];

function job(settings: RecipeSettingsInput, extra: Partial<FieldJob> = {}): FieldJob {
  return {
    runId: 1,
    fieldId: 1,
    fieldName: 'F',
    sources: [{ key: 'stack', sha256: 'a'.repeat(64), channel: 1 }, { key: 'stack', sha256: 'a'.repeat(64), channel: 2 }],
    width: W,
    height: H,
    sizeZ: NZ,
    bitDepth: 16,
    sampleFormat: 'uint',
    pixelSizeUm: null,
    cells,
    settings: RecipeSettings.parse(settings),
    recipe: { id: 1, name: 'R', version: 1, status: 'approved' },
    provisional: false,
    calibration: null,
    calibrationProblem: null,
    ...extra,
  };
}

async function volume() {
  const a = await decodeChannel(dir + 'u16.ch1.tif', 1, { pages: 'slices' });
  const b = await decodeChannel(dir + 'u16.ch2.tif', 1, { pages: 'slices' });
  return { width: W, height: H, depth: NZ, ch1: concatSlices(a.slices, 0, NZ - 1), ch2: concatSlices(b.slices, 0, NZ - 1) };
}

const manual = { threshold: { method: 'manual' as const, t1: u16.t1, t2: u16.t2 }, minCellPixels: 0 };

describe('recipes: z "every slice, voxel by voxel (3D)"', () => {
  it('is the default, and its sentence says what is measured', () => {
    const s = RecipeSettings.parse({});
    expect(s.z).toEqual({ mode: 'volume' });
    expect(describeSetting('z', s)).toMatch(/^Every slice of each stack is measured voxel by voxel in 3D/);
    expect(describeZ(s.z, 5)).toBe('3D 0-4');
    expect(describeZ(s.z, 1)).toBe('slice 0');
  });
  it('a cell outline applies to every slice: every coefficient equals SciPy / R energy on the extruded voxels (1e-9 relative)', async () => {
    const rows = computeField(job(manual), await volume());
    expect(rows.map((r) => r.cellId)).toEqual([2, 3]);
    for (const row of rows) {
      const ref = u16.labels2d.find((r: { label: number }) => r.label === row.cellId);
      expect(row.pixels).toBe(ref.pixels);
      expect(row.provenance.z).toBe('3D 0-4');
      for (const c of COEFFICIENTS) {
        if (!(c.key in ref)) continue;
        const want = ref[c.key] as number | null, have = row[c.key] as number | null;
        if (want === null || have === null) expect(have, c.key).toBe(want);
        else expect(Math.abs(have - want), `${row.cellId}.${c.key}: ${have} vs ${want}`).toBeLessThanOrEqual(Math.max(c.key === 'dcorPValue' ? 1e-12 : 0, 1e-9 * Math.abs(want)));
      }
    }
  });
  it('loadJobPixels reads every slice of a stored OME stack as one volume', async () => {
    const bytes = readFileSync(dir + 'u16.xyzct.ome.tif');
    const store = { get: async () => bytes } as unknown as FileStore;
    const px = await loadJobPixels(store, job(manual));
    const ref = await volume();
    expect(px.depth).toBe(NZ);
    expect(Buffer.from(px.ch1.buffer, px.ch1.byteOffset, px.ch1.byteLength).equals(Buffer.from(ref.ch1.buffer, ref.ch1.byteOffset, ref.ch1.byteLength))).toBe(true);
    expect(Buffer.from(px.ch2.buffer, px.ch2.byteOffset, px.ch2.byteLength).equals(Buffer.from(ref.ch2.buffer, ref.ch2.byteOffset, ref.ch2.byteLength))).toBe(true);
    // one slice of the same stack is one plane
    const one = await loadJobPixels(store, job({ ...manual, z: { mode: 'slice', slice: 2 } }));
    expect(one.depth).toBe(1);
    expect(Array.from(one.ch1)).toEqual(Array.from(ref.ch1.subarray(2 * W * H, 3 * W * H)));
  });
  it('field thresholds are over the voxels of all cells; a single-plane field measures as before', async () => {
    const v = await volume();
    const rows = computeField(job({ threshold: { method: 'otsu' }, thresholdScope: 'field', minCellPixels: 0 }), v);
    expect(rows[0].threshold1).toBe(rows[1].threshold1);
    // the same voxels as one plane per slice stacked vertically (W × 5H, outlines repeated) give the same numbers
    const tall = { width: W, height: H * NZ, ch1: v.ch1, ch2: v.ch2 };
    const tallCells: FieldJob['cells'] = [];
    for (const c of cells) for (let z = 0; z < NZ; z++) tallCells.push({ id: c.id * 100 + z, role: 'cell', geometry: { ...(c.geometry as ReturnType<typeof rect>), y: (c.geometry as ReturnType<typeof rect>).y + z * H } });
    const flat = computeField(job({ threshold: { method: 'otsu' }, thresholdScope: 'field', minCellPixels: 0 }, { height: H * NZ, sizeZ: 1, cells: tallCells }), tall);
    expect(flat[0].threshold1).toBe(rows[0].threshold1);
    expect(flat[0].threshold2).toBe(rows[0].threshold2);
  });
  it('the randomization test scrambles 3-D blocks: depth given in slices, or from the axial PSF width and the z step', async () => {
    const v = await volume();
    const run = (blockSize: RecipeSettingsInput['randomization'] extends infer R ? (R extends { blockSize?: infer B } ? B : never) : never, extra: Partial<FieldJob> = {}) =>
      computeField(job({ ...manual, randomization: { enabled: true, count: 19, blockSize }, seed: 3 }, extra), v);
    const a = run({ kind: 'pixels', pixels: 3, slices: 2 });
    for (const r of a) {
      expect(r.provenance.randomizationCount).toBe(19);
      expect(r.randomizationP!).toBeGreaterThan(0);
      expect(r.randomizationP!).toBeLessThanOrEqual(1);
    }
    // 0.7 µm axial width at the field's 0.35 µm z step = 2 slices: the same blocks, the same numbers
    const b = run({ kind: 'psf', psfWidthUm: 0.3, pixelSizeUm: 0.1, psfDepthUm: 0.7 }, { zStepUm: 0.35 });
    expect(b.map((r) => r.randomizationP)).toEqual(a.map((r) => r.randomizationP));
    const c = run({ kind: 'psf', psfWidthUm: 0.3, pixelSizeUm: 0.1, psfDepthUm: 0.7, zStepUm: 0.35 });
    expect(c.map((r) => r.randomizationP)).toEqual(a.map((r) => r.randomizationP));
    expect(describeSetting('randomization', RecipeSettings.parse({ randomization: { enabled: true, blockSize: { kind: 'pixels', pixels: 3, slices: 2 } } }))).toContain('3 × 3-pixel blocks (2 slices deep in stacks measured in 3D)');
  });
  it('3-D randomization without a block depth fails the field with a message (no guessed depth)', async () => {
    const v = await volume();
    expect(() => computeField(job({ ...manual, randomization: { enabled: true, count: 5 } }), v)).toThrow(FieldJobError);
    expect(() => computeField(job({ ...manual, randomization: { enabled: true, count: 5 } }), v)).toThrow(/measured in 3D, but the randomization blocks have no depth/);
    expect(() => computeField(job({ ...manual, randomization: { enabled: true, count: 5, blockSize: { kind: 'psf', psfWidthUm: 0.3, pixelSizeUm: 0.1 } } }), v)).toThrow(/no axial point-spread width/);
    expect(() => computeField(job({ ...manual, randomization: { enabled: true, count: 5, blockSize: { kind: 'psf', psfWidthUm: 0.3, pixelSizeUm: 0.1, psfDepthUm: 0.7 } } }), v)).toThrow(/neither the recipe nor field "F" gives the z step/);
    // a single slice of the same stack needs no depth
    const one = computeField(job({ ...manual, z: { mode: 'slice', slice: 2 }, randomization: { enabled: true, count: 5 } }), { width: W, height: H, ch1: v.ch1.subarray(2 * W * H, 3 * W * H), ch2: v.ch2.subarray(2 * W * H, 3 * W * H) });
    expect(one[0].provenance.randomizationCount).toBe(5);
  });
  it('pixels that do not make whole slices are refused', () => {
    expect(() => computeField(job(manual), { width: W, height: H, depth: 2, ch1: new Uint16Array(W * H), ch2: new Uint16Array(W * H) })).toThrow(/396 and 396 pixels do not make 2 slices of 22×18/);
  });
  it("the pixels loader's 'all' is every slice as one volume", () => {
    const s = { ch1: [new Uint8Array([1, 2]), new Uint8Array([3, 4])], ch2: [new Uint8Array([5, 6]), new Uint8Array([7, 8])], sizeZ: 2 };
    const v = selectZ(s, 'all');
    expect(v.depth).toBe(2);
    expect(Array.from(v.ch1)).toEqual([1, 2, 3, 4]);
  });
});
