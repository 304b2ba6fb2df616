/**
 * A report is a frozen snapshot: later runs and exclusions do not change it; a newer report shows them.
 * Reference values: SciPy 1.17.1 `scipy.stats.ttest_ind(z_treated, z_control, equal_var=False)` on Fisher's z
 * of the coverslip means (script in the comment beside each check); Fisher's z mean tanh(mean(atanh r))
 * (Fisher 1915, Biometrika 10:507) computed in the test itself.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents, reports } from '../../server/db/schema.js';
import { statisticRow } from '../../server/reports/snapshot.js';
import { computeComparison } from '../../server/compare/compute.js';
import { buildReportWorld, excludeCell, insertRun, type ReportWorld } from './fixtures.js';
import type { ReportDetail } from '../../shared/schemas/reports.js';

let t: TestApp;
let rw: ReportWorld;
const BASE1 = [0.3, 0.35, 0.42, 0.55, 0.61, 0.5];
const BASE2 = [0.3, 0.35, 0.42, 0.65, 0.71, 0.6];
const fisherMean = (rs: number[]) => Math.tanh(rs.reduce((a, r) => a + Math.atanh(r), 0) / rs.length);

beforeAll(async () => {
  t = await makeTestApp();
  rw = await buildReportWorld(t.ctx, t.world);
});
afterAll(() => t?.close());

describe('report snapshot', () => {
  let first: ReportDetail;

  it('creates a report from the latest measurements with per-coverslip Fisher-z means', async () => {
    insertRun(t.ctx, t.world.studyA, rw, (s, c) => BASE1[s] + 0.02 * c);
    const bio = await t.login('biologist');
    const res = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Knock-down vs control', notes: 'first look', coefficients: ['pearson', 'mandersM1'] });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    first = res.body;
    const s = first.snapshot;
    expect(s.coefficients).toEqual(['pearson', 'mandersM1']);
    expect(s.conditions.map((c) => [c.name, c.cellsIncluded, c.coverslipsUsed])).toEqual([
      ['control', 12, 3],
      ['treated', 12, 3],
    ]);
    expect(s.recipes).toHaveLength(1);
    expect(s.recipes[0]).toMatchObject({ id: rw.recipeId, name: 'Facility standard', version: 2, provisional: false });
    expect(s.engineVersions).toEqual(['syntopy-engine 1.0.0']);
    // coverslip means through Fisher's z, checked against the formula
    for (const [i, slipId] of rw.coverslipIds.entries()) {
      const row = s.coverslipSummaries.find((x) => x.coefficient === 'pearson' && x.coverslipId === slipId)!;
      expect(row.n).toBe(4);
      expect(row.mean).toBeCloseTo(fisherMean([0, 1, 2, 3].map((c) => BASE1[i] + 0.02 * c)), 12);
    }
    // SciPy reference: 0.33018536400736215 (coverslip CS1 mean)
    expect(s.coverslipSummaries.find((x) => x.coverslipId === rw.coverslipIds[0] && x.coefficient === 'pearson')!.mean).toBeCloseTo(0.33018536400736215, 12);
    // Manders' M1 is not a correlation: arithmetic mean of cells → (r+1)/2 averaged
    const m1 = s.coverslipSummaries.find((x) => x.coefficient === 'mandersM1' && x.coverslipId === rw.coverslipIds[3])!;
    expect(m1.mean).toBeCloseTo((BASE1[3] + 0.03 + 1) / 2, 12);
    expect(s.statistics.map((x) => x.coefficient)).toEqual(['pearson', 'mandersM1']);
    expect(s.methods).toContain('control: 12 cells on 3 coverslips');
    expect(s.cautions.join(' ')).toMatch(/200 nm/);
    expect(s.composites.map((c) => c.conditionId)).toEqual(rw.conditionIds);
    expect(s.composites[0].outlines).toHaveLength(4);
    // pixels are read through the intake module: a small composite PNG and one cell's scatter are frozen in
    expect(s.composites[0].png).toMatch(/^data:image\/png;base64,/);
    expect(s.scatter).not.toBeNull();
    expect(s.scatter!.counts.reduce((a, b) => a + b, 0)).toBe(s.scatter!.pixels);
    expect(s.scatter!.counts).toHaveLength(s.scatter!.bins ** 2);
    // every measured cell of the two representative fields has its scatter, the chosen one first
    expect(s.scatters.map((x) => x.cellId)).toHaveLength(8);
    expect(s.scatters[0].cellId).toBe(s.scatter!.cellId);
    for (const x of s.scatters) expect(s.composites.some((c) => c.outlines.some((o) => o.cellId === x.cellId))).toBe(true);
    const audit = t.ctx.db.select().from(auditEvents).where(eq(auditEvents.action, 'report.create')).all();
    expect(audit).toHaveLength(1);
    expect(JSON.stringify({ ...s, composites: [] })).not.toMatch(/NaN/);
  });

  it("the report's Welch test on Fisher z of coverslip means (the comparison's) matches SciPy", () => {
    // the first report's data: coverslip i has cells BASE1[i] + 0.02·c, c = 0..3
    const slipMeans = rw.coverslipIds.map((id) => first.snapshot.coverslipSummaries.find((x) => x.coefficient === 'pearson' && x.coverslipId === id)!.mean);
    for (const [i, m] of slipMeans.entries()) expect(m).toBeCloseTo(fisherMean([0, 1, 2, 3].map((c) => BASE1[i] + 0.02 * c)), 12);
    const row = first.snapshot.statistics.find((x) => x.coefficient === 'pearson')!;
    // SciPy 1.17.1: ttest_ind(arctanh(m[3:]), arctanh(m[:3]), equal_var=False) → t = 4.093122368146452, p = 0.015784238552054172
    expect(row.test).toBe("Welch's t-test");
    expect(row.statistic).toBeCloseTo(4.093122368146452, 9);
    expect(row.p).toBeCloseTo(0.015784238552054172, 9);
    expect(row.effect).toBeCloseTo(0.19758753983525507, 9);
    // the sentence states the test result in the one p-value wording (shared/format.ts)
    expect(row.sentence).toMatch(/Welch's t-test t = 4\.093, p = 0\.016/);
    expect(row.alsoTests.map((x) => x.test)).toEqual(['Mann–Whitney U test']);
    // the frozen comparison is the one the row was read from
    expect(first.snapshot.comparisons.pearson.tests[0].statistic).toBe(row.statistic);
  });

  it('opens its sentence with a capital letter and gives t the sign of the effect (b − a)', async () => {
    const row = statisticRow('distanceCorrelation', await computeComparison(t.ctx, t.world.studyA, { coefficient: 'distanceCorrelation' }));
    expect(row.sentence).toMatch(/^[A-Z]/);
    expect(row.sentence).toContain('Distance correlation (dCor)');
    expect(row.effect!).toBeGreaterThan(0);
    expect(row.statistic!).toBeGreaterThan(0); // same direction as the effect (definition of Welch's t on b − a)
  });

  it('later runs and exclusions leave the report unchanged; a newer report shows them', async () => {
    const bio = await t.login('biologist');
    const before = (await bio.get(`/api/reports/${first.id}`)).body as ReportDetail;
    const storedBefore = JSON.stringify(t.ctx.db.select().from(reports).where(eq(reports.id, first.id)).get()!.snapshot);
    insertRun(t.ctx, t.world.studyA, rw, (s, c) => BASE2[s] + 0.02 * c, { engine: 'syntopy-engine 1.1.0' });
    excludeCell(t.ctx, rw.cellIds[0][0], 'out of focus', t.world.users.biologist.id);
    const after = (await bio.get(`/api/reports/${first.id}`)).body as ReportDetail;
    expect(after.snapshot).toEqual(before.snapshot);
    expect(JSON.stringify(t.ctx.db.select().from(reports).where(eq(reports.id, first.id)).get()!.snapshot)).toBe(storedBefore);

    const res = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'After re-run', coefficients: ['pearson'] });
    expect(res.status).toBe(201);
    const s2 = (res.body as ReportDetail).snapshot;
    expect(s2.engineVersions).toEqual(['syntopy-engine 1.1.0']);
    expect(s2.conditions[0]).toMatchObject({ cellsIncluded: 11, cellsExcluded: 1 });
    expect(s2.exclusions).toEqual([expect.objectContaining({ cellId: rw.cellIds[0][0], reason: 'out of focus', excludedBy: 'biologist', conditionName: 'control' })]);
    expect(s2.cells.find((c) => c.cellId === rw.cellIds[0][0])).toMatchObject({ excluded: true, exclusionReason: 'out of focus' });
    // SciPy reference (script above, run 2 with cell 0 of CS1 excluded): CS1 mean 0.34010257219506396, T1 mean 0.6806345698647114
    const m = (slip: number) => s2.coverslipSummaries.find((x) => x.coverslipId === rw.coverslipIds[slip])!.mean;
    expect(m(0)).toBeCloseTo(0.34010257219506396, 12);
    expect(m(3)).toBeCloseTo(0.6806345698647114, 12);
    // SciPy 1.17.1 Welch on Fisher z: t = 5.955192750273458, p = 0.0067623895132865154
    expect(s2.statistics[0].test).toBe("Welch's t-test");
    expect(s2.statistics[0].statistic).toBeCloseTo(5.955192750273458, 9);
    expect(s2.statistics[0].p).toBeCloseTo(0.0067623895132865154, 9);
    expect(s2.methods).toContain('1 cell was excluded');
    expect(s2.methods).toContain('syntopy-engine 1.1.0');
    // the first report still says what it said
    expect(before.snapshot.methods).not.toContain('syntopy-engine 1.1.0');

    const list = await bio.get(`/api/studies/${t.world.studyA}/reports`);
    expect(list.body.reports.map((r: { title: string }) => r.title)).toEqual(['After re-run', 'Knock-down vs control']);
  });

  it('marks provisional results', async () => {
    insertRun(t.ctx, t.world.studyA, rw, (s, c) => BASE1[s] + 0.01 * c, { provisional: true });
    const bio = await t.login('biologist');
    const res = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Provisional', coefficients: ['pearson'] });
    expect(res.body.snapshot.anyProvisional).toBe(true);
    expect(res.body.snapshot.recipes[0].provisional).toBe(true);
    expect(res.body.snapshot.methods).toMatch(/PROVISIONAL/);
    expect(res.body.anyProvisional).toBe(true);
  });

  it('honours the chosen scatter cell and condition subset; refuses unknown ones', async () => {
    const bio = await t.login('biologist');
    const chosen = rw.cellIds[4][2];
    const res = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Treated only', coefficients: ['pearson'], conditionIds: [rw.conditionIds[1]], scatterCellId: chosen });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const s = res.body.snapshot;
    expect(s.conditions.map((c: { name: string }) => c.name)).toEqual(['treated']);
    expect(s.cells.every((c: { conditionId: number }) => c.conditionId === rw.conditionIds[1])).toBe(true);
    expect(s.scatter.cellId).toBe(chosen);
    expect(s.statistics[0].test).toBe('none'); // one condition: nothing to compare
    expect((await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'x', coefficients: ['pearson'], scatterCellId: 999999 })).status).toBe(400);
    expect((await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'x', coefficients: ['pearson'], conditionIds: [999999] })).status).toBe(400);
    expect((await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'x', coefficients: ['pearson'], runId: 999999 })).status).toBe(400);
  });

  it('a study without measurements still gives a report, with nulls and no test', async () => {
    const out = await t.login('outsider');
    const res = await out.post(`/api/studies/${t.world.studyB}/reports`).send({ title: 'Empty', coefficients: ['pearson', 'icq'] });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const s = res.body.snapshot;
    expect(s.recipes).toEqual([]);
    expect(s.conditionSummaries.every((c: { mean: unknown; cells: number }) => c.mean === null && c.cells === 0)).toBe(true);
    expect(s.statistics.map((x: { test: string }) => x.test)).toEqual(['none', 'none']);
    expect(s.methods).toContain('No measurements were available');
    expect(s.scatter).toBeNull();
  });

  it('serves CSV tables (RFC 4180) and checks permissions', async () => {
    const bio = await t.login('biologist');
    const csv = await bio.get(`/api/reports/${first.id}/csv/cells`);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/text\/csv/);
    const lines = csv.text.trimEnd().split('\r\n');
    expect(lines[0]).toBe('condition,coverslip,field,cell,cell_id,excluded,exclusion_reason,run_id,pixels,pearson,mandersM1,threshold1,threshold2,threshold_method,background1,background2,saturated_fraction1,saturated_fraction2,randomization_p');
    expect(lines).toHaveLength(1 + 24);
    expect(lines[1].split(',').slice(0, 4)).toEqual(['control', 'CS1', 'field 1', 'cell 1']);
    for (const table of ['coverslips', 'conditions', 'statistics', 'exclusions']) expect((await bio.get(`/api/reports/${first.id}/csv/${table}`)).status).toBe(200);
    expect((await bio.get(`/api/reports/${first.id}/csv/nope`)).status).toBe(400);

    const collab = await t.login('collaborator');
    expect((await collab.get(`/api/reports/${first.id}`)).status).toBe(200);
    expect((await collab.get(`/api/reports/${first.id}`)).body.canShare).toBe(false);
    expect((await collab.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'x', coefficients: ['pearson'] })).status).toBe(403);
    const outsider = await t.login('outsider');
    expect((await outsider.get(`/api/reports/${first.id}`)).status).toBe(404);
    expect((await outsider.get(`/api/studies/${t.world.studyA}/reports`)).status).toBe(404);
    const bad = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: '', coefficients: ['nonsense'] });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/title/);
  });
});
