/**
 * The Monte Carlo placement test and the measureObjects aggregate. References named beside each check:
 *  - calibration: p-values over 500 simulated cells with independent channels are uniform by the
 *    Kolmogorov–Smirnov test (Kolmogorov 1933, G. Ist. Ital. Attuari 4:83–91; Smirnov 1948, Ann. Math.
 *    Stat. 19:279–281, doi:10.1214/aoms/1177730256), p from the asymptotic Kolmogorov distribution with
 *    Stephens' small-sample factor (Stephens 1970, J. R. Stat. Soc. B 32:115–122,
 *    doi:10.1111/j.2517-6161.1970.tb00821.x) — all from memory;
 *  - chance fraction: the closed form 1 − (1 − πd²/A)^n₂ for channel-1 spots farther than d from the edge;
 *  - K envelope: the observed value equals ripley.ts 'none' with A = the region's pixel count.
 */
import { describe, expect, it } from 'vitest';
import { analyzeObjects, crossK, measureObjects, OBJECT_RESULT_KEYS, spotPlacementTest, Xoshiro128 } from '../../shared/analysis/index';

const W = 64;
/** a disk cell of radius 28 px centred in a 64×64 image (pixel-centre rule) */
const disk: number[] = [];
for (let y = 0; y < W; y++) for (let x = 0; x < W; x++) if ((x + 0.5 - 32) ** 2 + (y + 0.5 - 32) ** 2 <= 28 * 28) disk.push(y * W + x);

function uniformIn(region: number[], n: number, rng: Xoshiro128): [number[], number[]] {
  const xs: number[] = [], ys: number[] = [];
  for (let i = 0; i < n; i++) {
    const p = region[rng.nextInt(region.length)];
    xs.push((p % W) + rng.nextFloat());
    ys.push(Math.floor(p / W) + rng.nextFloat());
  }
  return [xs, ys];
}

/** P(D_n > d) for the one-sample KS statistic: Q((√n + 0.12 + 0.11/√n) d), Q(λ) = 2 Σ (−1)^(k−1) e^(−2k²λ²) */
function ksPValue(values: number[]): number {
  const v = [...values].sort((a, b) => a - b), n = v.length;
  let D = 0;
  v.forEach((x, i) => (D = Math.max(D, (i + 1) / n - x, x - i / n)));
  const lam = (Math.sqrt(n) + 0.12 + 0.11 / Math.sqrt(n)) * D;
  let q = 0;
  for (let k = 1; k <= 100; k++) q += 2 * (-1) ** (k - 1) * Math.exp(-2 * k * k * lam * lam);
  return Math.min(1, Math.max(0, q));
}

describe('Monte Carlo placement test', () => {
  it('is calibrated: 500 cells with independent channels give uniform p (KS p > 0.01)', () => {
    const rng = new Xoshiro128(2026);
    const ps: number[] = [];
    for (let c = 0; c < 500; c++) {
      const [x1, y1] = uniformIn(disk, 50, rng), [x2, y2] = uniformIn(disk, 50, rng);
      ps.push(spotPlacementTest(x1, y1, x2, y2, disk, W, { pairDistance: 2, placements: 199, seed: c }).pValue!);
    }
    expect(ksPValue(ps)).toBeGreaterThan(0.01);
    // and the KS check itself rejects a clearly non-uniform sample
    expect(ksPValue(ps.map((p) => p * p))).toBeLessThan(0.01);
  });

  it('has power ≥ 0.9 at α = 0.05 when 30 % of channel-2 spots sit 1 px right of a channel-1 spot', () => {
    const rng = new Xoshiro128(99);
    let hits = 0;
    const cells = 200;
    for (let c = 0; c < cells; c++) {
      const [x1, y1] = uniformIn(disk, 50, rng), [x2, y2] = uniformIn(disk, 35, rng);
      for (let i = 0; i < 15; i++) {
        x2.push(x1[i] + 1);
        y2.push(y1[i]);
      }
      if (spotPlacementTest(x1, y1, x2, y2, disk, W, { pairDistance: 2, placements: 199, seed: c }).pValue! <= 0.05) hits++;
    }
    expect(hits / cells).toBeGreaterThanOrEqual(0.9);
  });

  it('the chance fraction matches 1 − (1 − πd²/A)^n₂ for spots away from the edge (closed form)', () => {
    // a 200×200 square region, channel-1 spots in its middle: no edge effect within d
    const S = 200, sq: number[] = [];
    for (let i = 0; i < S * S; i++) sq.push(i);
    const rng = new Xoshiro128(5);
    const x1: number[] = [], y1: number[] = [];
    for (let i = 0; i < 40; i++) {
      x1.push(50 + rng.nextFloat() * 100);
      y1.push(50 + rng.nextFloat() * 100);
    }
    const x2 = Array.from({ length: 400 }, () => rng.nextFloat() * S), y2 = x2.map(() => rng.nextFloat() * S);
    const d = 3;
    const r = spotPlacementTest(x1, y1, x2, y2, sq, S, { pairDistance: d, placements: 999, seed: 3 });
    const expected = 1 - (1 - (Math.PI * d * d) / (S * S)) ** 400;
    // Monte Carlo error: sd of a mean of 999 × 40 correlated Bernoulli ≤ √(p(1−p)/999)
    expect(Math.abs(r.chanceFraction1! - expected)).toBeLessThan(4 * Math.sqrt((expected * (1 - expected)) / 999));
  });

  it('is repeatable for a seed; no spots → null; bad options are refused', () => {
    const rng = new Xoshiro128(1);
    const [x1, y1] = uniformIn(disk, 20, rng), [x2, y2] = uniformIn(disk, 20, rng);
    const a = spotPlacementTest(x1, y1, x2, y2, disk, W, { pairDistance: 2, seed: 4 });
    expect(spotPlacementTest(x1, y1, x2, y2, disk, W, { pairDistance: 2, seed: 4 })).toEqual(a);
    expect(a.placements).toBe(999);
    expect(spotPlacementTest(x1, y1, [], [], disk, W, { pairDistance: 2 }).pValue).toBeNull();
    expect(() => spotPlacementTest(x1, y1, x2, y2, disk, W, { pairDistance: 2, placements: 1.5 })).toThrow(/received 1.5/);
    expect(() => spotPlacementTest(x1, y1, x2, y2, disk, W, { pairDistance: 2, seed: -3 })).toThrow(/received -3/);
  });

  it("the Ripley's K envelope: observed equals crossK 'none' on the region's area; coupled spots lie above it", () => {
    const rng = new Xoshiro128(8);
    const [x1, y1] = uniformIn(disk, 50, rng), [x2, y2] = uniformIn(disk, 30, rng);
    for (let i = 0; i < 20; i++) {
      x2.push(x1[i] + 0.7);
      y2.push(y1[i] - 0.7);
    }
    const radii = [2, 5, 10];
    const r = spotPlacementTest(x1, y1, x2, y2, disk, W, { pairDistance: 2, seed: 2, kRadii: radii });
    const k = crossK(x1, y1, x2, y2, radii, { kind: 'area', area: disk.length });
    r.envelope!.observed.forEach((v, q) => expect(Math.abs(v - k.K[q]!)).toBeLessThan(1e-9 * k.K[q]!));
    expect(r.envelope!.observed[0]).toBeGreaterThan(r.envelope!.hi[0]);
    expect(r.envelope!.pValue[0]).toBeLessThan(0.01);
    for (let q = 0; q < radii.length; q++) expect(r.envelope!.lo[q]).toBeLessThanOrEqual(r.envelope!.hi[q]);
  });
});

/** Poisson-free synthetic pair: Gaussian spots (σ 1.5) on a background with a little uniform noise */
function render(pts: [number, number][], w: number, h: number, rng: Xoshiro128, base = 100): Uint16Array {
  const f = new Float64Array(w * h).fill(base);
  for (const [cx, cy] of pts)
    for (let y = Math.max(0, Math.floor(cy - 7)); y < Math.min(h, cy + 7); y++)
      for (let x = Math.max(0, Math.floor(cx - 7)); x < Math.min(w, cx + 7); x++) f[y * w + x] += 400 * Math.exp(-((x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2) / 4.5);
  return Uint16Array.from(f, (v) => Math.round(v + 20 * (rng.nextFloat() - 0.5)));
}

describe('measureObjects', () => {
  const M = 96;
  const rng = new Xoshiro128(14);
  const a: [number, number][] = [];
  while (a.length < 30) {
    const p: [number, number] = [6 + rng.nextFloat() * 84, 6 + rng.nextFloat() * 84];
    if (a.every((q) => Math.hypot(q[0] - p[0], q[1] - p[1]) > 8)) a.push(p);
  }
  // channel 2: the first 12 spots of channel 1 shifted by (0.8, 0.6) px (distance 1), then 8 elsewhere
  const b: [number, number][] = a.slice(0, 12).map(([x, y]) => [x + 0.8, y + 0.6]);
  while (b.length < 20) {
    const p: [number, number] = [6 + rng.nextFloat() * 84, 6 + rng.nextFloat() * 84];
    if ([...a, ...b].every((q) => Math.hypot(q[0] - p[0], q[1] - p[1]) > 8)) b.push(p);
  }
  const ch1 = render(a, M, M, rng), ch2 = render(b, M, M, rng);

  it('counts, pairs and positions follow the synthetic truth; keys are the contract', () => {
    const r = measureObjects(ch1, ch2, M, M, null, { seed: 1 });
    expect(Object.keys(r).sort()).toEqual([...OBJECT_RESULT_KEYS].sort());
    expect(r.count1).toBe(30);
    expect(r.count2).toBe(20);
    expect(r.paired1).toBeCloseTo(12 / 30, 12);
    expect(r.paired2).toBeCloseTo(12 / 20, 12);
    expect(r.mutualPairs).toBe(12);
    expect(r.pValue).toBeLessThan(0.01);
    expect(r.chanceFraction1!).toBeLessThan(0.2);
    for (const [x, y] of a) expect(Math.min(...r.spots1.map((s) => Math.hypot(s[0] - x, s[1] - y)))).toBeLessThan(0.2);
    expect(r.medianNearest2).toBeGreaterThan(0.8);
    expect(r.medianNearest2).toBeLessThan(1.2);
  });

  it('a mask region keeps only its spots; the detail carries peak and integrated intensity', () => {
    const mask = new Uint8Array(M * M);
    for (let y = 0; y < 48; y++) for (let x = 0; x < M; x++) mask[y * M + x] = 1;
    const d = analyzeObjects(ch1, ch2, M, M, mask, { seed: 1 });
    expect(d.result.count1).toBe(a.filter(([, y]) => y < 48).length);
    for (const s of d.detection1!.spots) {
      expect(s.peak).toBeGreaterThan(300);
      // integrated ≤ 400 · 2πσ² = 5655: the 7×7 window holds ~96 % of a centred spot, and its outer ring
      // (the local background) still carries some of the spot's tail
      expect(s.integrated).toBeGreaterThan(3500);
      expect(s.integrated).toBeLessThan(6500);
    }
  });

  it('degenerate: no spots in a channel → its fractions, medians and p null; JSON has no NaN', () => {
    const flat = new Uint16Array(M * M).fill(300);
    const r = measureObjects(ch1, flat, M, M, null);
    expect(r.count1).toBe(30);
    expect(r.count2).toBe(0);
    expect([r.paired1, r.paired2, r.medianNearest1, r.medianNearest2, r.pValue, r.chanceFraction1, r.mutualPairs]).toEqual([null, null, null, null, null, null, 0]);
    expect(JSON.stringify(r)).not.toMatch(/NaN/);
  });

  it('degenerate: all pixels saturated → no spots in either channel', () => {
    const sat = new Uint16Array(M * M).fill(65535);
    const r = measureObjects(sat, sat, M, M, null);
    expect([r.count1, r.count2, r.paired1, r.pValue]).toEqual([0, 0, null, null]);
  });

  it('degenerate: one spot in channel 2 → computed (fraction 1, p from the placements)', () => {
    const one = render([[a[0][0] + 0.5, a[0][1]]], M, M, rng);
    const r = measureObjects(ch1, one, M, M, null, { placements: 199 });
    expect(r.count2).toBe(1);
    expect(r.paired2).toBe(1);
    expect(r.paired1).toBeCloseTo(1 / 30, 12);
    expect(r.pValue).toBeGreaterThan(0);
    expect(r.pValue).toBeLessThan(0.2);
  });

  it('degenerate: a region smaller than the centroid window → every measure null', () => {
    const r = measureObjects(ch1, ch2, M, M, [0, 1, 2, 96, 97, 98]);
    expect(r).toEqual({ count1: null, count2: null, paired1: null, paired2: null, mutualPairs: null, medianNearest1: null, medianNearest2: null, pValue: null, chanceFraction1: null, spots1: [], spots2: [] });
  });

  it('bad options are refused, quoting the value', () => {
    expect(() => measureObjects(ch1, ch2, M, M, null, { pairDistance: -2 })).toThrow(/received -2/);
    expect(() => measureObjects(ch1, ch2, M, M, null, { spotSigma: 0 })).toThrow(/received 0/);
    expect(() => measureObjects(ch1, ch2, M, M, null, { placements: -1 })).toThrow(/received -1/);
    expect(() => measureObjects(ch1, ch2.subarray(1), M, M, null)).toThrow(/9215/);
  });
});
