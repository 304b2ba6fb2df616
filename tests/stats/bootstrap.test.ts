/** Hierarchical bootstrap: seeded reproducibility, identity cases and coverage on simulated two-level data. */
import { describe, expect, it } from 'vitest';
import { hierarchicalBootstrap, chiSquaredDistance, earthMoversDistance, histogram, equalEdges, median } from '../../shared/stats';
import { Xoshiro128 } from '../../shared/analysis/prng';

/** Box–Muller normal deviates from the seeded generator (Box & Muller 1958, Ann. Math. Stat. 29:610). */
function normal(rng: Xoshiro128) {
  const u = 1 - rng.nextFloat();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng.nextFloat());
}

/** condition → coverslips → cells; coverslip effect sd τ, cell sd σ around the condition mean μ */
function simulate(rng: Xoshiro128, mu: number, coverslips: number, cells: number, tau: number, sigma: number) {
  return Array.from({ length: coverslips }, () => {
    const m = mu + tau * normal(rng);
    return Array.from({ length: cells }, () => m + sigma * normal(rng));
  });
}

describe('hierarchicalBootstrap', () => {
  const rng = new Xoshiro128(7);
  const a = simulate(rng, 0.4, 4, 30, 0.05, 0.1);
  const b = simulate(rng, 0.55, 5, 25, 0.05, 0.1);

  it('is reproducible for a seed and changes with the seed', () => {
    const r1 = hierarchicalBootstrap([a, b], { seed: 42, resamples: 500 });
    const r2 = hierarchicalBootstrap([a, b], { seed: 42, resamples: 500 });
    const r3 = hierarchicalBootstrap([a, b], { seed: 43, resamples: 500 });
    expect(r2).toEqual(r1);
    expect(r3.differences[0].lower).not.toBe(r1.differences[0].lower);
  });

  it('estimates are the mean of coverslip means; the interval contains the estimate', () => {
    const r = hierarchicalBootstrap([a, b], { seed: 1, resamples: 500 });
    const mom = (c: number[][]) => c.reduce((s, cs) => s + cs.reduce((t, v) => t + v, 0) / cs.length, 0) / c.length;
    expect(r.conditions[0].estimate).toBeCloseTo(mom(a), 12);
    expect(r.differences[0].estimate).toBeCloseTo(mom(b) - mom(a), 12);
    for (const i of [...r.conditions, ...r.differences]) {
      expect(i.lower!).toBeLessThanOrEqual(i.estimate!);
      expect(i.upper!).toBeGreaterThanOrEqual(i.estimate!);
    }
  });

  it('constant data give a zero-width interval; an empty condition gives nulls', () => {
    const r = hierarchicalBootstrap([[[2, 2], [2]], [[3, 3, 3]], []], { seed: 1, resamples: 100 });
    expect(r.conditions[0]).toEqual({ estimate: 2, lower: 2, upper: 2 });
    expect(r.differences[0]).toMatchObject({ a: 0, b: 1, estimate: 1, lower: 1, upper: 1 });
    expect(r.conditions[2]).toEqual({ estimate: null, lower: null, upper: null });
  });

  it('fisher_z transform reports r-scale estimates within [−1, 1]', () => {
    const r = hierarchicalBootstrap([[[0.9, 0.95], [0.99, 0.97]], [[0.2, 0.4]]], { seed: 3, resamples: 200, transform: 'fisher_z' });
    expect(r.conditions[0].estimate).toBeCloseTo(Math.tanh((Math.atanh(0.9) + Math.atanh(0.95) + Math.atanh(0.99) + Math.atanh(0.97)) / 4), 12);
    for (const c of r.conditions) expect(Math.abs(c.upper!)).toBeLessThanOrEqual(1);
  });

  it('given values already on the z scale (`transformed`), gives exactly the result of the r values', () => {
    const rng = new Xoshiro128(9);
    // coverslips of 3 to 1,400 cells (above and below normalAbove), r in (−0.3, 0.99)
    const conds = [[3, 1400, 60], [1200, 5], [700]].map((sizes) => sizes.map((n) => Array.from({ length: n }, () => Math.min(0.99, rng.nextFloat() * 1.3 - 0.3))));
    const z = conds.map((c) => c.map((cs) => Float64Array.from(cs, (v) => Math.atanh(v))));
    const opts = { seed: 5, resamples: 400, transform: 'fisher_z' as const, normalAbove: 1000 };
    const fromR = hierarchicalBootstrap(conds, opts);
    expect(hierarchicalBootstrap(z, { ...opts, transformed: true })).toEqual(fromR);
    expect(fromR.normalCoverslips).toBe(2);
  });

  it('covers the known difference at close to the nominal 95% on simulated hierarchical data', () => {
    // 300 simulated experiments: 8 coverslips × 20 cells per condition, coverslip sd 0.05, cell sd 0.15,
    // true difference 0.1. Saravanan et al. (2020) report the two-stage bootstrap as near-nominal to
    // conservative; percentile intervals with few clusters under-cover slightly, so we accept [0.90, 0.995].
    const sim = new Xoshiro128(2026);
    const truth = 0.1;
    let covered = 0;
    const runs = 300;
    for (let k = 0; k < runs; k++) {
      const c0 = simulate(sim, 0.5, 8, 20, 0.05, 0.15);
      const c1 = simulate(sim, 0.5 + truth, 8, 20, 0.05, 0.15);
      const r = hierarchicalBootstrap([c0, c1], { seed: k + 1, resamples: 400 });
      const d = r.differences[0];
      if (d.lower! <= truth && truth <= d.upper!) covered++;
    }
    const coverage = covered / runs;
    expect(coverage).toBeGreaterThanOrEqual(0.9);
    expect(coverage).toBeLessThanOrEqual(0.995);
  });

  it('rejects bad options, quoting the value', () => {
    expect(() => hierarchicalBootstrap([a], { resamples: 3 })).toThrow(/3/);
    expect(() => hierarchicalBootstrap([a], { confidence: 1.5 })).toThrow(/1.5/);
  });
});

describe('hierarchicalBootstrap: the normal limit of large coverslips (normalAbove)', () => {
  /** skewed cell values: exponential (mean 0.2) from the seeded generator */
  const skewed = (rng: Xoshiro128, n: number, shift: number) => Array.from({ length: n }, () => shift - 0.2 * Math.log(1 - rng.nextFloat()));
  const rng = new Xoshiro128(11);
  const one = [[skewed(rng, 4000, 0.3)]];
  const x = one[0][0];
  const xbar = x.reduce((s, v) => s + v, 0) / x.length;
  const sdPop = Math.sqrt(x.reduce((s, v) => s + (v - xbar) ** 2, 0) / x.length);

  it('changes nothing when no coverslip is above the limit (the same draws, the same numbers)', () => {
    const a = simulate(new Xoshiro128(5), 0.4, 4, 30, 0.05, 0.1);
    const b = simulate(new Xoshiro128(6), 0.5, 4, 30, 0.05, 0.1);
    const exact = hierarchicalBootstrap([a, b], { seed: 9, resamples: 300 });
    const limited = hierarchicalBootstrap([a, b], { seed: 9, resamples: 300, normalAbove: 30 });
    expect(limited.normalCoverslips).toBe(0);
    expect(limited.conditions).toEqual(exact.conditions);
    expect(limited.differences).toEqual(exact.differences);
    expect(exact.normalAbove).toBeNull();
  });

  it('one coverslip: cell by cell and through the normal limit both give the mean ± 1.96 σ̂/√n of the bootstrap mean', () => {
    // with a single coverslip the condition's resample is that coverslip's cell-level resample, whose
    // distribution is the bootstrap distribution of a mean: centred on x̄ with sd σ̂/√n (Efron & Tibshirani 1993, ch. 5)
    const se = sdPop / Math.sqrt(x.length);
    const exact = hierarchicalBootstrap(one, { seed: 3, resamples: 4000 });
    const limit = hierarchicalBootstrap(one, { seed: 4, resamples: 4000, normalAbove: 1000 });
    expect(limit.normalCoverslips).toBe(1);
    expect(limit.normalAbove).toBe(1000);
    for (const r of [exact, limit]) {
      // Monte Carlo error of a 2.5 % quantile of 4,000 resamples is about 0.06 se; the skewness moves each end by
      // about γ/(6√n)·(1.96² − 1) se ≈ 0.03 se here
      expect(Math.abs(r.conditions[0].lower! - (xbar - 1.96 * se))).toBeLessThan(0.15 * se);
      expect(Math.abs(r.conditions[0].upper! - (xbar + 1.96 * se))).toBeLessThan(0.15 * se);
    }
  });

  it('on two-level data the intervals through the limit agree with cell-by-cell ones within Monte Carlo error', () => {
    const r2 = new Xoshiro128(21);
    const cond = (shift: number) => Array.from({ length: 5 }, (_, i) => skewed(r2, 1500 + 100 * i, shift + 0.03 * r2.nextFloat()));
    const data = [cond(0.3), cond(0.33)];
    const exact = hierarchicalBootstrap(data, { seed: 1, resamples: 3000 });
    const limit = hierarchicalBootstrap(data, { seed: 2, resamples: 3000, normalAbove: 1000 });
    expect(limit.normalCoverslips).toBe(10);
    const width = exact.differences[0].upper! - exact.differences[0].lower!;
    expect(limit.differences[0].estimate).toBe(exact.differences[0].estimate);
    expect(Math.abs(limit.differences[0].lower! - exact.differences[0].lower!)).toBeLessThan(0.08 * width);
    expect(Math.abs(limit.differences[0].upper! - exact.differences[0].upper!)).toBeLessThan(0.08 * width);
    // and a different seed of the exact bootstrap moves the ends by as much
    const again = hierarchicalBootstrap(data, { seed: 3, resamples: 3000 });
    expect(Math.abs(again.differences[0].lower! - exact.differences[0].lower!)).toBeLessThan(0.08 * width);
  });

  it('rejects a limit below 1, quoting it', () => {
    expect(() => hierarchicalBootstrap(one, { normalAbove: 0 })).toThrow(/0/);
  });
});

describe('median by selection', () => {
  it('equals the type-7 median of the sorted values, odd and even lengths, with ties', () => {
    const r = new Xoshiro128(8);
    for (let t = 0; t < 200; t++) {
      const n = 1 + (t % 37);
      const x = Array.from({ length: n }, () => Math.round(r.nextFloat() * (t % 3 === 0 ? 5 : 1000)) / 10);
      const s = [...x].sort((a, b) => a - b);
      const h = (n - 1) / 2;
      const want = s[Math.floor(h)] + (h - Math.floor(h)) * (s[Math.min(n - 1, Math.floor(h) + 1)] - s[Math.floor(h)]);
      expect(median(x)).toBe(want);
    }
    expect(median([])).toBeNaN();
    // input with NaN keeps the sorting path (NaN sorts last): the same answers as before selection
    expect(median([3, NaN, 1, 2])).toBe(2.5);
    expect(median([3, NaN, 1])).toBeNaN();
  });
});

describe('histogram distances', () => {
  it('identical histograms are at distance 0; disjoint ones at the maximum', () => {
    expect(chiSquaredDistance([1, 2, 3], [2, 4, 6])).toBe(0);
    expect(earthMoversDistance([1, 2, 3], [2, 4, 6])).toBe(0);
    expect(chiSquaredDistance([1, 0, 0], [0, 0, 1])).toBe(2); // Σ(p−q)²/(p+q), no ½ factor: maximum 2
    // all mass moved two bins: EMD = 2 bin widths (definition: L1 between cumulative histograms)
    expect(earthMoversDistance([1, 0, 0], [0, 0, 1], 0.5)).toBe(1);
    expect(chiSquaredDistance([0, 0], [1, 1])).toBeNull();
  });
  it('EMD is symmetric and equals the difference of means for a pure shift (1-D Wasserstein identity)', () => {
    const e = equalEdges(0, 10, 10);
    const h1 = histogram([0.5, 1.5, 2.5], e).counts;
    const h2 = histogram([3.5, 4.5, 5.5], e).counts;
    expect(earthMoversDistance(h1, h2, 1)).toBeCloseTo(3, 12);
    expect(earthMoversDistance(h2, h1, 1)).toBeCloseTo(3, 12);
  });
  it('the top edge is inside the last bin', () => {
    expect(histogram([0, 1, 10], equalEdges(0, 10, 5)).counts).toEqual([2, 0, 0, 0, 1]);
  });
});
