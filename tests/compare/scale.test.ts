/** The Cell table stays quick at 100,000 cells (server-side paging in SQL). Prints the measured latencies. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements } from './seed.js';
import { COMPARE_POINTS_MAX } from '../../shared/schemas/compare.js';

let t: TestApp;
let bio: Awaited<ReturnType<TestApp['login']>>;

beforeAll(async () => {
  t = await makeTestApp();
  seedMeasurements(t.ctx, {
    studyId: t.world.studyA,
    userId: t.world.users.biologist.id,
    conditions: [
      { name: 'a', coverslips: Array(5).fill(10000), pearson: 0.3 },
      { name: 'b', coverslips: Array(5).fill(10000), pearson: 0.5 },
    ],
  });
  bio = await t.login('biologist');
}, 120000);
afterAll(() => t.close());

describe('cell table at 100,000 cells', () => {
  it('answers each page request in well under a second', async () => {
    const base = `/api/studies/${t.world.studyA}/cell-table?pageSize=100`;
    const cases = ['', '&sort=pearson&dir=desc', '&sort=mandersM1&page=500', '&range=pearson:0.2:0.5&saturated=no&sort=spearman', '&excluded=no&sort=coverslip&dir=desc&page=900'];
    const timings: Record<string, number> = {};
    await bio.get(base); // warm the statement cache
    for (const c of cases) {
      const t0 = performance.now();
      const res = await bio.get(base + c);
      const ms = performance.now() - t0;
      expect(res.status).toBe(200);
      expect(res.body.rows.length).toBeGreaterThan(0);
      timings[c || '(default)'] = Math.round(ms);
    }
    console.log('[cell-table 100k] ms per request:', JSON.stringify(timings));
    for (const ms of Object.values(timings)) expect(ms).toBeLessThan(5000); // lenient bound for shared, loaded CI machines; the measured figures are printed above
  }, 60000);

  it('computes the comparison on 100,000 cells', async () => {
    const t0 = performance.now();
    const res = await bio.get(`/api/studies/${t.world.studyA}/compare?coefficient=pearson`);
    const ms = performance.now() - t0;
    expect(res.status).toBe(200);
    expect(res.body.pointsTotal).toBe(100000);
    // the answer lists a stated sample of the points (the statistics and the cells CSV use every cell)
    expect(res.body.points.length).toBeLessThanOrEqual(COMPARE_POINTS_MAX);
    expect(res.body.points.length).toBeGreaterThan(COMPARE_POINTS_MAX - 20);
    expect(res.body.pointsSample).toEqual({ method: 'coverslip_even', max: COMPARE_POINTS_MAX });
    console.log(`[compare 100k] ${Math.round(ms)} ms with ${res.body.bootstrap.resamples} resamples`);
  }, 60000);
});
