/**
 * Pairing and cross-type Ripley's K against outside references (tests/fixtures/spots/generate.py):
 *  - nearest neighbours both ways: SciPy 1.10 scipy.spatial.cKDTree.query, to 1e-9;
 *  - paired fractions, mutual pairs, medians: NumPy from the cKDTree results;
 *  - cross-type K on a rectangle: astropy 5.2 astropy.stats.RipleysKEstimator, modes 'none',
 *    'translation', 'ripley' (cross-type from the pooled pattern, see the generator), to 1e-9 relative.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { crossK, pairSpots, PointGrid, nearestNeighbours, Xoshiro128 } from '../../shared/analysis/index';

const fx = JSON.parse(readFileSync(fileURLToPath(new URL('../fixtures/spots/expected.json', import.meta.url)), 'utf8'));
const cols = (pts: number[][]) => [pts.map((p) => p[0]), pts.map((p) => p[1])] as const;

describe('nearest neighbours and pairing (scipy.spatial.cKDTree)', () => {
  for (const c of fx.pairing) {
    const [x1, y1] = cols(c.a), [x2, y2] = cols(c.b);
    it(`${c.name}: distances and indices both ways equal cKDTree to 1e-9`, () => {
      const r = pairSpots(x1, y1, x2, y2, 2);
      for (let i = 0; i < x1.length; i++) {
        expect(Math.abs(r.nearest12.distance[i] - c.d12[i])).toBeLessThan(1e-9);
        expect(r.nearest12.index[i]).toBe(c.i12[i]);
      }
      for (let j = 0; j < x2.length; j++) {
        expect(Math.abs(r.nearest21.distance[j] - c.d21[j])).toBeLessThan(1e-9);
        expect(r.nearest21.index[j]).toBe(c.i21[j]);
      }
      expect(Math.abs(r.medianNearest1! - c.medianNearest1)).toBeLessThan(1e-9);
      expect(Math.abs(r.medianNearest2! - c.medianNearest2)).toBeLessThan(1e-9);
    });
    for (const [d, want] of Object.entries(c.byDistance) as [string, { paired1: number; paired2: number; mutualPairs: number }][]) {
      it(`${c.name}: paired fractions and mutual pairs at d = ${d} (NumPy on cKDTree)`, () => {
        const r = pairSpots(x1, y1, x2, y2, Number(d));
        expect(Math.abs(r.paired1! - want.paired1)).toBeLessThan(1e-12);
        expect(Math.abs(r.paired2! - want.paired2)).toBeLessThan(1e-12);
        expect(r.mutualPairs).toBe(want.mutualPairs);
      });
    }
  }

  it('queries outside the grid and far-away clusters agree with a brute-force search', () => {
    const rng = new Xoshiro128(7);
    const px: number[] = [], py: number[] = [];
    for (let i = 0; i < 200; i++) {
      const far = i % 10 === 0;
      px.push((far ? 500 : 0) + rng.nextFloat() * 20);
      py.push(rng.nextFloat() * (far ? 300 : 20));
    }
    const qx: number[] = [], qy: number[] = [];
    for (let i = 0; i < 300; i++) {
      qx.push(-100 + rng.nextFloat() * 800);
      qy.push(-100 + rng.nextFloat() * 500);
    }
    const r = nearestNeighbours(new PointGrid(px, py), qx, qy);
    for (let q = 0; q < qx.length; q++) {
      let best = Infinity;
      for (let i = 0; i < px.length; i++) best = Math.min(best, Math.hypot(px[i] - qx[q], py[i] - qy[q]));
      expect(Math.abs(r.distance[q] - best)).toBeLessThan(1e-9);
    }
  });

  it('no spots on one side → fractions and medians null, no mutual pairs; one spot works', () => {
    const r = pairSpots([1, 5], [1, 5], [], [], 2);
    expect([r.paired1, r.paired2, r.medianNearest1, r.medianNearest2, r.mutualPairs]).toEqual([null, null, null, null, 0]);
    const one = pairSpots([1, 5], [1, 5], [1.5], [1], 2);
    expect(one.paired1).toBe(0.5);
    expect(one.paired2).toBe(1);
    expect(one.mutualPairs).toBe(1);
    expect(one.medianNearest2).toBe(0.5);
    expect(() => pairSpots([1], [1], [1], [1], -1)).toThrow(/received -1/);
  });
});

describe("cross-type Ripley's K on a rectangle (astropy RipleysKEstimator)", () => {
  for (const c of fx.ripley) {
    const [x1, y1] = cols(c.a), [x2, y2] = cols(c.b);
    const [wx0, wy0, wx1, wy1] = c.window;
    for (const mode of ['none', 'translation', 'ripley'] as const) {
      it(`${c.name}, ${mode}: equals astropy to 1e-9 relative`, () => {
        const k = crossK(x1, y1, x2, y2, c.radii, { kind: 'rectangle', x0: wx0, y0: wy0, x1: wx1, y1: wy1 }, mode);
        c.K[mode].forEach((want: number, q: number) => {
          expect(Math.abs(k.K[q]! - want)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(want)));
          expect(k.L[q]).toBeCloseTo(Math.sqrt(want / Math.PI), 9);
        });
      });
    }
  }
  it('independent patterns: translation-corrected L(20) ≈ 20; the clustered pair lies above r at r = 2', () => {
    const get = (name: string) => fx.ripley.find((c: { name: string }) => c.name === name);
    const ind = get('independent'), cl = get('clustered');
    const L = (c: typeof ind) => crossK(...cols(c.a), ...cols(c.b), c.radii, { kind: 'rectangle', x0: 0, y0: 0, x1: 100, y1: 80 }, 'translation').L;
    const li = L(ind), lc = L(cl);
    expect(Math.abs(li[3]! - 20) / 20).toBeLessThan(0.15);
    expect(lc[0]!).toBeGreaterThan(1.2 * 2);
    expect(lc[0]!).toBeGreaterThan(li[0]!);
  });
  it('bad windows and radii are refused', () => {
    expect(() => crossK([1], [1], [2], [2], [60], { kind: 'rectangle', x0: 0, y0: 0, x1: 100, y1: 80 }, 'ripley')).toThrow(/received 60/);
    expect(() => crossK([1], [1], [2], [2], [-1], { kind: 'area', area: 10 })).toThrow(/received -1/);
    expect(() => crossK([1], [1], [2], [2], [1], { kind: 'area', area: 10 }, 'translation')).toThrow(/rectangular/);
    expect(crossK([], [], [2], [2], [1], { kind: 'area', area: 10 }).K).toEqual([null]);
  });
});
