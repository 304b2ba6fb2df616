/**
 * The pair sweep split over threads (server/analysis/sweep-threads.ts) gives bit for bit the one-thread
 * result of measurePairs on data made here (a 16-bit pair of 1.2 M pixels with shared and independent
 * structure, and a float pair), and the slabs are shared out in contiguous runs of about equal size.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { measurePairs, pairsFromArrays, prepare, Xoshiro128, type Pairs } from '../../shared/analysis/index';
import { measurePairsThreaded, shareSlabs, SweepThreads, THREAD_MIN_PAIRS } from '../../server/analysis/sweep-threads';

function pair16(n: number, seed: number): Pairs {
  const rng = new Xoshiro128(seed);
  const x = new Uint16Array(n), y = new Uint16Array(n);
  for (let i = 0; i < n; i++) {
    const c = rng.nextFloat() ** 3;
    x[i] = Math.min(65535, Math.round(300 + 40000 * c + 500 * rng.nextFloat()));
    y[i] = Math.min(65535, Math.round(200 + 25000 * c + 15000 * rng.nextFloat() ** 4 + 700 * rng.nextFloat()));
  }
  return { n, x, y, integer: true };
}

const threads = new SweepThreads(1);
afterAll(() => threads.close());

describe('sweep threads', () => {
  it('shares slabs in contiguous runs of about equal items', () => {
    expect(shareSlabs([5, 5, 5, 5], 2)).toEqual([[0, 1], [2, 3]]);
    expect(shareSlabs([1, 1, 100, 1], 2)).toEqual([[0, 1], [2, 3]]);
    expect(shareSlabs([100, 1, 1, 1], 2)).toEqual([[0], [1, 2, 3]]);
    expect(shareSlabs([3], 2)).toEqual([[0]]);
    const runs = shareSlabs(Array.from({ length: 14 }, (_, k) => 1 + (k % 4)), 3);
    expect(runs.flat()).toEqual(Array.from({ length: 14 }, (_, k) => k));
    expect(runs.every((r) => r.length > 0)).toBe(true);
  });

  it('equals the one-thread result bit for bit on a 1.2 M-pixel 16-bit pair', async () => {
    const data = pair16(1_200_000, 11);
    const t = { method: 'manual' as const, ch1: 1000, ch2: 900 };
    const one = measurePairs(prepare(data), t);
    const p = prepare(data);
    expect(await threads.sweep(p)).toBe(true);
    const two = measurePairs(p, t);
    expect(two).toEqual(one);
    expect(await measurePairsThreaded(threads, data, t)).toEqual(one);
    expect(one.kendallTauB).not.toBeNull();
    expect(one.distanceCorrelation).toBeGreaterThan(0.1);
  }, 60_000);

  it('equals the one-thread result on float data, and leaves small regions to this thread', async () => {
    const rng = new Xoshiro128(3);
    const n = THREAD_MIN_PAIRS + 1000;
    const x = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const c = rng.nextFloat();
      x[i] = c + 0.3 * rng.nextFloat();
      y[i] = Math.round((c - 0.5 * rng.nextFloat()) * 2000) / 16;
    }
    const t = { method: 'none' as const, ch1: 0, ch2: 0 };
    const one = measurePairs(pairsFromArrays(x, y), t);
    const p = prepare(pairsFromArrays(x, y));
    expect(await threads.sweep(p)).toBe(true);
    expect(measurePairs(p, t)).toEqual(one);
    expect(await threads.sweep(prepare(pair16(5000, 2)))).toBe(false);
  }, 60_000);
});
