/**
 * Quadratic-chi histogram distances (shared/analysis/quadratic-chi.ts; Pele & Werman 2010, ECCV,
 * doi:10.1007/978-3-642-15552-9_54). Check values: NumPy straight from the paper's formula
 * (tests/fixtures/distances/generate.py) for m = 0.5 and 0.9 and three bin similarities, to 1e-12; the paper's
 * identity QC with A = identity, m = 0.5 equals sqrt(2 χ²) (χ² = ½ Σ (P − Q)²/(P + Q)), i.e. the square root of
 * this project's chiSquaredDistance. Properties: symmetry, zero for equal shapes, scale invariance (common practice).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { chiSquaredDistance, quadraticChiDistance, triangleSimilarity } from '../../shared/analysis/index';

const fixture = JSON.parse(readFileSync(fileURLToPath(new URL('../fixtures/distances/expected.json', import.meta.url)), 'utf8'));

function similarity(name: string, K: number): Float64Array {
  if (name === 'identity') return triangleSimilarity(K, 1);
  if (name === 'triangle2') return triangleSimilarity(K, 2);
  const A = new Float64Array(K * K);
  for (let i = 0; i < K; i++) for (let j = 0; j < K; j++) A[i * K + j] = 1 - Math.abs(i - j) / Math.max(K - 1, 1);
  return A;
}

describe('quadratic-chi distances against NumPy from the paper’s formula', () => {
  for (const c of fixture.cases) {
    it(`${c.name}: every similarity and m to 1e-12`, () => {
      for (const v of c.values) {
        const got = quadraticChiDistance(c.p, c.q, similarity(v.similarity, c.p.length), v.m)!;
        expect(Math.abs(got - v.qc), `${v.similarity}, m ${v.m}: ${got} vs ${v.qc}`).toBeLessThanOrEqual(1e-12 * Math.max(1, v.qc));
      }
    });
    it(`${c.name}: QC with A = identity, m = 0.5 is sqrt(2 χ²) (Pele & Werman 2010) = sqrt(chiSquaredDistance)`, () => {
      const qc = quadraticChiDistance(c.p, c.q, triangleSimilarity(c.p.length, 1), 0.5)!;
      expect(Math.abs(qc - Math.sqrt(2 * c.chi2Paper))).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(qc * qc - chiSquaredDistance(c.p, c.q)!)).toBeLessThanOrEqual(1e-12);
    });
  }
});

describe('quadratic-chi properties', () => {
  const p = [3, 0, 7, 2, 9, 1], q = [1, 4, 4, 0, 6, 5];
  const A = triangleSimilarity(6, 2);
  it('is symmetric, zero for the same shape, and ignores the totals (histograms are normalised)', () => {
    expect(quadraticChiDistance(p, q, A, 0.9)).toBe(quadraticChiDistance(q, p, A, 0.9));
    expect(quadraticChiDistance(p, p.map((v) => 5 * v), A, 0.5)).toBe(0);
    expect(Math.abs(quadraticChiDistance(p, q, A, 0.5)! - quadraticChiDistance(p.map((v) => 10 * v), q, A, 0.5)!)).toBeLessThanOrEqual(1e-15);
  });
  it('counts a one-bin shift as less different with a similarity across neighbours than with the identity', () => {
    const a = [0, 4, 8, 4, 0, 0], b = [0, 0, 4, 8, 4, 0];
    expect(quadraticChiDistance(a, b, A, 0.5)!).toBeLessThan(quadraticChiDistance(a, b, triangleSimilarity(6, 1), 0.5)!);
  });
  it('is null for an empty histogram; bad sizes, m and counts are refused quoting the value', () => {
    expect(quadraticChiDistance([0, 0], [1, 2], triangleSimilarity(2, 2), 0.5)).toBeNull();
    expect(() => quadraticChiDistance([1], [1, 2], A, 0.5)).toThrow(/1 vs 2 bins/);
    expect(() => quadraticChiDistance(p, q, triangleSimilarity(5, 2), 0.5)).toThrow(/received 25/);
    expect(() => quadraticChiDistance(p, q, A, 1)).toThrow(/m must be in \[0, 1\), received 1/);
    expect(() => quadraticChiDistance([1, -1, 0, 0, 0, 0], q, A, 0.5)).toThrow(/received -1 at bin 1/);
    expect(() => triangleSimilarity(4, 0)).toThrow(/received 0/);
  });
});
