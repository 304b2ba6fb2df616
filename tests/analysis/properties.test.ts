/**
 * Property tests: the fast exact algorithms equal naive O(n²) versions of the definitions on thousands of
 * random small inputs, and the coefficients keep the properties that make them right (symmetry,
 * invariance, identity, bounds, degenerate cases → null). Seeded, so failures are repeatable.
 */
import { describe, expect, it } from 'vitest';
import {
  distanceCorrelation,
  kendallTauB,
  measureRegion,
  pairsFromArrays,
  kendallS,
  pearson,
  prepare,
  spearman,
  Xoshiro128,
  type RegionResult,
} from '../../shared/analysis/index';
import { naiveDcor, naiveKendallTauB, naivePearson, naiveSpearman } from './naive';

const close = (a: number | null, b: number | null, tol: number, what = '') => {
  if (b === null || a === null) {
    expect(a, what).toBe(b);
    return;
  }
  expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(tol * Math.max(1, Math.abs(b)));
};

type Gen = (rng: Xoshiro128, n: number) => [number[], number[]];
const gens: Record<string, Gen> = {
  // heavy ties: values 0..3
  ties: (rng, n) => {
    const x = Array.from({ length: n }, () => rng.nextInt(4));
    return [x, x.map((v) => (rng.nextFloat() < 0.6 ? v : rng.nextInt(4)))];
  },
  // 16-bit near the top of the range
  high16: (rng, n) => {
    const x = Array.from({ length: n }, () => 65535 - rng.nextInt(50));
    return [x, x.map((v) => Math.min(65535, v - 20 + rng.nextInt(40)))];
  },
  // 8-bit, independent
  indep8: (rng, n) => [Array.from({ length: n }, () => rng.nextInt(256)), Array.from({ length: n }, () => rng.nextInt(256))],
  // float with negative values, non-monotone dependence
  float: (rng, n) => {
    const x = Array.from({ length: n }, () => (rng.nextFloat() - 0.5) * 10);
    return [x, x.map((v) => v * v + rng.nextFloat() - 0.5)];
  },
  // float with ties
  floatTies: (rng, n) => {
    const x = Array.from({ length: n }, () => rng.nextInt(5) * 0.25 - 0.3);
    return [x, x.map((v) => -v + rng.nextInt(3) * 0.1)];
  },
};

describe('fast == naive O(n²) on random small inputs', () => {
  for (const [name, gen] of Object.entries(gens)) {
    it(`${name}: 450 cases, n = 2..40: τ-b, dCor, bias-corrected dCor², ρ, r`, () => {
      const rng = new Xoshiro128(name.length * 7919);
      for (let c = 0; c < 450; c++) {
        const n = 2 + rng.nextInt(39);
        const [x, y] = gen(rng, n);
        const p = pairsFromArrays(x, y);
        const tag = `${name} #${c} x=${JSON.stringify(x)} y=${JSON.stringify(y)}`;
        close(kendallTauB(p), naiveKendallTauB(x, y), 1e-12, `τ-b ${tag}`);
        const d = distanceCorrelation(p);
        const nd = naiveDcor(x, y);
        close(d.dcor, nd.dcor, 1e-9, `dCor ${tag}`);
        close(d.bcdcorSq, nd.bcdcorSq, 1e-9, `bcdCor ${tag}`);
        close(spearman(p), naiveSpearman(x, y), 1e-12, `ρ ${tag}`);
        close(pearson(p), naivePearson(x, y), 1e-12, `r ${tag}`);
      }
    });
  }
  it('n = 1500 floats: dCor and τ-b agree to 1e-10', () => {
    const rng = new Xoshiro128(99);
    const [x, y] = gens.float(rng, 1500);
    const p = pairsFromArrays(x, y);
    const d = distanceCorrelation(p), nd = naiveDcor(x, y);
    close(d.dcor, nd.dcor, 1e-10, 'dCor');
    close(d.bcdcorSq, nd.bcdcorSq, 1e-10, 'bcdCor');
    close(kendallTauB(p), naiveKendallTauB(x, y), 1e-12, 'τ-b');
  });
});

describe('(x, y) order and the run sweeps', () => {
  it('sortedByX keeps every pair, groups by x level and ascends in y within a group; both sweeps give the same C − D', () => {
    // common practice: check a sort by its output invariants (a permutation, ordered by the key)
    const rng = new Xoshiro128(4242);
    for (const name of ['ties', 'indep8', 'floatTies', 'float'] as const) {
      for (let c = 0; c < 40; c++) {
        const n = 2 + rng.nextInt(400);
        const [x, y] = gens[name](rng, n);
        const p = prepare(pairsFromArrays(x, y));
        const { start, yRank } = p.sortedByX;
        const lx = p.levelsX, ly = p.levelsY;
        const want = new Map<string, number>();
        for (let i = 0; i < n; i++) {
          const k = `${lx.rank[i]},${ly.rank[i]}`;
          want.set(k, (want.get(k) ?? 0) + 1);
        }
        const got = new Map<string, number>();
        for (let g = 0; g < lx.L; g++) {
          for (let q = start[g]; q < start[g + 1]; q++) {
            if (q > start[g]) expect(yRank[q], `${name} #${c} group ${g}`).toBeGreaterThanOrEqual(yRank[q - 1]);
            const k = `${g},${yRank[q]}`;
            got.set(k, (got.get(k) ?? 0) + 1);
          }
        }
        expect(got).toEqual(want);
        const viaKendall = kendallS(p);
        const q = prepare(pairsFromArrays(x, y));
        distanceCorrelation(q); // the dCor sweep fills C − D on its own
        expect(q.kendallS, `${name} #${c}`).toBe(viaKendall);
      }
    }
  });
});

const rank = ['pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'dcorBiasCorrectedSq', 'icq', 'overlap'] as const;

describe('properties', () => {
  const rng = new Xoshiro128(2026);
  const cases = Array.from({ length: 200 }, () => {
    const n = 4 + rng.nextInt(60);
    const x = Array.from({ length: n }, () => rng.nextInt(1000));
    const y = x.map((v) => Math.max(0, v + rng.nextInt(600) - 300));
    return [new Uint16Array(x), new Uint16Array(y)] as const;
  });

  it('symmetric in the channels (and M1 ↔ M2, k1 ↔ k2)', () => {
    for (const [x, y] of cases) {
      const a = measureRegion(x, y, null, { threshold: { method: 'manual', t1: 100, t2: 200 } });
      const b = measureRegion(y, x, null, { threshold: { method: 'manual', t1: 200, t2: 100 } });
      for (const k of rank) close(a[k], b[k], 1e-12, k);
      close(a.mandersM1, b.mandersM2, 1e-15, 'M1/M2');
      close(a.k1, b.k2, 1e-15, 'k1/k2');
    }
  });

  it('ρ and τ-b unchanged by strictly increasing transforms; all coefficients under shift by r, ρ, τ, dCor', () => {
    for (const [x, y] of cases) {
      const p = pairsFromArrays(x, y);
      const f = pairsFromArrays(Array.from(x, (v) => Math.exp(v / 300)), Array.from(y, (v) => v * v * v + 7));
      close(spearman(f), spearman(p), 1e-12, 'ρ');
      close(kendallTauB(f), kendallTauB(p), 1e-12, 'τ-b');
      const s = pairsFromArrays(Array.from(x, (v) => v + 60000 - 1000), Array.from(y, (v) => v * 3 + 12));
      close(pearson(s), pearson(p), 1e-12, 'r affine');
      close(distanceCorrelation(s).dcor, distanceCorrelation(p).dcor, 1e-9, 'dCor affine');
    }
  });

  it('identical channels give 1 (r, ρ, τ-b, dCor, bias-corrected, overlap), M1 = M2 = 1 at thresholds 0', () => {
    for (const [x] of cases) {
      const r = measureRegion(x, x, null);
      for (const k of ['pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'overlap'] as const) close(r[k], 1, 1e-12, k);
      close(r.dcorBiasCorrectedSq, 1, 1e-9, 'bcdcor');
      // R* = 1 up to rounding: T is infinite (null) or huge, p is 0 or below 1e-12
      if (r.dcorTStat !== null) expect(r.dcorTStat).toBeGreaterThan(1e5);
      expect(r.dcorPValue!).toBeLessThan(1e-12);
      close(r.mandersM1, 1, 0);
      close(r.mandersM2, 1, 0);
    }
  });

  it('values stay in range', () => {
    for (const [x, y] of cases) {
      const r = measureRegion(x, y, null, { threshold: { method: 'costes' } });
      for (const k of ['pearson', 'spearman', 'kendallTauB', 'dcorBiasCorrectedSq'] as const) {
        expect(r[k]!).toBeGreaterThanOrEqual(-1);
        expect(r[k]!).toBeLessThanOrEqual(1);
      }
      expect(r.distanceCorrelation!).toBeGreaterThanOrEqual(0);
      expect(r.distanceCorrelation!).toBeLessThanOrEqual(1);
      expect(Math.abs(r.icq!)).toBeLessThanOrEqual(0.5);
      for (const k of ['mandersM1', 'mandersM2', 'overlap', 'dcorPValue'] as const) {
        if (r[k] === null) continue;
        expect(r[k]!).toBeGreaterThanOrEqual(0);
        expect(r[k]!).toBeLessThanOrEqual(1);
      }
    }
  });
});

describe('degenerate cases → null (decided in each module, documented in its TSDoc)', () => {
  const allNull = (r: RegionResult, keys: (keyof RegionResult)[]) => {
    for (const k of keys) expect(r[k], String(k)).toBeNull();
  };
  const coefficientKeys: (keyof RegionResult)[] = [
    'pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'dcorBiasCorrectedSq', 'dcorTStat', 'dcorDf', 'dcorPValue', 'icq',
  ];
  it('empty region: pixels 0, every coefficient null', () => {
    const r = measureRegion(new Uint16Array(16), new Uint16Array(16), new Uint8Array(16));
    expect(r.pixels).toBe(0);
    allNull(r, [...coefficientKeys, 'mandersM1', 'mandersM2', 'overlap', 'k1', 'k2']);
    expect(JSON.stringify(r)).not.toContain('NaN');
  });
  it('one pixel: n < 2 → null', () => {
    allNull(measureRegion(new Uint16Array([5]), new Uint16Array([7]), null), coefficientKeys);
  });
  it('n = 2 or 3: dCor defined, bias-corrected dCor² and its test null (n < 4)', () => {
    const r = measureRegion(new Uint16Array([1, 2, 4]), new Uint16Array([3, 1, 2]), null);
    expect(r.distanceCorrelation).not.toBeNull();
    allNull(r, ['dcorBiasCorrectedSq', 'dcorTStat', 'dcorDf', 'dcorPValue']);
  });
  it('constant channel: correlations null; overlap, k1, k2 and Manders still defined', () => {
    const x = new Uint16Array([3, 3, 3, 3, 3]), y = new Uint16Array([1, 5, 2, 8, 0]);
    const r = measureRegion(x, y, null);
    allNull(r, coefficientKeys);
    expect(r.overlap).not.toBeNull();
    expect(r.mandersM1).toBe(12 / 15); // x > 0 everywhere; y > 0 at 4 of 5 pixels
    const r2 = measureRegion(y, x, null);
    allNull(r2, coefficientKeys);
  });
  it('all saturated (both channels at 65535): correlations null, M1 = M2 = overlap = 1', () => {
    const s = new Uint16Array(100).fill(65535);
    const r = measureRegion(s, s, null, { threshold: { method: 'costes' } });
    allNull(r, coefficientKeys);
    expect(r.thresholds.ch1).toBeNull();
    expect(r.mandersM1).toBeNull(); // Costes undefined → Manders null
    const m = measureRegion(s, s, null);
    expect([m.mandersM1, m.mandersM2, m.overlap]).toEqual([1, 1, 1]);
  });
  it('all zero: Manders and overlap null (0/0)', () => {
    const z = new Uint16Array(10);
    const r = measureRegion(z, z, null);
    allNull(r, ['mandersM1', 'mandersM2', 'overlap', 'k1', 'k2']);
  });
  it('JSON never carries NaN', () => {
    const r = measureRegion(new Float32Array([NaN, 1, 1]), new Float32Array([2, NaN, 2]), null);
    expect(r.pixels).toBe(1);
    expect(JSON.stringify(r)).not.toMatch(/NaN|Infinity/);
  });
});

describe('numerics: 16 M pairs of 16-bit data near 65535', () => {
  it('16 M = 2^18 copies of a 64-pair pattern: every coefficient equals the pattern value (replication invariance)', () => {
    // r, ρ, dCor (V-statistic: same empirical distribution), ICQ, Manders, overlap are invariant under
    // replicating every pair m times; τ-b is not (ties between copies) and is checked by its formula.
    // a 64-pair pattern with values in 65500..65535 (ties included), repeated 2^18 times = 16,777,216 pairs
    const g = new Xoshiro128(65535);
    const px = Array.from({ length: 64 }, () => 65535 - g.nextInt(36));
    const py = px.map((v) => Math.min(65535, v - 10 + g.nextInt(20)));
    const m = 1 << 18;
    const N = 64 * m;
    const x = new Uint16Array(N), y = new Uint16Array(N);
    for (let i = 0; i < N; i++) {
      x[i] = px[i & 63];
      y[i] = py[i & 63];
    }
    const big = measureRegion(x, y, null, { threshold: { method: 'manual', t1: 65533, t2: 65533 } });
    const small = measureRegion(new Uint16Array(px), new Uint16Array(py), null, { threshold: { method: 'manual', t1: 65533, t2: 65533 } });
    expect(big.pixels).toBe(N);
    close(small.pearson, naivePearson(px, py), 1e-12, 'pattern r');
    close(small.distanceCorrelation, naiveDcor(px, py).dcor, 1e-12, 'pattern dCor');
    for (const k of ['pearson', 'spearman', 'distanceCorrelation', 'icq', 'mandersM1', 'mandersM2', 'overlap', 'k1', 'k2'] as const)
      close(big[k], small[k], 1e-9, k);
    // τ-b with replication: C − D = m²·(C − D of the pattern); tied pairs from the value counts c·m
    let sp = 0;
    for (let i = 0; i < 64; i++) for (let j = i + 1; j < 64; j++) sp += Math.sign(px[i] - px[j]) * Math.sign(py[i] - py[j]);
    const ties = (v: number[]) => {
      const cnt = new Map<number, number>();
      for (const a of v) cnt.set(a, (cnt.get(a) ?? 0) + m);
      let t = 0;
      for (const c of cnt.values()) t += (c * (c - 1)) / 2;
      return t;
    };
    const n0 = (N * (N - 1)) / 2;
    const tau = (m * m * sp) / Math.sqrt((n0 - ties(px)) * (n0 - ties(py)));
    close(big.kendallTauB, tau, 1e-12, 'τ-b');
  }, 60000);
});
