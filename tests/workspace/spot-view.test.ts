/**
 * The workspace's spot drawing and plotting helpers (src/features/workspace/lib/spotView.ts): pairs within d
 * equal a brute-force nearest search (straight from the definition), and the chance curve of the
 * nearest-distance histogram is the Poisson nearest-neighbour distribution P(D ≤ r) = 1 − exp(−λπr²)
 * (Clark & Evans 1954, from memory), checked against a simulation of uniform points in a square, queried
 * far from its edges (common practice).
 */
import { describe, expect, it } from 'vitest';
import { nearestHistogram, pairsWithin, type Xy } from '../../src/features/workspace/lib/spotView';
import { Xoshiro128 } from '../../shared/analysis/prng';

describe('pairsWithin', () => {
  it('joins each channel-1 spot to its nearest channel-2 spot when it is within d (brute force)', () => {
    const rng = new Xoshiro128(3);
    const a: Xy[] = Array.from({ length: 40 }, () => [rng.nextFloat() * 50, rng.nextFloat() * 50]);
    const b: Xy[] = Array.from({ length: 30 }, () => [rng.nextFloat() * 50, rng.nextFloat() * 50]);
    const d = 3;
    const { pairs, nearest } = pairsWithin(a, b, d);
    const want = a.flatMap(([x, y], i) => {
      let best = Infinity, j = -1;
      b.forEach(([u, v], k) => {
        const dd = Math.hypot(u - x, v - y);
        if (dd < best) (best = dd), (j = k);
      });
      expect(nearest[i]).toBeCloseTo(best, 12);
      return best <= d ? [{ x1: x, y1: y, x2: b[j][0], y2: b[j][1] }] : [];
    });
    expect(pairs.map(({ x1, y1, x2, y2 }) => ({ x1, y1, x2, y2 }))).toEqual(want);
    expect(pairs.length).toBeGreaterThan(0);
  });
  it('has no pairs and no distances when a channel has no spots', () => {
    expect(pairsWithin([[1, 1]], [], 2)).toEqual({ pairs: [], nearest: new Float64Array(0) });
    expect(pairsWithin([], [[1, 1]], 2).pairs).toEqual([]);
  });
});

describe('nearestHistogram', () => {
  it('counts every distance once and its chance counts add up to the number of spots', () => {
    const h = nearestHistogram([0.2, 0.9, 1.1, 30], 10, 400, 0.5, 4);
    expect(h.edges).toEqual([0, 0.5, 1, 1.5, 2, 2.5, 3, 3.5, 4]);
    expect(h.counts).toEqual([1, 1, 1, 0, 0, 0, 0, 1]);
    expect(h.chance.reduce((s, v) => s + v, 0)).toBeCloseTo(4, 12);
    expect(() => nearestHistogram([1], 1, 10, 0, 4)).toThrow(/bin 0/);
  });
  it('the chance curve matches uniform random points (within Monte Carlo error)', () => {
    const rng = new Xoshiro128(9);
    const side = 200, n2 = 400;
    const b: Xy[] = Array.from({ length: n2 }, () => [rng.nextFloat() * side, rng.nextFloat() * side]);
    // query points well inside the square, so the edge does not matter
    const a: Xy[] = Array.from({ length: 2000 }, () => [40 + rng.nextFloat() * 120, 40 + rng.nextFloat() * 120]);
    const { nearest } = pairsWithin(a, b, 5);
    const h = nearestHistogram(nearest, n2, side * side, 2, 30);
    for (let i = 0; i < 6; i++) expect(Math.abs(h.counts[i] - h.chance[i]), `bin ${i}`).toBeLessThan(4 * Math.sqrt(h.chance[i]) + 5);
  });
});
