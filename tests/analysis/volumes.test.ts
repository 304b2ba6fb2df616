/**
 * Volumes in the engine: a 3-D region is a voxel set, so every coefficient and both automatic thresholds
 * (Otsu 1979; Costes et al. 2004) depend on which voxels are in it, not on how slices are laid out or
 * ordered. Data: the stacks of tests/fixtures/volumes (generate.py), decoded by the intake module; the
 * reference values for the same voxels (SciPy, R energy, scikit-image) are checked in
 * tests/cli/analyze-volumes.test.ts.
 */
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { collectPairs, computeThresholds, labelRegions, measurePairs, pairsFromArrays, prepare, REGION_RESULT_KEYS, type ChannelArray } from '../../shared/analysis/index';
import { Xoshiro128 } from '../../shared/analysis/prng';
import { decodeChannel, decodeChannels, type PixelArray } from '../../server/images/decode';
import { readLabelStack } from '../../server/images/mask';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));

function concat(slices: PixelArray[]): ChannelArray {
  const out = new (slices[0].constructor as new (n: number) => PixelArray)(slices.reduce((s, a) => s + a.length, 0));
  slices.forEach((a, z) => out.set(a as never, z * a.length));
  return out;
}

async function volume(name: string) {
  const a = await decodeChannel(dir + `${name}.ch1.tif`, 1, { pages: 'slices' });
  const b = await decodeChannel(dir + `${name}.ch2.tif`, 1, { pages: 'slices' });
  return { ch1: concat(a.slices), ch2: concat(b.slices), slices1: a.slices, slices2: b.slices };
}

/** A seeded permutation of 0..n−1 (the engine's Fisher–Yates). */
function permutation(n: number, seed: number): Uint32Array {
  const p = new Uint32Array(n);
  for (let i = 0; i < n; i++) p[i] = i;
  return new Xoshiro128(seed).shuffle(p);
}

describe('z-stacks decode to the right (c, z) planes', () => {
  for (const name of ['u8', 'u16', 'f32']) {
    it(`${name}: OME XYCZT, OME XYZCT and stated sizes give the per-channel stacks' planes`, async () => {
      const ref = await volume(name);
      for (const f of [`${name}.xyczt.ome.tif`, `${name}.xyzct.ome.tif`, `${name}.stated.tif`]) {
        const d = await decodeChannels(dir + f, [1, 2]);
        expect(d.ch1.length, f).toBe(5);
        expect(d.info.sizeZ, f).toBe(5);
        for (let z = 0; z < 5; z++) {
          expect(Buffer.from(d.ch1[z].buffer, d.ch1[z].byteOffset, d.ch1[z].byteLength).equals(Buffer.from(ref.slices1[z].buffer, ref.slices1[z].byteOffset, ref.slices1[z].byteLength)), `${f} ch1 z${z}`).toBe(true);
          expect(Buffer.from(d.ch2[z].buffer, d.ch2[z].byteOffset, d.ch2[z].byteLength).equals(Buffer.from(ref.slices2[z].buffer, ref.slices2[z].byteOffset, ref.slices2[z].byteLength)), `${f} ch2 z${z}`).toBe(true);
        }
      }
    });
  }
  it('a plain multi-page file is still read page = channel unless the pages are asked for as slices', async () => {
    const asChannels = await decodeChannel(dir + 'u8.ch1.tif', 3);
    expect(asChannels.slices).toHaveLength(1);
    const asSlices = await decodeChannel(dir + 'u8.ch1.tif', 1, { pages: 'slices' });
    expect(asSlices.slices).toHaveLength(5);
    expect(asSlices.slices[2]).toEqual(asChannels.slices[0]);
  });
});

describe('3-D regions are voxel sets (order of voxels does not matter)', () => {
  for (const name of ['u8', 'u16', 'f32']) {
    it(`${name}: Otsu and Costes over the voxels of all regions, and every coefficient per region, are unchanged by shuffling the voxels`, async () => {
      const v = await volume(name);
      const lab = await readLabelStack(dir + 'labels3d.tif', { width: 22, height: 18 });
      const regions = labelRegions(concat(lab.slices));
      expect(regions.map((r) => r.label)).toEqual([1, 4, 7]);
      const union = new Uint32Array(regions.reduce((s, r) => s + r.indices.length, 0));
      let o = 0;
      for (const r of regions) union.set(r.indices, (o += r.indices.length) - r.indices.length);
      union.sort();
      const shuffled = (idx: Uint32Array, seed: number) => {
        const p = permutation(idx.length, seed);
        const x = new Float64Array(idx.length), y = new Float64Array(idx.length);
        for (let k = 0; k < idx.length; k++) {
          x[k] = v.ch1[idx[p[k]]];
          y[k] = v.ch2[idx[p[k]]];
        }
        return prepare(pairsFromArrays(x, y));
      };
      const inOrder = prepare(collectPairs(v.ch1, v.ch2, { kind: 'indices', indices: union }));
      const mixed = shuffled(union, 16);
      for (const method of ['otsu', 'costes'] as const) {
        const a = computeThresholds(inOrder, { method }), b = computeThresholds(mixed, { method });
        // common practice: the same multiset of values gives the same threshold
        expect(b.ch1, `${method} ch1`).toBe(a.ch1);
        expect(b.ch2, `${method} ch2`).toBe(a.ch2);
      }
      const t = computeThresholds(inOrder, { method: 'otsu' });
      for (const r of regions) {
        const a = measurePairs(collectPairs(v.ch1, v.ch2, { kind: 'indices', indices: r.indices }), t);
        const b = measurePairs(shuffled(r.indices, r.label), t);
        for (const k of REGION_RESULT_KEYS) {
          const x = a[k] as number | null, y = b[k] as number | null;
          if (x === null || y === null) expect(y, k).toBe(x);
          else expect(Math.abs(x - y), `${r.label}.${k}: ${x} vs ${y}`).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(x)));
        }
      }
    });
  }
});
