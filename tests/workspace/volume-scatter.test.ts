/**
 * The Pixel scatter and live preview over a cell's whole volume (issue 16), computed by the scatter worker's
 * own code (src/features/workspace/lib/scatterCore.ts: the volume assembled from slices as they arrive, the
 * region's voxels from `cellVoxels`, the engine's measurePairs). Reference values: SciPy / R energy / NumPy on
 * the same voxels (tests/fixtures/volumes/generate.py, expected.json) to 1e-9 relative, for 3-D label cells
 * and outlines with a z range, at the fixture's manual thresholds. Also: the whole field's default
 * thresholds over a volume are Otsu over the union of the cells' voxels, each voxel once.
 */
import { fileURLToPath } from 'node:url';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { decodeChannel } from '../../server/images/decode.js';
import { concatSlices } from '../../server/images/projection.js';
import { label3dOf } from '../../server/routes/cells.js';
import { labelRegions } from '../../shared/analysis/labels.js';
import { collectPairs, computeThresholds, prepare } from '../../shared/analysis/index.js';
import { cellVoxels, type CellGeometry } from '../../shared/schemas/cells.js';
import { livePreview, prepareRegion, regionStream, volumeAssembly } from '../../src/features/workspace/lib/scatterCore';
import { cellsVoxelMask } from '../../src/features/workspace/lib/scatterBasis';
import { VOLUME_PREVIEW_MAX_BYTES, volumeBytes, volumeFits } from '../../src/features/workspace/lib/volumePreview';
import type { SampleArray } from '../../shared/pixels/codec.js';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
const expected = JSON.parse(readFileSync(dir + 'expected.json', 'utf8'));
const u16 = expected.cases.find((c: { name: string }) => c.name === 'u16');
const W = expected.width as number, H = expected.height as number, Z = expected.slices as number;
type Ref = Record<string, number | string | null>;

function near(a: number | null | undefined, b: number | null, what: string) {
  if (a === null || a === undefined || b === null) return expect(a ?? null, what).toBe(b);
  const tol = what.endsWith('dcorPValue') ? 1e-12 : 1e-9 * Math.max(1e-300, Math.abs(b));
  expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(tol);
}

async function volume() {
  const a = await decodeChannel(dir + 'u16.ch1.tif', 1, { pages: 'slices' });
  const b = await decodeChannel(dir + 'u16.ch2.tif', 1, { pages: 'slices' });
  expect(a.slices.length).toBe(Z);
  // slices arrive out of order, as separate messages
  const v = volumeAssembly(W, H, Z, 65535);
  for (const z of [3, 0, 4, 1]) v.put(z, a.slices[z] as SampleArray, b.slices[z] as SampleArray);
  expect(v.image()).toBeNull();
  v.put(2, a.slices[2] as SampleArray, b.slices[2] as SampleArray);
  const img = v.image()!;
  expect(Array.from(img.ch1)).toEqual(Array.from(concatSlices(a.slices, 0, Z - 1)));
  return img;
}

describe('whole-volume scatter and live preview', () => {
  it('3-D label cells: every coefficient equals SciPy / R energy on the same voxels', async () => {
    const img = await volume();
    const labels = await decodeChannel(dir + 'labels3d.tif', 1, { pages: 'slices' });
    const regions = labelRegions(concatSlices(labels.slices, 0, Z - 1));
    const refs = (u16.labels3d as Ref[]).filter((r) => r.label !== 0);
    expect(regions.map((r) => r.label)).toEqual(refs.map((r) => r.label));
    for (const reg of regions) {
      const g = label3dOf(reg.label, reg.indices, W * H);
      const ref = refs.find((r) => r.label === reg.label)!;
      const result = livePreview(prepareRegion(img, g), u16.t1, u16.t2);
      expect(result.pixels, `label ${reg.label}`).toBe(ref.pixels);
      for (const [k, v] of Object.entries(ref)) if (k !== 'label' && k !== 'pixels') near(result[k as keyof typeof result] as number | null, v as number | null, `label ${reg.label} ${k}`);
    }
  });

  it('outlines with a z range: the outline on the slices of its range, equal to SciPy', async () => {
    const img = await volume();
    const rois = JSON.parse(readFileSync(dir + 'rois.json', 'utf8')) as { name: string; points: [number, number][]; z?: [number, number] }[];
    for (const roi of rois) {
      const g: CellGeometry = { kind: 'polygon', points: roi.points, ...(roi.z ? { z: roi.z } : {}) };
      const ref = (u16.rois as Ref[]).find((r) => r.label === roi.name)!;
      const result = livePreview(prepareRegion(img, g), u16.t1, u16.t2);
      expect(result.pixels, roi.name).toBe(ref.pixels);
      for (const k of ['pearson', 'spearman', 'kendallTauB', 'mandersM1', 'mandersM2', 'distanceCorrelation']) near(result[k as 'pearson'], ref[k] as number | null, `${roi.name} ${k}`);
    }
  });

  it('the whole field: default thresholds are Otsu over the union of the cells’ voxels', async () => {
    const img = await volume();
    const cells: CellGeometry[] = [
      { kind: 'rect', x: 2, y: 2, width: 8, height: 6, z: [1, 3] },
      { kind: 'rect', x: 6, y: 4, width: 8, height: 8, z: [2, 5] },
    ];
    const r = prepareRegion(img, null, 256, cells);
    const union = new Set([...cellVoxels(cells[0], W, H, 0, Z), ...cellVoxels(cells[1], W, H, 0, Z)]);
    expect(r.basis).toEqual({ over: 'cells', cells: 2, pixels: union.size, saturatedLeftOut: 0 });
    expect(cellsVoxelMask(cells, W, H, Z).reduce((n, v) => n + v, 0)).toBe(union.size);
    const th = computeThresholds(prepare(collectPairs(img.ch1, img.ch2, { kind: 'indices', indices: Uint32Array.from([...union].sort((a, b) => a - b)) })), { method: 'otsu' });
    expect(r.otsu).toEqual({ t1: th.ch1, t2: th.ch2 });
    expect(r.n).toBe(W * H * Z);
  });

  it('beyond the size limit, one cell read slice by slice: only its slices, only its voxels, the same coefficients', async () => {
    const a = await decodeChannel(dir + 'u16.ch1.tif', 1, { pages: 'slices' });
    const b = await decodeChannel(dir + 'u16.ch2.tif', 1, { pages: 'slices' });
    const labels = await decodeChannel(dir + 'labels3d.tif', 1, { pages: 'slices' });
    const regions = labelRegions(concatSlices(labels.slices, 0, Z - 1));
    const rois = JSON.parse(readFileSync(dir + 'rois.json', 'utf8')) as { name: string; points: [number, number][]; z?: [number, number] }[];
    const cases: [string, CellGeometry, Ref][] = [
      ...regions.map((reg): [string, CellGeometry, Ref] => [`label ${reg.label}`, label3dOf(reg.label, reg.indices, W * H), (u16.labels3d as Ref[]).find((r) => r.label === reg.label)!]),
      ...rois.map((roi): [string, CellGeometry, Ref] => [roi.name, { kind: 'polygon', points: roi.points, ...(roi.z ? { z: roi.z } : {}) }, (u16.rois as Ref[]).find((r) => r.label === roi.name)!]),
    ];
    for (const [name, g, ref] of cases) {
      const s = regionStream(W, H, Z, g, 65535);
      const [lo, hi] = 'z' in g && g.z ? [g.z[0] - 1, g.z[1] - 1] : [0, Z - 1];
      expect(s.slices, name).toEqual([lo, hi]);
      // slices arrive last first
      for (let z = hi; z >= lo; z--) {
        expect(s.image()).toBeNull();
        s.put(z, a.slices[z] as SampleArray, b.slices[z] as SampleArray);
      }
      const img = s.image()!;
      expect(img.compact).toBe(true);
      const r = prepareRegion(img, g);
      expect(r.basis.over, name).toBe('region');
      const result = livePreview(r, u16.t1, u16.t2);
      expect(result.pixels, name).toBe(ref.pixels);
      for (const k of ['pearson', 'spearman', 'kendallTauB', 'mandersM1', 'mandersM2', 'overlap', 'icq', 'distanceCorrelation']) near(result[k as 'pearson'], ref[k] as number | null, `${name} ${k}`);
    }
    // a slice outside the cell's range, and more voxel bytes than allowed, are refused with the figures quoted
    const box = regionStream(W, H, Z, { kind: 'rect', x: 0, y: 0, width: 10, height: 10, z: [2, 3] }, 65535, 600);
    expect(() => box.put(0, a.slices[0] as SampleArray, b.slices[0] as SampleArray)).toThrow("slice 0 is not one of the region's slices 1–2");
    box.put(1, a.slices[1] as SampleArray, b.slices[1] as SampleArray);
    expect(() => box.put(2, a.slices[2] as SampleArray, b.slices[2] as SampleArray)).toThrow("the cell's voxels take 800 bytes by slice 3, more than the 600 the browser preview keeps");
  });

  it('states the size limit: a 1024 × 1024 × 32 16-bit stack fits, one of 64 slices does not', () => {
    const f = { width: 1024, height: 1024, bitDepth: 16, sampleFormat: 'uint' as const };
    expect(volumeBytes({ ...f, sizeZ: 32 })).toBe(2 * 2 * 1024 * 1024 * 32);
    expect(volumeFits({ ...f, sizeZ: 32 })).toBe(true);
    expect(volumeFits({ ...f, sizeZ: 64 })).toBe(false);
    expect(volumeFits({ ...f, sizeZ: 1 })).toBe(false);
    expect(VOLUME_PREVIEW_MAX_BYTES).toBe(250_000_000);
  });
});
