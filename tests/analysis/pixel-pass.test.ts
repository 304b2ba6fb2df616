/**
 * The fused pass of shared/analysis/pixel-pass.ts gives bit for bit the values of the separate functions
 * (pearson.ts, overlap.ts, manders.ts, icq.ts) on integer data: random 8/16-bit pairs, constant channels,
 * one pair, thresholds negative, fractional, zero and above every value, sums beyond 2^53.
 */
import { describe, expect, it } from 'vitest';
import { centeredMoments, icq, manders, overlapCoefficients, pairsFromArrays, pixelPass, prepare, Xoshiro128 } from '../../shared/analysis/index';

describe('fused pixel pass', () => {
  it('equals the separate functions exactly', () => {
    const rng = new Xoshiro128(99);
    const cases: [number[], number[]][] = [[[5], [7]], [[3, 3, 3, 3], [1, 2, 3, 4]], [[0, 0, 1, 1], [0, 1, 0, 1]]];
    for (let k = 0; k < 60; k++) {
      const n = 2 + rng.nextInt(k < 50 ? 300 : 5000);
      const top = k % 2 ? 256 : 65536;
      const x: number[] = [], y: number[] = [];
      for (let i = 0; i < n; i++) {
        const c = rng.nextFloat();
        x.push(Math.floor((0.7 * c + 0.3 * rng.nextFloat()) * top));
        y.push(Math.floor((0.4 * c + 0.6 * rng.nextFloat()) * top));
      }
      cases.push([x, y]);
    }
    // near the top of the 16-bit range: Σxy beyond 2^53 over 2^22 pairs
    cases.push([Array.from({ length: 1 << 22 }, (_, i) => 65535 - (i % 7)), Array.from({ length: 1 << 22 }, (_, i) => 65535 - (i % 5))]);
    for (const [x, y] of cases) {
      for (const [t1, t2] of [[0, 0], [-3, -1], [10.5, 200.25], [1e9, 0], [null, 5], [40, Infinity]] as [number | null, number | null][]) {
        const p = prepare(pairsFromArrays(x, y));
        const f = pixelPass(p, t1, t2)!;
        expect(f).not.toBeNull();
        expect(f.moments).toEqual(centeredMoments(p.x, p.y, p.n, true));
        expect(f.overlap).toEqual(overlapCoefficients(p));
        expect(f.manders).toEqual(manders(p, t1, t2));
        expect(f.icq).toBe(icq(p));
      }
    }
  });

  it('leaves float data and empty regions to the separate functions', () => {
    expect(pixelPass(prepare(pairsFromArrays([0.5, 1], [2, 3])), 0, 0)).toBeNull();
    expect(pixelPass(prepare({ n: 0, x: new Uint16Array(0), y: new Uint16Array(0), integer: true }), 0, 0)).toBeNull();
  });
});
