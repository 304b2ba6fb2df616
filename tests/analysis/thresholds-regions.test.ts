/**
 * Thresholds (Otsu, Costes), the randomization test, rasterization, label images, histograms and the
 * generator. References: naive versions of the definitions (tests/analysis/naive.ts), hand calculations,
 * and the published definitions named in each module.
 */
import { describe, expect, it } from 'vitest';
import {
  computeThresholds,
  costesThresholds,
  jointHistogram,
  histogram1d,
  labelRegions,
  maskToIndices,
  measureRegion,
  otsuThreshold,
  pairsFromArrays,
  randomizationTest,
  rasterize,
  Xoshiro128,
} from '../../shared/analysis/index';
import { naiveCostes, naiveOtsuInteger } from './naive';

describe('Otsu (Otsu 1979)', () => {
  it('bimodal by hand: 0,0,1,1 | 9,9,10,10 → t = 1 (any t in 1..8 splits the modes; the lowest is kept)', () => {
    expect(otsuThreshold(new Uint16Array([0, 0, 1, 1, 9, 9, 10, 10]))).toBe(1);
  });
  it('equals the exhaustive between-class-variance scan on 300 random integer samples', () => {
    const rng = new Xoshiro128(5);
    for (let c = 0; c < 300; c++) {
      const n = 5 + rng.nextInt(200);
      const v = Array.from({ length: n }, () => (rng.nextFloat() < 0.5 ? rng.nextInt(60) : 100 + rng.nextInt(100)));
      expect(otsuThreshold(new Uint16Array(v)), JSON.stringify(v)).toBe(naiveOtsuInteger(v));
    }
  });
  it('constant or empty → null; float data splits the two modes', () => {
    expect(otsuThreshold(new Uint16Array([4, 4, 4]))).toBeNull();
    expect(otsuThreshold(new Uint16Array([]))).toBeNull();
    const t = otsuThreshold(new Float64Array([0.1, 0.15, 0.12, 0.9, 0.95, 0.91]))!;
    expect(t).toBeGreaterThan(0.15);
    expect(t).toBeLessThan(0.9);
  });
});

describe('Costes thresholds (Costes et al. 2004)', () => {
  const gen = (rng: Xoshiro128, n: number) => {
    const x: number[] = [], y: number[] = [];
    for (let i = 0; i < n; i++) {
      const s = rng.nextFloat() < 0.4 ? rng.nextInt(200) : 0;
      x.push(10 + s + rng.nextInt(30));
      y.push(5 + Math.round(s * 0.7) + rng.nextInt(40));
    }
    return [x, y];
  };
  it('bucketed sweep == rescanning all pixels at every step (300 random cases, both below-set rules, OLS and orthogonal)', () => {
    const rng = new Xoshiro128(11);
    let converged = 0;
    for (let c = 0; c < 300; c++) {
      const [x, y] = gen(rng, 20 + rng.nextInt(200));
      const belowSet = c % 2 ? 'both' : 'either';
      const regression = c % 3 ? 'orthogonal' : 'ols';
      const t = costesThresholds(pairsFromArrays(x, y), { belowSet, regression });
      if (t.ch1 === null) continue;
      const cands: number[] = [];
      for (let v = Math.min(...x); v <= Math.max(...x); v++) cands.push(v);
      const ref = naiveCostes(x, y, t.costes!.slope, t.costes!.intercept, cands, belowSet);
      if (ref === null) expect(t.costes!.converged).toBe(false);
      else {
        converged++;
        expect(t.ch1, `case ${c}`).toBe(ref.t1);
        expect(t.ch2).toBe(ref.t2);
        expect(t.costes!.rBelow!).toBeCloseTo(ref.r!, 10);
      }
    }
    expect(converged).toBeGreaterThan(200);
  });
  it('orthogonal slope is the major axis: for y = 2x exactly, slope 2, intercept 0', () => {
    const x = [1, 2, 3, 4, 5, 6, 7, 8];
    const t = costesThresholds(pairsFromArrays(x, x.map((v) => 2 * v)));
    expect(t.costes!.slope).toBeCloseTo(2, 12);
    expect(t.costes!.intercept).toBeCloseTo(0, 10);
  });
  it('negative slope, constant channel → thresholds null; unknown options throw quoting the value', () => {
    expect(costesThresholds(pairsFromArrays([1, 2, 3, 4], [4, 3, 2, 1])).ch1).toBeNull();
    expect(costesThresholds(pairsFromArrays([1, 2, 3, 4], [2, 2, 2, 2])).ch1).toBeNull();
    expect(() => costesThresholds(pairsFromArrays([1, 2], [1, 2]), { regression: 'x' as 'ols' })).toThrow(/x/);
  });
  it('manual thresholds need numbers; unknown method throws', () => {
    const p = pairsFromArrays([1, 2], [1, 2]);
    expect(() => computeThresholds(p, { method: 'manual', t1: NaN, t2: 1 })).toThrow(/NaN/);
    expect(() => computeThresholds(p, { method: 'magic' as 'none' })).toThrow(/magic/);
  });
});

describe('randomization test', () => {
  const W = 60, H = 60;
  const rng = new Xoshiro128(3);
  // smooth blobs (correlated over ~6 px) in both channels
  const base = new Float64Array(W * H);
  for (let b = 0; b < 12; b++) {
    const cx = rng.nextFloat() * W, cy = rng.nextFloat() * H;
    for (let j = 0; j < H; j++) for (let i = 0; i < W; i++) base[j * W + i] += 1000 * Math.exp(-((i - cx) ** 2 + (j - cy) ** 2) / 18);
  }
  const a = new Uint16Array(W * H), c = new Uint16Array(W * H), ind = new Uint16Array(W * H);
  for (let k = 0; k < W * H; k++) {
    a[k] = Math.round(base[k] + rng.nextInt(50));
    c[k] = Math.round(0.8 * base[k] + rng.nextInt(50));
    ind[k] = rng.nextInt(1000);
  }
  it('co-localized channels: p = 1/(N+1), all scrambles below; repeatable with the same seed', () => {
    const r1 = randomizationTest(a, c, W, H, null, { count: 50, blockSize: 5, seed: 9 });
    const r2 = randomizationTest(a, c, W, H, null, { count: 50, blockSize: 5, seed: 9 });
    expect(r1).toEqual(r2);
    expect(r1.randomizationCount).toBe(50);
    expect(r1.randomizationP).toBeCloseTo(1 / 51, 15);
    expect(r1.randomizationFractionBelow).toBe(1);
  });
  it('independent channels: p not small', () => {
    const r = randomizationTest(a, ind, W, H, null, { count: 100, blockSize: 5, seed: 2 });
    expect(r.randomizationP!).toBeGreaterThan(0.01);
  });
  it('region smaller than two blocks → null; through measureRegion with a mask', () => {
    expect(randomizationTest(a, c, W, H, [0, 1, 60, 61], { blockSize: 5 }).randomizationP).toBeNull();
    const mask = rasterize({ kind: 'ellipse', cx: 30, cy: 30, rx: 20, ry: 15 }, W, H);
    const r = measureRegion(a, c, mask, { width: W, randomization: { count: 20, blockSize: 4, seed: 1 } });
    expect(r.randomizationCount).toBe(20);
    expect(r.randomizationP).not.toBeNull();
  });
  it('bad options throw quoting the value', () => {
    expect(() => randomizationTest(a, c, W, H, null, { blockSize: 0 })).toThrow(/0/);
    expect(() => randomizationTest(a, c, 7, H, null, {})).toThrow(/7×60/);
  });
});

describe('rasterization: pixel (i, j) is inside when its centre (i+0.5, j+0.5) is (even-odd rule)', () => {
  const on = (m: Uint8Array, w: number) => Array.from(maskToIndices(m), (k) => [k % w, Math.floor(k / w)]);
  it('a rectangle on pixel edges covers exactly its pixels', () => {
    expect(on(rasterize({ kind: 'rectangle', x: 1, y: 1, width: 2, height: 1 }, 4, 4), 4)).toEqual([[1, 1], [2, 1]]);
  });
  it('a rectangle not reaching any centre is empty; one reaching a centre exactly on its right/bottom edge includes it', () => {
    expect(maskToIndices(rasterize({ kind: 'rectangle', x: 0.6, y: 0.6, width: 0.8, height: 0.8 }, 3, 3)).length).toBe(0);
    // centre (0.5, 0.5) on the right and bottom edges → outside
    expect(maskToIndices(rasterize({ kind: 'rectangle', x: 0, y: 0, width: 0.5, height: 0.5 }, 3, 3)).length).toBe(0);
    // centres on the left and top edges → inside; (1.5, ·) on the right edge → outside: half-open [0.5, 1.5)
    expect(on(rasterize({ kind: 'rectangle', x: 0.5, y: 0.5, width: 1, height: 1 }, 3, 3), 3)).toEqual([[0, 0]]);
  });
  it('shapes sharing an edge never share a pixel, and together cover their union', () => {
    const a = rasterize({ kind: 'polygon', points: [[0.5, 0.2], [3.5, 0.2], [2.5, 6.5], [0.5, 6.5]] }, 8, 8);
    const b = rasterize({ kind: 'polygon', points: [[3.5, 0.2], [7.5, 0.2], [7.5, 6.5], [2.5, 6.5]] }, 8, 8);
    const u = rasterize({ kind: 'rectangle', x: 0.5, y: 0.2, width: 7, height: 6.3 }, 8, 8);
    for (let k = 0; k < 64; k++) {
      expect(a[k] & b[k]).toBe(0);
      expect(a[k] | b[k]).toBe(u[k]);
    }
  });
  it('triangle by hand', () => {
    // (0,0),(4,0),(0,4): centres with x+y < 4 (and on the hypotenuse x+y = 4 excluded)
    const got = on(rasterize({ kind: 'polygon', points: [[0, 0], [4, 0], [0, 4]] }, 5, 5), 5);
    const want: number[][] = [];
    for (let j = 0; j < 5; j++) for (let i = 0; i < 5; i++) if (i + 0.5 + j + 0.5 < 4) want.push([i, j]);
    expect(got).toEqual(want);
  });
  it('self-intersecting star: even-odd leaves the centre pentagon empty', () => {
    const pts: [number, number][] = [];
    for (let k = 0; k < 5; k++) {
      const a = -Math.PI / 2 + (k * 4 * Math.PI) / 5;
      pts.push([50 + 45 * Math.cos(a), 50 + 45 * Math.sin(a)]);
    }
    const m = rasterize({ kind: 'polygon', points: pts }, 100, 100);
    expect(m[50 * 100 + 50]).toBe(0);
    expect(m[20 * 100 + 50]).toBe(1);
  });
  it('ellipse: centre-in test, clipped to the image; polygon clipped too', () => {
    const m = rasterize({ kind: 'ellipse', cx: 2, cy: 2, rx: 1, ry: 1 }, 4, 4);
    expect(on(m, 4)).toEqual([[1, 1], [2, 1], [1, 2], [2, 2]]);
    expect(maskToIndices(rasterize({ kind: 'polygon', points: [[-5, -5], [10, -5], [10, 10], [-5, 10]] }, 3, 2)).length).toBe(6);
  });
  it('non-finite coordinates and bad sizes throw quoting the value', () => {
    expect(() => rasterize({ kind: 'polygon', points: [[0, 0], [NaN, 1], [1, 1]] }, 3, 3)).toThrow(/NaN/);
    expect(() => rasterize({ kind: 'rectangle', x: 0, y: 0, width: 1, height: 1 }, 0, 3)).toThrow(/0×3/);
  });
});

describe('label images', () => {
  it('each positive value is one region, ascending labels, indices ascending', () => {
    const r = labelRegions(new Uint16Array([0, 2, 2, 0, 7, 2, 0, 7]));
    expect(r.map((x) => [x.label, Array.from(x.indices)])).toEqual([[2, [1, 2, 5]], [7, [4, 7]]]);
    expect(labelRegions(new Uint8Array(4))).toEqual([]);
  });
  it('negative or fractional labels throw quoting value and position', () => {
    expect(() => labelRegions(new Float32Array([0, 1.5]))).toThrow(/1\.5 at pixel 1/);
    expect(() => labelRegions(new Int16Array([0, -3]))).toThrow(/-3/);
  });
});

describe('histograms', () => {
  it('joint histogram with the last bin closed (as NumPy histogram2d)', () => {
    const h = jointHistogram([0, 1, 2, 3, 4], [0, 0, 4, 4, 4], { binsX: 2, binsY: 2 });
    expect(Array.from(h.counts)).toEqual([2, 0, 0, 3]);
    expect(h.max).toBe(3);
    const h2 = jointHistogram([0, 10], [0, 10], { binsX: 2, binsY: 2, rangeX: [0, 5], rangeY: [0, 5] });
    expect(h2.outside).toBe(1);
  });
  it('1-D histogram, bad bin count throws quoting it', () => {
    expect(Array.from(histogram1d([0, 1, 1, 2], { bins: 3 }).counts)).toEqual([1, 2, 1]);
    expect(() => histogram1d([1], { bins: 0 })).toThrow(/received 0/);
  });
});

describe('xoshiro128** (Blackman & Vigna 2021)', () => {
  it('state {1,2,3,4}: first outputs 11520, 0 (by hand from the definition: rotl(5·s1, 7)·9)', () => {
    const g = Xoshiro128.fromState(1, 2, 3, 4);
    expect(g.nextUint32()).toBe(11520);
    expect(g.nextUint32()).toBe(0);
  });
  it('seeded: repeatable, unbiased-looking nextInt, shuffle is a permutation', () => {
    const a = new Xoshiro128(42), b = new Xoshiro128(42);
    for (let i = 0; i < 100; i++) expect(a.nextUint32()).toBe(b.nextUint32());
    const counts = new Array(6).fill(0);
    for (let i = 0; i < 60000; i++) counts[a.nextInt(6)]++;
    for (const c of counts) expect(Math.abs(c - 10000)).toBeLessThan(500);
    const p = a.shuffle(Int32Array.from({ length: 50 }, (_, i) => i));
    expect(Array.from(p).sort((x, y) => x - y)).toEqual(Array.from({ length: 50 }, (_, i) => i));
  });
});
