/**
 * Spot detection with pixels that have no value (missing: 'exclude'): the dilation of the missing set
 * against a direct Chebyshev-distance search, and detection equal to detection on the image cut to the
 * searched pixels — so no result depends on a missing pixel or on the value the filter reads for it.
 */
import { describe, expect, it } from 'vitest';
import { analyzeObjects, detectSpots, Xoshiro128 } from '../../shared/analysis/index';
import { missingMask, nearMissing } from '../../shared/analysis/missing';
import { missingMargin } from '../../shared/analysis/spots';

describe('nearMissing', () => {
  it('marks exactly the samples within Chebyshev distance r (and rz in z) of a marked one', () => {
    const rng = new Xoshiro128(3);
    for (const [w, h, d, r, rz] of [[17, 11, 1, 2, 0], [9, 13, 1, 0, 0], [12, 10, 4, 3, 1], [5, 5, 6, 1, 2]]) {
      const m = new Uint8Array(w * h * d);
      for (let i = 0; i < m.length; i++) m[i] = rng.nextFloat() < 0.03 ? 1 : 0;
      const got = nearMissing(m, w, h, r, d, rz);
      for (let z = 0; z < d; z++)
        for (let y = 0; y < h; y++)
          for (let x = 0; x < w; x++) {
            let want = 0;
            for (let zz = Math.max(0, z - rz); zz <= Math.min(d - 1, z + rz); zz++)
              for (let yy = Math.max(0, y - r); yy <= Math.min(h - 1, y + r); yy++)
                for (let xx = Math.max(0, x - r); xx <= Math.min(w - 1, x + r); xx++) if (m[zz * w * h + yy * w + xx]) want = 1;
            expect(got[z * w * h + y * w + x]).toBe(want);
          }
    }
  });
  it('finds non-finite samples of float channels only', () => {
    expect(missingMask([new Uint16Array(4), new Float32Array(4)], 4)).toBeNull();
    expect(Array.from(missingMask([new Float32Array([1, NaN, 2, 3]), Float64Array.from([0, 0, 0, -Infinity])], 4)!)).toEqual([0, 1, 0, 1]);
  });
});

describe("detection with missing: 'exclude'", () => {
  const W = 80, H = 60, SIGMA = 1.5;
  const rng = new Xoshiro128(8);
  const img = new Float64Array(W * H);
  for (let i = 0; i < img.length; i++) img[i] = 100 + 6 * (rng.nextFloat() - 0.5);
  const planted: [number, number][] = [[12.4, 14.2], [40.2, 30.7], [65.5, 12.3], [20.6, 48.1], [70.3, 50.4], [45.1, 8.8], [34.6, 40.5]];
  for (const [cx, cy] of planted) for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) img[y * W + x] += 300 * Math.exp(-((x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2) / (2 * SIGMA * SIGMA));
  // a block of missing pixels around (66, 12) and a missing column at x = 30
  const holed = img.slice();
  for (let y = 8; y < 16; y++) for (let x = 62; x < 70; x++) holed[y * W + x] = NaN;
  for (let y = 0; y < H; y++) holed[y * W + 30] = NaN;

  it('refuses missing pixels by default, quoting one', () => {
    expect(() => detectSpots(holed, W, H, null)).toThrow(/pixel \d+ is NaN/);
  });

  it('equals detection over the searched pixels with the missing ones replaced by any finite value', () => {
    const got = detectSpots(holed, W, H, null, { missing: 'exclude' })!;
    const near = nearMissing(missingMask([holed], W * H)!, W, H, missingMargin(SIGMA));
    const searched = Array.from({ length: W * H }, (_, i) => i).filter((i) => !near[i]);
    expect(got.regionPixels).toBe(searched.length);
    for (const fill of [0, 1e4]) {
      const filled = Float64Array.from(holed, (v) => (Number.isNaN(v) ? fill : v));
      expect(detectSpots(filled, W, H, searched)).toEqual(got);
    }
    // the spot inside the hole and the one 4 px from the missing column are gone; the other five found
    expect(got.spots.length).toBe(5);
    for (const s of got.spots) expect(near[Math.floor(s.y) * W + Math.floor(s.x)]).toBe(0);
  });

  it('analyzeObjects searches both channels away from the pixels either one lacks, and places chance spots there', () => {
    const other = img.slice();
    const a = analyzeObjects(holed, other, W, H, null, { missing: 'exclude', placements: 99 });
    const b = analyzeObjects(other, holed, W, H, null, { missing: 'exclude', placements: 99 });
    expect(a.detection1!.regionPixels).toBe(a.detection2!.regionPixels);
    expect(a.result.count1).toBe(a.result.count2);
    expect(a.result.paired1).toBe(1);
    expect(b.result.count1).toBe(a.result.count1);
    expect(() => analyzeObjects(holed, other, W, H, null, { placements: 9 })).toThrow(/NaN/);
  });
});
