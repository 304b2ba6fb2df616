/**
 * Compare's single-pass computation (server/compare/comparison.ts `comparisonFrom`, on the grid index's
 * columns) gives exactly the statistics of the computation it replaced (tests/compare/reference-comparison.ts,
 * the code as it was), on a few-thousand-cell study with coverslips above and below NORMAL_ABOVE (so both the
 * normal-limit and the cell-by-cell bootstrap run), excluded cells, undefined values, |r| > 1, missing
 * intensities, provisional, saturated and calibrated measurements. And the answer's points: above
 * COMPARE_POINTS_MAX a deterministic sample in which every coverslip keeps its share and its extreme cells,
 * while the cells CSV and report comparisons still list every cell.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements, type Seeded } from './seed.js';
import { COMPARE_POINTS_MAX, Comparison, type CompareOptions } from '../../shared/schemas/compare.js';
import { comparisonInput, computeComparison } from '../../server/compare/compute.js';
import { comparisonFrom, pointList, pointsFromGrid, samplePoints, type PointColumns } from '../../server/compare/comparison.js';
import * as reference from './reference-comparison.js';

describe('the single-pass comparison equals the computation it replaced', () => {
  let t: TestApp;
  let s: Seeded;
  beforeAll(async () => {
    t = await makeTestApp();
    s = seedMeasurements(t.ctx, {
      studyId: t.world.studyA,
      userId: t.world.users.biologist.id,
      conditions: [
        { name: 'untreated', coverslips: [1500, 300, 40], pearson: 0.3 },
        { name: 'treated', coverslips: [1200, 25, 600], pearson: 0.55 },
        { name: 'washout', coverslips: [2, 700], pearson: 0.4 },
      ],
    });
    const db = t.ctx.db.$client;
    const ids = s.cellIds;
    db.prepare('UPDATE measurements SET k1 = mean1 / 1000.0, icq = (mean1 - 1000) / 500.0').run();
    for (const i of [3, 700, 1600, 2500]) db.prepare("UPDATE cells SET excluded = 1, exclusion_reason = 'debris' WHERE id = ?").run(ids[i]);
    for (const i of [5, 1801]) db.prepare('UPDATE measurements SET pearson = NULL, k1 = NULL WHERE cell_id = ?').run(ids[i]);
    db.prepare('UPDATE measurements SET pearson = 1.5 WHERE cell_id = ?').run(ids[9]);
    db.prepare('UPDATE measurements SET mean2 = NULL, icq = 0.9 WHERE cell_id = ?').run(ids[2100]);
    db.prepare('UPDATE measurements SET provisional = 1 WHERE cell_id IN (?, ?)').run(ids[7], ids[3000]);
    db.prepare('UPDATE measurements SET saturated_fraction2 = 0.2 WHERE cell_id = ?').run(ids[1900]);
    db.prepare(`UPDATE measurements SET provenance = '{"calibration":{"id":4}}' WHERE cell_id IN (?, ?)`).run(ids[8], ids[4000]);
  });
  afterAll(() => t.close());

  const cases: CompareOptions[] = [
    { coefficient: 'pearson' },
    { coefficient: 'spearman', seed: 7, resamples: 800, confidence: 0.9, bins: 12 },
    { coefficient: 'mandersM1', seed: 3 },
    { coefficient: 'k1', bins: 30 },
    { coefficient: 'icq', seed: 11, resamples: 300 },
  ];

  it('gives every statistic of the previous computation, exactly, for several coefficients and options', async () => {
    for (const o of [...cases, { coefficient: 'pearson' as const, conditionIds: [s.conditionIds[0], s.conditionIds[2]] }]) {
      const task = (await comparisonInput(t.ctx, t.world.studyA, o)).input();
      expect(task.grid.cellId.length).toBeGreaterThan(4000);
      const { generatedAt: _a, pointsTotal, pointsSample, ...now } = comparisonFrom(task);
      const { generatedAt: _b, ...before } = reference.comparisonFrom(reference.inputFromGrid(task));
      expect(now, o.coefficient).toEqual(before);
      expect(pointsSample).toBeNull();
      // what both count as the comparison's cells, and the points listed
      const points = pointsFromGrid(task);
      expect(pointsTotal).toBe(reference.pointsOf(reference.inputFromGrid(task)).cellId.length);
      expect(points).toEqual(reference.pointsOf(reference.inputFromGrid(task)));
    }
  });

  it('ran both bootstrap paths and the cases the data carry', async () => {
    const task = (await comparisonInput(t.ctx, t.world.studyA, { coefficient: 'pearson' })).input();
    const c = comparisonFrom(task);
    expect(c.bootstrap).toMatchObject({ resamples: 2000, normalAbove: 1000, normalCoverslips: 2 });
    expect(c.omitted).toEqual({ excluded: 4, undefinedValue: 3, provisional: 2, saturated: 1 + 8 });
    expect(c.warnings.some((w) => w.includes('mix channel calibrations (2 different'))).toBe(true);
    expect(c.histograms.map((h) => h.key)).toEqual(['coefficient', 'mean1', 'mean2']);
    const mean2 = c.histograms[2].byCondition.reduce((n, b) => n + b.counts.reduce((x, y) => x + y, 0), 0);
    expect(mean2).toBe(c.pointsTotal! - 1); // the cell without a channel-2 mean is not counted
  });
});

describe("the answer's points", () => {
  /** the cells of each coverslip, in order */
  const bySlip = (p: PointColumns) => {
    const m = new Map<number, number[]>();
    for (let k = 0; k < p.cellId.length; k++) m.set(p.coverslipId[k], [...(m.get(p.coverslipId[k]) ?? []), k]);
    return m;
  };

  it('are sampled deterministically, every coverslip keeping its share and its lowest and highest cell', () => {
    // 5 coverslips of 10,000, 3,000, 700, 29 and 3 cells, values from a fixed sequence with ties
    const sizes = [10000, 3000, 700, 29, 3];
    const n = sizes.reduce((a, b) => a + b, 0);
    const p: PointColumns = { cellId: new Int32Array(n), fieldId: new Int32Array(n), coverslipId: new Int32Array(n), conditionId: new Int32Array(n), value: new Float64Array(n) };
    let x = 12345;
    // cells of the coverslips interleaved in cell id order
    const slipOf = () => {
      for (;;) {
        x = (x * 1103515245 + 12345) % 2147483648;
        const j = x % sizes.length;
        if (counts[j] < sizes[j]) return j;
      }
    };
    const counts = sizes.map(() => 0);
    for (let k = 0; k < n; k++) {
      const j = slipOf();
      counts[j]++;
      p.cellId[k] = 100 + 2 * k;
      p.coverslipId[k] = 50 + j;
      p.conditionId[k] = j < 3 ? 1 : 2;
      p.fieldId[k] = 10 * j + (k % 4);
      p.value[k] = Math.round(((x >>> 8) % 1000) - 500) / 1000;
    }
    const max = 1000;
    const a = samplePoints(p, max);
    const b = samplePoints(p, max);
    expect(a.sampled).toBe(true);
    expect(b.points).toEqual(a.points);
    const got = a.points;
    expect(got.cellId.length).toBeLessThanOrEqual(max);
    expect(got.cellId.length).toBeGreaterThan(max - 2 * sizes.length);
    // a subset of the points, whole rows, in cell id order
    const row = new Map(Array.from(p.cellId, (id, k) => [id, k]));
    for (let i = 0; i < got.cellId.length; i++) {
      const k = row.get(got.cellId[i])!;
      expect([got.fieldId[i], got.coverslipId[i], got.conditionId[i], got.value[i]]).toEqual([p.fieldId[k], p.coverslipId[k], p.conditionId[k], p.value[k]]);
      if (i) expect(got.cellId[i]).toBeGreaterThan(got.cellId[i - 1]);
    }
    const all = bySlip(p);
    const drawn = bySlip(got);
    for (const [slip, ks] of all) {
      const share = (max * ks.length) / n;
      const mine = drawn.get(slip) ?? [];
      // its share (rounded, at most 2 fewer where an evenly spaced cell is an extreme one), at least 2
      expect(mine.length, `coverslip ${slip}`).toBeGreaterThanOrEqual(Math.max(2, Math.floor(share) - 2));
      expect(mine.length).toBeLessThanOrEqual(Math.max(2, Math.ceil(share)));
      const values = ks.map((k) => p.value[k]);
      const mv = mine.map((i) => got.value[i]);
      expect(Math.min(...mv)).toBe(Math.min(...values));
      expect(Math.max(...mv)).toBe(Math.max(...values));
    }
    // nothing to sample: the same columns
    expect(samplePoints(p, n)).toEqual({ points: p, sampled: false });
  });

  describe('through the API, above COMPARE_POINTS_MAX cells', () => {
    let t: TestApp;
    let s: Seeded;
    let bio: Awaited<ReturnType<TestApp['login']>>;
    const slips = [9000, 6500, 4000, 500, 2, 3000, 1];
    beforeAll(async () => {
      t = await makeTestApp({ COMPARE_INLINE_CELLS: '0' });
      s = seedMeasurements(t.ctx, {
        studyId: t.world.studyA,
        userId: t.world.users.biologist.id,
        conditions: [
          { name: 'untreated', coverslips: slips.slice(0, 5), pearson: 0.3 },
          { name: 'treated', coverslips: slips.slice(5), pearson: 0.6 },
        ],
      });
      bio = await t.login('biologist');
    });
    afterAll(() => t.close());
    const total = slips.reduce((a, b) => a + b, 0);

    it('lists a stated sample (every coverslip drawn, the same on a fresh computation); statistics and the CSV use every cell', async () => {
      expect(total).toBeGreaterThan(COMPARE_POINTS_MAX);
      const url = `/api/studies/${t.world.studyA}/compare?coefficient=pearson&seed=4`;
      const res = await bio.get(url);
      expect(res.status).toBe(200);
      const c = Comparison.parse(res.body);
      expect(c.pointsTotal).toBe(total);
      expect(c.pointsSample).toEqual({ method: 'coverslip_even', max: COMPARE_POINTS_MAX });
      expect(c.points.length).toBeLessThanOrEqual(COMPARE_POINTS_MAX);
      expect(c.points.length).toBeGreaterThan(COMPARE_POINTS_MAX - 2 * slips.length);
      expect(c.conditions.filter((x) => s.conditionIds.includes(x.id)).map((x) => x.nCells)).toEqual([9000 + 6500 + 4000 + 500 + 2, 3000 + 1]);
      for (const id of s.coverslipIds.flat()) expect(c.points.some((p) => p.coverslipId === id), `coverslip ${id}`).toBe(true);

      // the points are those the sampler picks from every point (the report comparison lists all of them)
      const full = await computeComparison(t.ctx, t.world.studyA, { coefficient: 'pearson', seed: 4 });
      expect(full.points).toHaveLength(total);
      expect(full.pointsSample).toBeNull();
      const cols: PointColumns = {
        cellId: Int32Array.from(full.points, (p) => p.cellId),
        fieldId: Int32Array.from(full.points, (p) => p.fieldId),
        coverslipId: Int32Array.from(full.points, (p) => p.coverslipId),
        conditionId: Int32Array.from(full.points, (p) => p.conditionId),
        value: Float64Array.from(full.points, (p) => p.value),
      };
      expect(c.points).toEqual(pointList(samplePoints(cols, COMPARE_POINTS_MAX).points));
      const { points: _p, pointsSample: _s, generatedAt: _g, ...statsServed } = c;
      const { points: _q, pointsSample: _t, generatedAt: _h, ...statsFull } = full;
      expect(statsServed).toEqual(statsFull);

      // cached: the same bytes; a cold computation of the same options (after a write) lists the same points
      const again = await bio.get(url);
      expect(again.text).toBe(res.text);
      expect((await bio.post(`/api/cells/${s.cellIds[0]}/exclusion`).send({ reason: 'two nuclei' })).status).toBe(200);
      expect((await bio.delete(`/api/cells/${s.cellIds[0]}/exclusion`).send({})).status).toBe(200);
      const cold = Comparison.parse((await bio.get(url)).body);
      expect(cold.generatedAt).not.toBe(c.generatedAt);
      expect(cold.points).toEqual(c.points);

      // the cells CSV: every included cell
      const csv = await bio.get(`/api/studies/${t.world.studyA}/compare/cells.csv?coefficient=pearson&seed=4`);
      expect(csv.status).toBe(200);
      const lines = csv.text.trim().split('\r\n');
      expect(lines).toHaveLength(total + 1);
      const at = lines[0].split(',').indexOf('cellId');
      expect(lines.slice(1).map((l) => Number(l.split(',')[at]))).toEqual(full.points.map((p) => p.cellId));
    }, 60000);
  });
});
