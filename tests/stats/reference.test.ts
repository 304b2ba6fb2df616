/**
 * shared/stats against SciPy 1.10 (Debian python3-scipy) via tests/fixtures/stats/generate.py →
 * reference.json, plus a published worked example and the identities a right answer must satisfy.
 */
import { describe, expect, it } from 'vitest';
import ref from '../fixtures/stats/reference.json';
import {
  welchT,
  mannWhitneyU,
  mannWhitneyExactPmf,
  oneWayAnova,
  kruskalWallis,
  fisherZMean,
  summarize,
  studentTTwoSided,
  fUpperTail,
  chiSquaredUpperTail,
  normalUpperTail,
} from '../../shared/stats';

/** |a − b| ≤ abs + rel·|b| */
const close = (a: number | null, b: number, rel = 1e-7, abs = 1e-12) => {
  expect(a).not.toBeNull();
  expect(Math.abs((a as number) - b), `${a} vs ${b}`).toBeLessThanOrEqual(abs + rel * Math.abs(b));
};

describe('distributions (jStat) vs SciPy', () => {
  it.each(ref.distributions.t)('t two-sided %o', (c) => close(studentTTwoSided(c.t, c.df), c.p2, 1e-7)); // jStat's incomplete beta: ~3e-8 relative
  it.each(ref.distributions.f)('F upper tail %o', (c) => close(fUpperTail(c.f, c.d1, c.d2), c.sf, 1e-7));
  it.each(ref.distributions.chi2)('chi2 upper tail %o', (c) => close(chiSquaredUpperTail(c.x, c.k), c.sf, 1e-7));
  it.each(ref.distributions.norm)('normal upper tail %o', (c) => close(normalUpperTail(c.z), c.sf, 1e-7));
});

describe("Welch's t vs SciPy ttest_ind(equal_var=False)", () => {
  it.each(ref.pairs.map((c) => [c.name, c] as const))('%s', (_n, c) => {
    const r = welchT(c.x, c.y);
    close(r.statistic, c.welch.t, 1e-10);
    close(r.df[0], c.welch.df, 1e-10);
    close(r.p, c.welch.p, 1e-7);
  });
  it('is antisymmetric in its samples and invariant to a common shift', () => {
    const { x, y } = ref.pairs[0];
    const a = welchT(x, y);
    const b = welchT(y, x);
    expect(b.statistic).toBeCloseTo(-(a.statistic as number), 12);
    expect(b.p).toBeCloseTo(a.p as number, 12);
    const s = welchT(x.map((v) => v + 100), y.map((v) => v + 100));
    expect(s.statistic).toBeCloseTo(a.statistic as number, 8);
  });
  it('returns null p (not NaN) for degenerate input', () => {
    expect(welchT([1], [2, 3]).p).toBeNull();
    expect(welchT([1, 1], [1, 1]).p).toBeNull();
    expect(() => welchT([1, NaN], [1, 2])).toThrow(/NaN/);
  });
});

describe('Mann–Whitney U vs SciPy mannwhitneyu(method="auto", two-sided)', () => {
  it.each(ref.pairs.map((c) => [c.name, c] as const))('%s', (_n, c) => {
    const r = mannWhitneyU(c.x, c.y);
    expect(r.statistic).toBe(c.mannWhitney.u);
    expect(r.note).toContain(c.mannWhitney.method === 'exact' ? 'exact' : 'normal approximation');
    close(r.p, c.mannWhitney.p, 1e-8);
    const a = mannWhitneyU(c.x, c.y, { method: 'asymptotic' });
    close(a.p, c.mannWhitneyAsymptotic.p, 1e-8);
  });
  it('exact null distribution sums to 1 and is symmetric', () => {
    const pmf = mannWhitneyExactPmf(5, 7);
    expect(pmf.length).toBe(36);
    expect(pmf.reduce((s, v) => s + v, 0)).toBeCloseTo(1, 14);
    for (let u = 0; u <= 35; u++) expect(pmf[u]).toBeCloseTo(pmf[35 - u], 15);
    // P(U = 0) = 1 / C(12, 5) = 1/792 (only one arrangement puts all x below all y)
    expect(pmf[0]).toBeCloseTo(1 / 792, 15);
  });
  it('U1 + U2 = n1·n2 (swap symmetry)', () => {
    const { x, y } = ref.pairs[3];
    expect((mannWhitneyU(x, y).statistic as number) + (mannWhitneyU(y, x).statistic as number)).toBe(x.length * y.length);
  });
});

describe('one-way ANOVA and Kruskal–Wallis vs SciPy f_oneway / kruskal', () => {
  it.each(ref.groups.map((c) => [c.name, c] as const))('%s', (_n, c) => {
    const a = oneWayAnova(c.groups);
    close(a.statistic, c.anova.f, 1e-10);
    expect(a.df).toEqual(c.anova.df);
    close(a.p, c.anova.p, 1e-7);
    const k = kruskalWallis(c.groups);
    close(k.statistic, c.kruskal.h, 1e-10);
    close(k.p, c.kruskal.p, 1e-7);
  });
  it('published worked example: NIST/SEMATECH e-Handbook of Statistical Methods §7.4.3 one-way ANOVA (F = 9.59, df 2 and 12)', () => {
    // data and F from the handbook (from memory; reproduced exactly by SciPy in reference.json)
    const a = oneWayAnova([
      [6.9, 5.4, 5.8, 4.6, 4.0],
      [8.3, 6.8, 7.8, 9.2, 6.5],
      [8.0, 10.5, 8.1, 6.9, 9.3],
    ]);
    expect(a.df).toEqual([2, 12]);
    expect((a.statistic as number).toFixed(2)).toBe('9.59');
  });
  it('two groups: ANOVA F equals the pooled t² (identity)', () => {
    const g = ref.groups[3].groups;
    const a = oneWayAnova(g);
    const [x, y] = g;
    const m = (v: number[]) => v.reduce((s, t) => s + t, 0) / v.length;
    const ss = (v: number[]) => v.reduce((s, t) => s + (t - m(v)) ** 2, 0);
    const sp2 = (ss(x) + ss(y)) / (x.length + y.length - 2);
    const t = (m(x) - m(y)) / Math.sqrt(sp2 * (1 / x.length + 1 / y.length));
    expect(a.statistic).toBeCloseTo(t * t, 10);
  });
  it('is invariant to group order', () => {
    const g = ref.groups[2].groups;
    expect(kruskalWallis([...g].reverse()).statistic).toBeCloseTo(kruskalWallis(g).statistic as number, 12);
    expect(oneWayAnova([...g].reverse()).statistic).toBeCloseTo(oneWayAnova(g).statistic as number, 12);
  });
});

describe("Fisher's z averaging vs NumPy tanh(mean(arctanh(r)))", () => {
  it.each(ref.fisher)('%o', (c) => close(fisherZMean(c.r), c.mean, 1e-12));
  it('identity cases: equal coefficients average to themselves; odd symmetry; empty → null', () => {
    expect(fisherZMean([0.42, 0.42, 0.42])).toBeCloseTo(0.42, 14);
    expect(fisherZMean([-0.3, -0.7])).toBeCloseTo(-(fisherZMean([0.3, 0.7]) as number), 14);
    expect(fisherZMean([])).toBeNull();
    expect(fisherZMean([1, 1])).toBeGreaterThan(0.9999);
    expect(() => fisherZMean([1.2])).toThrow(/1.2/);
  });
});

describe('descriptive summaries vs NumPy (ddof=1, percentile linear)', () => {
  it.each(ref.descriptive)('%#', (c) => {
    const s = summarize(c.x);
    close(s.mean, c.mean, 1e-13);
    close(s.sd, c.sd, 1e-12);
    close(s.median, c.median, 1e-14);
    close(s.q1, c.q1, 1e-14);
    close(s.q3, c.q3, 1e-14);
  });
  it('empty → nulls, one value → null sd', () => {
    expect(summarize([])).toMatchObject({ n: 0, mean: null, sd: null, median: null });
    expect(summarize([3])).toMatchObject({ n: 1, mean: 3, sd: null, median: 3 });
  });
});
