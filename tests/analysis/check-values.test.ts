/**
 * Check values from the issue. Sources named beside each check:
 *  - R package energy 1.7 (dcor, bcdcor, dcorT) and SciPy (kendalltau τ-b, spearmanr, pearsonr),
 *    also verified as exact fractions by hand;
 *  - SciPy's kendalltau documentation example;
 *  - hand calculation for Manders, overlap, histogram distances (EMD also SciPy's wasserstein_distance).
 */
import { describe, expect, it } from 'vitest';
import {
  chiSquaredDistance,
  distanceCorrelation,
  earthMoversDistance1d,
  icq,
  kendallTauB,
  manders,
  measureRegion,
  overlapCoefficients,
  pairsFromArrays,
  pearson,
  spearman,
} from '../../shared/analysis/index';

const rel = (a: number | null, b: number, tol = 1e-12) => {
  expect(a).not.toBeNull();
  expect(Math.abs((a as number) - b)).toBeLessThanOrEqual(tol * Math.max(1, Math.abs(b)));
};

describe('case A: x = 1..5, y = [1,3,2,5,4]', () => {
  const p = pairsFromArrays([1, 2, 3, 4, 5], [1, 3, 2, 5, 4]);
  const d = distanceCorrelation(p);
  it('dCor² = 14/19 (R energy dcor; exact fraction)', () => {
    rel(d.dcor, 0.858395075278952);
    rel(d.dcor! ** 2, 14 / 19);
  });
  it('bias-corrected dCor² = 1/2 (R energy bcdcor)', () => rel(d.bcdcorSq, 0.5));
  it('T = 2/√3 with df 4 (R energy dcorT.test)', () => {
    rel(d.tStat, 2 / Math.sqrt(3));
    expect(d.df).toBe(4);
    // one-sided p = P(t_4 > 2/√3); P(t_4 > t) = ½ − t(6 + t²)/(2(4 + t²)^{3/2}) (closed form of the t_4 CDF)
    const t = 2 / Math.sqrt(3);
    rel(d.pValue, 0.5 - (t * (6 + t * t)) / (2 * (4 + t * t) ** 1.5), 1e-9);
  });
  it('τ-b = 0.6 (SciPy kendalltau)', () => rel(kendallTauB(p), 0.6));
  it('ρ = 0.8 (SciPy spearmanr)', () => rel(spearman(p), 0.8));
});

describe('case B: x = [0,0,1,1,2,3], y = [1,0,1,2,2,2] (ties)', () => {
  const p = pairsFromArrays([0, 0, 1, 1, 2, 3], [1, 0, 1, 2, 2, 2]);
  const d = distanceCorrelation(p);
  it('dCor (R energy dcor)', () => rel(d.dcor, 0.781446112595766));
  it('bias-corrected dCor² = √(2/7) (R energy bcdcor)', () => rel(d.bcdcorSq, Math.sqrt(2 / 7)));
  it('τ-b = 9/√143 (SciPy kendalltau)', () => rel(kendallTauB(p), 9 / Math.sqrt(143)));
  it('ρ = 13/√247.5 (SciPy spearmanr)', () => rel(spearman(p), 13 / Math.sqrt(247.5)));
  it('ICQ = 1/3 (by hand: 5 of 6 products positive)', () => rel(icq(p), 1 / 3));
});

describe('case C: x = [3,1,4,1,5,9,2,6], y = [2,7,1,8,2,8,1,8]', () => {
  const p = pairsFromArrays([3, 1, 4, 1, 5, 9, 2, 6], [2, 7, 1, 8, 2, 8, 1, 8]);
  const d = distanceCorrelation(p);
  it('dCor (R energy dcor)', () => rel(d.dcor, 0.493394472007516));
  it('bias-corrected dCor² (R energy bcdcor)', () => rel(d.bcdcorSq, -0.0059147786748973, 1e-12));
  it('τ-b = 4/√621 (SciPy kendalltau)', () => rel(kendallTauB(p), 4 / Math.sqrt(621)));
  it('ρ (SciPy spearmanr)', () => rel(spearman(p), 0.198853681209925));
});

describe("SciPy's kendalltau documentation example", () => {
  it('x = [12,2,1,12,2], y = [1,4,7,1,0]: τ-b = −√(2/9)', () => {
    rel(kendallTauB(pairsFromArrays([12, 2, 1, 12, 2], [1, 4, 7, 1, 0])), -Math.sqrt(2 / 9));
  });
});

describe('Manders and overlap, R = [0,2,4,6,0], G = [1,0,3,5,0], thresholds 0 (by hand)', () => {
  const p = pairsFromArrays([0, 2, 4, 6, 0], [1, 0, 3, 5, 0]);
  it('M1 = 5/6, M2 = 8/9', () => {
    const m = manders(p, 0, 0);
    rel(m.m1, 5 / 6);
    rel(m.m2, 8 / 9);
  });
  it('overlap = √0.9, k1 = 0.75, k2 = 1.2', () => {
    const o = overlapCoefficients(p);
    rel(o.overlap, Math.sqrt(0.9));
    rel(o.k1, 0.75);
    rel(o.k2, 1.2);
  });
  it('measureRegion carries the same values with method none', () => {
    const r = measureRegion(new Uint16Array([0, 2, 4, 6, 0]), new Uint16Array([1, 0, 3, 5, 0]), null);
    rel(r.mandersM1, 5 / 6);
    rel(r.mandersM2, 8 / 9);
    rel(r.overlap, Math.sqrt(0.9));
    expect(r.thresholds).toEqual({ method: 'none', ch1: 0, ch2: 0 });
  });
});

describe('histogram distances, [1,2,3,0] vs [0,3,1,2] normalised (by hand; EMD also SciPy wasserstein_distance)', () => {
  it('EMD = 1/2', () => rel(earthMoversDistance1d([1, 2, 3, 0], [0, 3, 1, 2]), 0.5));
  it('chi-squared Σ(h1−h2)²/(h1+h2) = 7/10', () => rel(chiSquaredDistance([1, 2, 3, 0], [0, 3, 1, 2]), 0.7));
  it('identity gives 0 and symmetry holds', () => {
    expect(chiSquaredDistance([1, 2, 3], [1, 2, 3])).toBe(0);
    expect(earthMoversDistance1d([1, 2, 3], [1, 2, 3])).toBe(0);
    expect(chiSquaredDistance([5, 0, 1], [0, 3, 1])).toBeCloseTo(chiSquaredDistance([0, 3, 1], [5, 0, 1])!, 15);
  });
  it('empty histogram → null; length mismatch throws quoting lengths', () => {
    expect(chiSquaredDistance([0, 0], [1, 2])).toBeNull();
    expect(earthMoversDistance1d([1, 2], [0, 0])).toBeNull();
    expect(() => chiSquaredDistance([1], [1, 2])).toThrow(/1 vs 2/);
  });
});

describe('Pearson reference', () => {
  it('case A: r = 0.8 (SciPy pearsonr)', () => rel(pearson(pairsFromArrays([1, 2, 3, 4, 5], [1, 3, 2, 5, 4])), 0.8));
});
