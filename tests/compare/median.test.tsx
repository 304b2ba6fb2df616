/**
 * Compare shows the median beside the Fisher-z mean and says so in "Read with care" when they differ by
 * MEAN_MEDIAN_GAP (0.1) or more (issue 19 item 3); the value axis of r, ρ and τ-b stays within [−1, 1].
 * Expected values are computed here from the definitions (Fisher 1915 z = atanh r; the median of an even count
 * is the mean of the two middle values); the 0.1 cut-off is our rule.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderToStaticMarkup } from 'react-dom/server';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements, type Seeded } from './seed.js';
import { computeComparison, MEAN_MEDIAN_GAP } from '../../server/compare/compute.js';
import { Comparison } from '../../shared/schemas/compare.js';
import { SuperPlot } from '../../src/features/compare/components/SuperPlot';
import { StatsTable } from '../../src/features/compare/components/StatsTable';
import { plotDomain } from '../../src/features/compare/lib/plotDomain';

let t: TestApp;
let s: Seeded;
/** one coverslip like the issue's: a few cells near 1, many low ones */
const SKEWED = [0.999, 0.998, 0.995, 0.99, 0.98, 0.15, 0.12, 0.1, 0.18, 0.2];
const byDefinition = {
  fisherMean: (v: number[]) => Math.tanh(v.reduce((a, x) => a + Math.atanh(x), 0) / v.length),
  median: (v: number[]) => {
    const x = [...v].sort((a, b) => a - b);
    const h = x.length >> 1;
    return x.length % 2 ? x[h] : (x[h - 1] + x[h]) / 2;
  },
};

beforeAll(async () => {
  t = await makeTestApp();
  s = seedMeasurements(t.ctx, {
    studyId: t.world.studyA,
    userId: t.world.users.biologist.id,
    conditions: [
      { name: 'untreated', coverslips: [10, 10, 10], pearson: 0.2 },
      { name: 'treated', coverslips: [10, 10, 10], pearson: 0.5 },
    ],
  });
  const db = t.ctx.db.$client;
  const ids = db.prepare('SELECT m.id FROM measurements m JOIN fields f ON f.id = m.field_id WHERE f.coverslip_id = ? ORDER BY m.id').all(s.coverslipIds[0][0]) as { id: number }[];
  ids.forEach((m, i) => db.prepare('UPDATE measurements SET pearson = ? WHERE id = ?').run(SKEWED[i], m.id));
});
afterAll(() => t.close());

const compare = async (coefficient: 'pearson' | 'mandersM1') => Comparison.parse(await computeComparison(t.ctx, t.world.studyA, { coefficient, conditionIds: s.conditionIds, resamples: 200 }));

describe('median beside the mean', () => {
  it('each coverslip and condition carries its median; the condition median is the median of coverslip medians', async () => {
    const c = await compare('pearson');
    const skewed = c.coverslips.find((x) => x.id === s.coverslipIds[0][0])!;
    expect(skewed.mean).toBeCloseTo(byDefinition.fisherMean(SKEWED), 12);
    expect(skewed.median).toBeCloseTo(byDefinition.median(SKEWED), 12);
    expect(skewed.mean! - skewed.median!).toBeGreaterThan(0.3);
    for (const cond of c.conditions) {
      const medians = c.coverslips.filter((x) => x.conditionId === cond.id).map((x) => x.median!);
      expect(cond.median).toBeCloseTo(byDefinition.median(medians), 12);
    }
  });

  it('"Read with care" names the coverslip whose Fisher-z mean and median differ by 0.1 or more, and only it', async () => {
    const c = await compare('pearson');
    const w = c.warnings.find((x) => x.startsWith("The mean through Fisher's z and the median differ by 0.1 or more"));
    expect(MEAN_MEDIAN_GAP).toBe(0.1);
    expect(w).toBeDefined();
    expect(w).toContain(`untreated CS1: mean ${byDefinition.fisherMean(SKEWED).toFixed(3)}, median ${byDefinition.median(SKEWED).toFixed(3)}`);
    // the other coverslips hold values spread evenly around 0.2 or 0.5, where z is nearly linear
    for (const name of ['untreated CS2', 'untreated CS3', 'treated CS1', 'treated CS2', 'treated CS3']) expect(w).not.toMatch(new RegExp(`[(;] ?${name}:`));
    for (const x of c.coverslips.filter((x) => x.nCells >= 3 && x.id !== s.coverslipIds[0][0])) expect(Math.abs(x.mean! - x.median!)).toBeLessThan(0.1);
  });

  it('arithmetic means (Manders) get no such line', async () => {
    const c = await compare('mandersM1');
    expect(c.averaging).toBe('arithmetic');
    expect(c.warnings.some((x) => x.includes('median differ'))).toBe(false);
  });

  it('the statistics table shows the median column beside the mean', async () => {
    const c = await compare('pearson');
    const html = renderToStaticMarkup(<StatsTable data={c} />);
    expect(html).toContain('median of coverslip medians');
    expect(html.match(/data-testid="condition-median"/g)?.length).toBe(c.conditions.length);
  });

  it('reports frozen before the median existed still read (median null)', async () => {
    const c = await compare('pearson');
    const old = JSON.parse(JSON.stringify(c));
    for (const cond of old.conditions) delete cond.median;
    expect(Comparison.parse(old).conditions.every((x) => x.median === null)).toBe(true);
  });
});

describe('the value axis stays within the coefficient range', () => {
  it('r near 1: padding and nice rounding stop at 1 (the plot drawn from the comparison too)', async () => {
    expect(plotDomain([0.1, 0.999], [-1, 1])).toEqual([0, 1]);
    expect(plotDomain([-0.999, 0.999], [-1, 1])).toEqual([-1, 1]);
    expect(plotDomain([-0.98, -0.5], [-1, 1])[0]).toBe(-1);
    const c = await compare('pearson');
    const html = renderToStaticMarkup(<SuperPlot data={c} />);
    const ticks = [...html.matchAll(/text-anchor="end"[^>]*>([^<]+)</g)].map((m) => Number(m[1].replace('−', '-')));
    expect(ticks.length).toBeGreaterThan(2);
    for (const v of ticks) expect(Math.abs(v)).toBeLessThanOrEqual(1);
  });

  it('Manders keeps [0, 1]; a coefficient without a natural range follows its data; no data shows the range', () => {
    expect(plotDomain([0.02, 1], [0, 1])).toEqual([0, 1]);
    expect(plotDomain([3, 17], null)).toEqual([2, 18]);
    expect(plotDomain([], [-1, 1])).toEqual([-1, 1]);
    // one value: ±0.5 around it, padded and rounded, cut at the range end
    expect(plotDomain([null, 0.5], [-1, 1])).toEqual([-0.1, 1]);
  });
});
