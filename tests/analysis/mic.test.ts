/**
 * MICe and TICe (shared/analysis/mic.ts; Reshef, Reshef, Finucane, Sabeti & Mitzenmacher 2016, JMLR 17:1–63).
 * Check values: Debian's r-cran-minerva, mine(x, y, alpha = 0.6, C = 15, est = "mic_e"), on every region of the
 * analysis fixtures (8/12/16-bit, float, heavy ties) and on the cases of tests/fixtures/mic/generate.py
 * (a 10,000-pixel 8-bit field with heavy ties, 3,000 continuous pairs that need superclumps, …), to 1e-6.
 * Properties: brute force over every cut set (tests/analysis/naive.ts) on small inputs; invariance under
 * increasing transforms; bounds; a noiseless monotone dependence gives 1; degenerate cases null.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { collectPairs, equipartition, labelRegions, measureRegion, mic, pairsFromArrays, Xoshiro128, type ChannelArray } from '../../shared/analysis/index';
import { equipartitionPrefix } from '../../shared/analysis/mic';
import { naiveMicE } from './naive';

const root = fileURLToPath(new URL('../fixtures/', import.meta.url));
const expected = JSON.parse(readFileSync(root + 'mic/expected.json', 'utf8'));

function load(file: string, dtype: string): ChannelArray {
  const b = readFileSync(file);
  const ab = b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength);
  if (dtype === 'uint8') return new Uint8Array(ab);
  if (dtype === 'uint16') return new Uint16Array(ab);
  if (dtype === 'float32') return new Float32Array(ab);
  if (dtype === 'float64') return new Float64Array(ab);
  throw new Error(`unknown dtype ${dtype}`);
}

const labels = load(root + 'analysis/labels.bin', 'uint16');
const regions = new Map(labelRegions(labels).map((r) => [r.label, r.indices]));

describe('MICe / TICe against R minerva (mine, est = "mic_e", alpha 0.6, C 15)', () => {
  it('covers the analysis fixtures and the heavy-tie and superclump cases', () => {
    expect(expected.cases.length).toBe(25);
    expect(expected.cases.some((c: { case: string }) => c.case === 'u8_ties_10000')).toBe(true);
  });
  for (const c of expected.cases) {
    const name = c.source === 'analysis' ? `${c.case} region ${c.label}` : `${c.case}`;
    it(`${name}: micE and ticE to 1e-6 (minerva ${expected.minerva})`, () => {
      const pairs =
        c.source === 'analysis'
          ? collectPairs(load(`${root}analysis/${c.case}.ch1.bin`, c.dtype), load(`${root}analysis/${c.case}.ch2.bin`, c.dtype), c.label === 0 ? null : { kind: 'indices', indices: regions.get(c.label)! })
          : pairsFromArrays(load(`${root}mic/${c.case}.x.bin`, c.dtype), load(`${root}mic/${c.case}.y.bin`, c.dtype));
      const r = mic(pairs);
      expect(Math.abs(r.micE! - c.micE), `micE ${r.micE} vs ${c.micE}`).toBeLessThanOrEqual(1e-6);
      expect(Math.abs(r.ticE! - c.ticE), `ticE ${r.ticE} vs ${c.ticE}`).toBeLessThanOrEqual(1e-6);
    });
  }
});

describe('equipartition by bisection on prefix sums (mic.ts, used for the rows and the superclumps)', () => {
  it('gives the same rows as the group-by-group equipartition on random sizes, few or many ties', () => {
    const g = new Xoshiro128(41);
    for (let trial = 0; trial < 400; trial++) {
      const groups = 1 + (g.nextUint32() % 300);
      const big = trial % 3 === 0 ? 60 : trial % 3 === 1 ? 4 : 1;
      const sizes = Int32Array.from({ length: groups }, () => 1 + (g.nextUint32() % big) * (g.nextFloat() < 0.1 ? 20 : 1));
      const P = new Int32Array(groups + 1);
      for (let k = 0; k < groups; k++) P[k + 1] = P[k] + sizes[k];
      const n = P[groups];
      const rows = 1 + (g.nextUint32() % Math.min(groups + 5, 200));
      const want = new Int32Array(groups);
      const q = equipartition(sizes, groups, n, rows, want);
      const bounds = new Int32Array(groups + 2);
      expect(equipartitionPrefix(P, groups, n, rows, bounds), `trial ${trial}`).toBe(q);
      const got = new Int32Array(groups);
      for (let r = 0; r < q; r++) got.fill(r, bounds[r], bounds[r + 1]);
      expect(Array.from(got), `trial ${trial}: ${groups} groups into ${rows} rows`).toEqual(Array.from(want));
    }
  });
});

describe('MICe / TICe properties', () => {
  it('equal the brute force over every cut set on small random inputs with ties (naive.ts)', () => {
    const g = new Xoshiro128(20);
    for (let trial = 0; trial < 30; trial++) {
      const n = 6 + (g.nextUint32() % 12);
      const levels = 3 + (g.nextUint32() % 10);
      const x = Array.from({ length: n }, () => g.nextUint32() % levels);
      const y = x.map((v) => (g.nextFloat() < 0.5 ? v : g.nextUint32() % levels));
      if (new Set(x).size < 2 || new Set(y).size < 2) continue;
      const want = naiveMicE(x, y);
      const got = mic(pairsFromArrays(x, y));
      expect(Math.abs(got.micE! - want.micE), `trial ${trial}: ${x} / ${y}`).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(got.ticE! - want.ticE), `trial ${trial}: ${x} / ${y}`).toBeLessThanOrEqual(1e-11);
    }
  });

  it('depend only on the order and ties of each channel (increasing transforms leave them unchanged)', () => {
    const g = new Xoshiro128(3);
    const x = Array.from({ length: 500 }, () => g.nextUint32() % 200);
    const y = x.map((v) => Math.round(v / 3 + 20 * g.nextFloat()));
    const a = mic(pairsFromArrays(x, y));
    const b = mic(pairsFromArrays(x.map((v) => Math.exp(v / 50) - 3.5), y.map((v) => 1000 + 7 * v)));
    expect(b.micE).toBe(a.micE);
    expect(b.ticE).toBe(a.ticE);
  });

  it('lie in [0, 1] (micE) and [0, number of entries] (ticE); a noiseless increasing relation gives 1', () => {
    const g = new Xoshiro128(5);
    for (let k = 0; k < 5; k++) {
      const x = Array.from({ length: 300 }, () => g.nextFloat());
      const y = Array.from({ length: 300 }, () => g.nextFloat());
      const r = mic(pairsFromArrays(x, y));
      expect(r.micE!).toBeGreaterThanOrEqual(0);
      expect(r.micE!).toBeLessThanOrEqual(1);
      expect(r.ticE!).toBeGreaterThanOrEqual(0);
    }
    const t = Array.from({ length: 1000 }, (_, i) => i);
    const r = mic(pairsFromArrays(t, t.map((v) => v * v)));
    expect(Math.abs(r.micE! - 1)).toBeLessThanOrEqual(1e-12);
  });

  it('are null for fewer than 2 pairs or a constant channel', () => {
    expect(mic(pairsFromArrays([], []))).toEqual({ micE: null, ticE: null });
    expect(mic(pairsFromArrays([3], [4]))).toEqual({ micE: null, ticE: null });
    expect(mic(pairsFromArrays([1, 2, 3, 4, 5], [7, 7, 7, 7, 7]))).toEqual({ micE: null, ticE: null });
    expect(mic(pairsFromArrays([2, 2, 2], [1, 2, 3]))).toEqual({ micE: null, ticE: null });
  });

  it('refuse α outside (0, 1] and c ≤ 0, quoting the value', () => {
    const p = pairsFromArrays([1, 2, 3], [3, 1, 2]);
    expect(() => mic(p, { alpha: 1.5 })).toThrow(/alpha must be in \(0, 1\], received 1\.5/);
    expect(() => mic(p, { alpha: 0 })).toThrow(/received 0/);
    expect(() => mic(p, { c: -2 })).toThrow(/c must be a positive number, received -2/);
  });

  it('are computed by measureRegion only when asked (null otherwise)', () => {
    const ch1 = Uint8Array.from({ length: 400 }, (_, i) => i % 17);
    const ch2 = Uint8Array.from({ length: 400 }, (_, i) => (i * 7) % 23);
    const off = measureRegion(ch1, ch2, null);
    expect(off.micE).toBeNull();
    expect(off.ticE).toBeNull();
    const on = measureRegion(ch1, ch2, null, { mic: {} });
    expect(on.micE).toBe(mic(collectPairs(ch1, ch2, null)).micE);
  });
});
