/**
 * Compare names its source and scale and carries coverslip means on both scales: `mean` on the r scale,
 * `meanZ` on Fisher's z (Fisher 1915, Biometrika 10:507: z = atanh r), the scale its tests use. Checked by
 * definition: meanZ is the mean of atanh over the coverslip's cells, tanh(meanZ) is `mean`, and Welch's t
 * (Welch 1947, Biometrika 34:28) recomputed from the exported z means equals the reported statistic.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements, type Seeded } from './seed.js';
import { Comparison } from '../../shared/schemas/compare.js';

let t: TestApp;
let s: Seeded;
let bio: Awaited<ReturnType<TestApp['login']>>;
const base = () => `/api/studies/${t.world.studyA}/compare`;

beforeAll(async () => {
  t = await makeTestApp();
  s = seedMeasurements(t.ctx, {
    studyId: t.world.studyA,
    userId: t.world.users.biologist.id,
    conditions: [
      { name: 'untreated', coverslips: [8, 10, 12], pearson: 0.3 },
      { name: 'treated', coverslips: [9, 11, 7, 10], pearson: 0.6 },
    ],
  });
  bio = await t.login('biologist');
});
afterAll(() => t.close());

const mean = (v: number[]) => v.reduce((a, b) => a + b, 0) / v.length;
const variance = (v: number[]) => {
  const m = mean(v);
  return v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1);
};

describe('source', () => {
  it('an unpinned request says which recipe it followed and that it was not pinned', async () => {
    const c = Comparison.parse((await bio.get(`${base()}?resamples=200`)).body);
    expect(c.source).toEqual({ kind: 'recipe', pinned: false, runId: null, recipeId: s.recipeId, recipeName: 'Test recipe', recipeVersion: expect.any(Number) });
  });
  it('a pinned run or recipe version is named as such', async () => {
    const run = Comparison.parse((await bio.get(`${base()}?resamples=200&runId=${s.runId}`)).body);
    expect(run.source).toMatchObject({ kind: 'run', pinned: true, runId: s.runId, recipeId: s.recipeId });
    const recipe = Comparison.parse((await bio.get(`${base()}?resamples=200&recipeId=${s.recipeId}`)).body);
    expect(recipe.source).toMatchObject({ kind: 'recipe', pinned: true, runId: null, recipeId: s.recipeId });
  });
});

describe('scales', () => {
  it('Pearson: meanZ is the mean of atanh r over the cells, mean = tanh(meanZ), and the tests use meanZ', async () => {
    const c = Comparison.parse((await bio.get(`${base()}?resamples=200&coefficient=pearson`)).body);
    expect(c.scale).toBe('fisher_z');
    for (const slip of c.coverslips.filter((x) => x.nCells > 0)) {
      const z = c.points.filter((p) => p.coverslipId === slip.id).map((p) => Math.atanh(p.value));
      expect(slip.meanZ!).toBeCloseTo(mean(z), 12);
      expect(slip.mean!).toBeCloseTo(Math.tanh(slip.meanZ!), 12);
    }
    const measured = c.conditions.filter((cd) => cd.nCoverslips > 0);
    expect(measured.map((cd) => cd.id)).toEqual(s.conditionIds);
    for (const cd of c.conditions.filter((x) => x.nCoverslips === 0)) expect(cd.meanZ).toBeNull();
    const zByCond = measured.map((cd) => c.coverslips.filter((x) => x.conditionId === cd.id && x.meanZ !== null).map((x) => x.meanZ!));
    for (const [i, cd] of measured.entries()) {
      expect(cd.meanZ!).toBeCloseTo(mean(zByCond[i]), 12);
      expect(cd.mean!).toBeCloseTo(Math.tanh(cd.meanZ!), 12);
    }
    // Welch's t of the later condition against the first, from the exported z means
    const [a, b] = zByCond;
    const welch = (mean(b) - mean(a)) / Math.sqrt(variance(a) / a.length + variance(b) / b.length);
    expect(c.tests[0].test).toBe('welch_t');
    expect(c.tests[0].statistic!).toBeCloseTo(welch, 10);
  });

  it("a coefficient averaged on its own values has no z means and says so", async () => {
    const c = Comparison.parse((await bio.get(`${base()}?resamples=200&coefficient=mandersM1`)).body);
    expect(c.scale).toBe('identity');
    expect(c.coverslips.every((x) => x.meanZ === null)).toBe(true);
    expect(c.conditions.every((x) => x.meanZ === null)).toBe(true);
  });
});

describe('exports', () => {
  it('coverslips.csv carries both scales and names the source and scale on every row', async () => {
    const q = `resamples=200&coefficient=pearson&runId=${s.runId}`;
    const c = Comparison.parse((await bio.get(`${base()}?${q}`)).body);
    const res = await bio.get(`${base()}/coverslips.csv?${q}`);
    expect(res.headers['content-disposition']).toContain(`-pearson-run-${s.runId}-coverslips.csv`);
    const [head, ...rows] = res.text.split('\r\n').filter(Boolean).map((l) => l.split(','));
    const col = (n: string) => head.indexOf(n);
    expect(rows).toHaveLength(c.coverslips.length);
    for (const [i, slip] of c.coverslips.entries()) {
      const r = rows[i];
      expect(Number(r[col('coverslipId')])).toBe(slip.id);
      expect(r[col('mean_pearson')] === '' ? null : Number(r[col('mean_pearson')])).toBe(slip.mean);
      expect(r[col('mean_z_pearson')] === '' ? null : Number(r[col('mean_z_pearson')])).toBe(slip.meanZ);
      expect(r.slice(col('sourceKind'))).toEqual(['run', String(s.runId), String(s.recipeId), 'Test recipe', String(c.source.recipeVersion), 'fisher_z']);
    }
  });
  it('cells.csv of a comparison names the source and carries the ids', async () => {
    const res = await bio.get(`${base()}/cells.csv?resamples=200&recipeId=${s.recipeId}`);
    const [head, first] = res.text.split('\r\n').map((l) => l.split(','));
    expect(head).toEqual(['condition', 'conditionId', 'coverslip', 'coverslipId', 'replicate', 'fieldId', 'cellId', 'pearson', 'sourceKind', 'runId', 'recipeId', 'recipeName', 'recipeVersion', 'scale']);
    expect(first.slice(8)).toEqual(['recipe', '', String(s.recipeId), 'Test recipe', expect.any(String), 'fisher_z']);
    expect(res.headers['content-disposition']).toMatch(/-pearson-Test-recipe-v\d+-cells\.csv/);
  });
});
