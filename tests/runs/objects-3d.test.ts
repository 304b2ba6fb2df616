/**
 * Runs with Spots on over a field measured in 3D: the stored object measures and spots equal
 * `analyzeObjects3D` (shared/analysis/objects3d.ts, checked against planted 3D spots and SciPy's cKDTree in
 * tests/analysis/spots-3d.test.ts) on the cell's voxels, with σz and the slice spacing from the field's voxel
 * size; a field without one fails with a sentence saying what to enter. The volume is the planted 3D spot
 * fixture of tests/fixtures/spots/generate.py (channel 2: the same volume one pixel to the right).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { checkFieldInputs, computeFieldResult, FieldJobError } from '../../server/runs/compute.js';
import type { FieldJob } from '../../server/runs/job.js';
import { RecipeSettings, type RecipeSettingsInput } from '../../shared/schemas/recipes.js';
import { cellVoxels } from '../../shared/schemas/cells.js';
import { analyzeObjects3D, objectMeasures, type ObjectResult } from '../../shared/analysis/index.js';

const dir = fileURLToPath(new URL('../fixtures/spots/', import.meta.url));
const spec = JSON.parse(readFileSync(dir + 'expected.json', 'utf8')).detection3d[0] as { file: string; width: number; height: number; depth: number; zScale: number; truth: [number, number, number][] };
const { width: W, height: H, depth: D } = spec;
const b = readFileSync(dir + spec.file);
const v1 = new Uint16Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
const v2 = Uint16Array.from(v1, (v, i) => (i % W === 0 ? v : v1[i - 1]));
const PIXEL_UM = 0.1, Z_UM = PIXEL_UM * spec.zScale;
const cells: FieldJob['cells'] = [
  { id: 7, role: 'cell', geometry: { kind: 'rect', x: 0, y: 0, width: 32, height: 64 } },
  { id: 8, role: 'cell', geometry: { kind: 'rect', x: 32, y: 0, width: 32, height: 64 } },
];
function job(settings: RecipeSettingsInput, extra: Partial<FieldJob> = {}): FieldJob {
  return {
    runId: 1,
    fieldId: 1,
    fieldName: 'Stack',
    sources: [{ key: 'a', sha256: 'a'.repeat(64), channel: 1 }, { key: 'b', sha256: 'b'.repeat(64), channel: 1 }],
    width: W,
    height: H,
    sizeZ: D,
    bitDepth: 16,
    sampleFormat: 'uint',
    pixelSizeUm: PIXEL_UM,
    zStepUm: Z_UM,
    cells,
    settings: RecipeSettings.parse(settings),
    recipe: { id: 1, name: 'R', version: 1, status: 'approved' },
    provisional: false,
    calibration: null,
    calibrationProblem: null,
    ...extra,
  };
}
const px = { width: W, height: H, depth: D, ch1: v1, ch2: v2 };
const spotsOn = { threshold: { method: 'none' as const }, minCellPixels: 0, objects: { enabled: true, pairDistance: { kind: 'um' as const, um: 0.2, pixelSizeUm: null }, placements: 99 } };

describe('a run with Spots on over a field measured in 3D', () => {
  it('stores the 3D object measures and spots [x, y, z] of each cell, equal to analyzeObjects3D on its voxels', () => {
    const { measurements, spots } = computeFieldResult(job(spotsOn), px);
    expect(measurements).toHaveLength(2);
    for (const [k, cell] of cells.entries()) {
      const vox = cellVoxels(cell.geometry, W, H, 0, D);
      // d = 0.2 µm / 0.1 µm = 2 pixel widths; σz = 1.5 px · 0.1 / 0.2 = 0.75 slices
      const want = analyzeObjects3D(v1, v2, W, H, D, vox, { spotSigma: 1.5, spotK: 5, minSeparation: 3, pairDistance: 2, placements: 99, seed: 1, zScale: spec.zScale });
      const m = measurements[k] as unknown as Record<string, unknown>;
      for (const [key, v] of Object.entries(objectMeasures(want.result as unknown as ObjectResult))) expect(m[key], key).toBe(v);
      const mine = spots.filter((s) => s.cellId === cell.id && s.channel === 1);
      expect(mine.map((s) => [s.x, s.y, s.z])).toEqual(want.result.spots1);
    }
    // planted ground truth: every channel-1 spot found (within 1 pixel width, z scaled), every one paired 1 px away
    let hit = 0;
    for (const [x, y, z] of spec.truth) if (spots.some((s) => s.channel === 1 && Math.hypot(s.x - x, s.y - y, (s.z! - z) * spec.zScale) <= 1)) hit++;
    expect(hit / spec.truth.length).toBeGreaterThanOrEqual(0.9);
    // the right cell: every partner (1 px to the right) inside it; in the left one the two spots at its right
    // edge have their partners in the right cell
    const [left, right] = measurements as unknown as Record<string, number>[];
    expect(right.spotPaired1).toBe(1);
    expect(Math.abs(right.spotMedianNearest1 - 1)).toBeLessThan(0.15);
    expect(left.spotPaired1).toBe(0.8);
  });

  it('records the 3D path in each measurement\'s provenance: the voxel size, the slice spacing and σz in slices; a single slice records none', () => {
    const { measurements } = computeFieldResult(job(spotsOn), px);
    // σz = σ · pixel size / z step = 1.5 · 0.1 / Z_UM slices; the slice spacing Z_UM / 0.1 pixel widths
    for (const m of measurements)
      expect(m.provenance.objects).toEqual({ sigmaPx: 1.5, k: 5, minSeparationPx: 3, pairDistancePx: 2, placements: 99, seed: 1, volume: { pixelSizeUm: PIXEL_UM, zStepUm: Z_UM, zScale: Z_UM / PIXEL_UM, sigmaZ: 1.5 / (Z_UM / PIXEL_UM), sigmaZFrom: 'lateral' } });
    expect(measurements[0].provenance.z).toBe(`3D 0-${D - 1}`);
    const flat = computeFieldResult(job({ ...spotsOn, z: { mode: 'slice', slice: 12 } }), { width: W, height: H, ch1: v1.subarray(12 * W * H, 13 * W * H), ch2: v2.subarray(12 * W * H, 13 * W * H) });
    for (const m of flat.measurements) expect(m.provenance.objects).not.toHaveProperty('volume');
  });

  it("uses the recipe's axial width: σz in slices, or the axial PSF FWHM / 2.355 / z step, recorded with its rule", () => {
    const slices = computeFieldResult(job({ ...spotsOn, objects: { ...spotsOn.objects, axial: { kind: 'slices', sigmaZ: 1.1 } } }), px);
    const want = analyzeObjects3D(v1, v2, W, H, D, cellVoxels(cells[1].geometry, W, H, 0, D), { spotSigma: 1.5, spotK: 5, minSeparation: 3, pairDistance: 2, placements: 99, seed: 1, zScale: spec.zScale, spotSigmaZ: 1.1 });
    expect(slices.spots.filter((s) => s.cellId === 8 && s.channel === 1).map((s) => [s.x, s.y, s.z])).toEqual(want.result.spots1);
    const lateral = computeFieldResult(job(spotsOn), px);
    // a different axial width moves the centres (the z weights of the centroid differ)
    expect(slices.spots.map((s) => s.z)).not.toEqual(lateral.spots.map((s) => s.z));
    expect(slices.measurements[0].provenance.objects!.volume).toEqual({ pixelSizeUm: PIXEL_UM, zStepUm: Z_UM, zScale: Z_UM / PIXEL_UM, sigmaZ: 1.1, sigmaZFrom: 'slices' });
    const psf = computeFieldResult(job({ ...spotsOn, objects: { ...spotsOn.objects, axial: { kind: 'psf', psfDepthUm: 0.6 } } }), px);
    const v = psf.measurements[0].provenance.objects!.volume!;
    expect(v).toMatchObject({ sigmaZFrom: 'psf', psfDepthUm: 0.6 });
    expect(v.sigmaZ).toBeCloseTo(0.6 / (2 * Math.sqrt(2 * Math.LN2)) / Z_UM, 12);
    // a width the filter cannot take (above 50 slices) is refused before any pixel is read, fixed in the recipe
    let err: unknown;
    try {
      checkFieldInputs(job({ ...spotsOn, objects: { ...spotsOn.objects, axial: { kind: 'psf', psfDepthUm: 900, zStepUm: 0.1 } } }), D);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(FieldJobError);
    expect((err as FieldJobError).message).toBe("field \"Stack\": the spots' axial width σz must be in (0, 50] slices, received 3821.95 (from the axial point-spread width 900 µm at 0.1 µm between slices)");
    expect((err as FieldJobError).fix).toBe('recipe');
  });

  it('a field without its voxel size is refused before any pixel is read, with what to enter on the field', () => {
    const inPixels = { ...spotsOn, objects: { ...spotsOn.objects, pairDistance: { kind: 'pixels' as const, pixels: 2 } } };
    for (const extra of [{ zStepUm: null }, { pixelSizeUm: null }]) {
      const j = job(inPixels, extra);
      let err: unknown;
      try {
        checkFieldInputs(j, D);
      } catch (e) {
        err = e;
      }
      expect(err).toBeInstanceOf(FieldJobError);
      expect((err as FieldJobError).message).toMatch(/spots in 3D .* field "Stack" \(measured in 3D over 24 slices\) has no (z step|pixel size)/);
      expect((err as FieldJobError).fix).toBe('field');
    }
    // one slice of the same stack stays 2D: no z, no voxel size needed
    const flat = computeFieldResult(job({ ...inPixels, z: { mode: 'slice', slice: 12 } }, { zStepUm: null }), { width: W, height: H, ch1: v1.subarray(12 * W * H, 13 * W * H), ch2: v2.subarray(12 * W * H, 13 * W * H) });
    for (const s of flat.spots) expect(s.z).toBeUndefined();
  });
});
