/** API of the Cell table, exclusions, comparisons and CSV exports (server/routes/cell-table.ts, server/routes/compare.ts). */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements, type Seeded } from './seed.js';
import { Comparison } from '../../shared/schemas/compare.js';
import { GridResponse } from '../../shared/schemas/cell-table.js';
import { quadraticChiDistance, triangleSimilarity } from '../../shared/stats/histogram.js';

let t: TestApp;
let s: Seeded;
let bio: Awaited<ReturnType<TestApp['login']>>;
let micro: Awaited<ReturnType<TestApp['login']>>;

beforeAll(async () => {
  t = await makeTestApp();
  s = seedMeasurements(t.ctx, {
    studyId: t.world.studyA,
    userId: t.world.users.biologist.id,
    conditions: [
      { name: 'untreated', coverslips: [8, 10, 12], pearson: 0.3 },
      { name: 'treated, "high"', coverslips: [9, 11, 7, 10], pearson: 0.6 },
    ],
  });
  bio = await t.login('biologist');
  micro = await t.login('microscopist');
});
afterAll(() => t.close());

const grid = (q: string) => bio.get(`/api/studies/${t.world.studyA}/cell-table?${q}`);

describe('cell table', () => {
  it('pages through every cell of the study with a stable total', async () => {
    const p0 = await grid('pageSize=20');
    expect(p0.status).toBe(200);
    const body = GridResponse.parse(p0.body);
    expect(body.total).toBe(67);
    expect(body.rows).toHaveLength(20);
    expect(body.source).toMatchObject({ recipeId: s.recipeId, recipeName: 'Test recipe' });
    expect(body.canExclude).toBe(true);
    const all = new Set<number>();
    for (let p = 0; p < 4; p++) for (const r of (await grid(`pageSize=20&page=${p}`)).body.rows) all.add(r.cellId);
    expect(all.size).toBe(67);
    expect((await grid('pageSize=20&page=3')).body.rows).toHaveLength(7);
  });

  it('sorts by a coefficient in both directions (nulls last) and by condition', async () => {
    const asc = (await grid('sort=pearson&dir=asc&pageSize=500')).body.rows.map((r: { pearson: number }) => r.pearson);
    expect(asc).toEqual([...asc].sort((a, b) => a - b));
    const desc = (await grid('sort=pearson&dir=desc&pageSize=500')).body.rows.map((r: { pearson: number }) => r.pearson);
    expect(desc).toEqual([...asc].reverse());
    const byCond = (await grid('sort=condition&pageSize=500')).body.rows.map((r: { conditionId: number }) => r.conditionId);
    expect(byCond.indexOf(s.conditionIds[1])).toBe(30);
  });

  it('filters by condition, coverslip, value range, flags and name', async () => {
    expect((await grid(`conditionId=${s.conditionIds[0]}`)).body.total).toBe(30);
    expect((await grid(`coverslipId=${s.coverslipIds[1][0]},${s.coverslipIds[1][1]}`)).body.total).toBe(20);
    const ranged = await grid('range=pearson:0.4:0.7&pageSize=500');
    expect(ranged.body.total).toBeGreaterThan(0);
    for (const r of ranged.body.rows) expect(r.pearson >= 0.4 && r.pearson <= 0.7).toBe(true);
    const open = await grid('range=pearson::0.2&range=mandersM1:0:&pageSize=500');
    for (const r of open.body.rows) expect(r.pearson).toBeLessThanOrEqual(0.2);
    expect((await grid('saturated=yes')).body.total).toBe(7); // first cell of each coverslip
    expect((await grid('saturated=no')).body.total).toBe(60);
    expect((await grid('q=cell 1')).body.total).toBe(7 + 4 + 2 + 1); // "cell 1" ×7, "cell 10" ×4, "cell 11" ×2, "cell 12" ×1
    expect((await grid('q=%25')).body.total).toBe(0); // % is matched literally, not as a wildcard
  });

  it('rejects injection attempts and unknown columns in sort and filters with 400', async () => {
    for (const q of [
      'sort=pearson;DROP TABLE cells',
      'sort=(select 1)',
      'dir=asc;--',
      'range=pearson:0:1) OR 1=1 --',
      'range=manders_m1;--:0:1',
      'range=pearson:0 OR 1:1',
      "conditionId=1 OR 1=1",
      'pageSize=100000',
      'excluded=maybe',
    ]) {
      const res = await grid(q);
      expect(res.status, q).toBe(400);
      expect(typeof res.body.error).toBe('string');
      expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts:\d+/); // no stack trace
    }
    expect((await grid('pageSize=1')).body.total).toBe(67); // the table is still there
  });

  it('is readable by a lab member without exclude rights, invisible to another lab', async () => {
    const m = await micro.get(`/api/studies/${t.world.studyA}/cell-table`);
    expect(m.status).toBe(200);
    expect(m.body.canExclude).toBe(false);
    const outsider = await t.login('outsider');
    expect((await outsider.get(`/api/studies/${t.world.studyA}/cell-table`)).status).toBe(404);
  });

  it('chooses the source: a specific run, or a recipe', async () => {
    expect((await grid(`runId=${s.runId}`)).body.source.runId).toBe(s.runId);
    expect((await grid('runId=999999')).status).toBe(400);
    const src = await bio.get(`/api/studies/${t.world.studyA}/measurement-sources`);
    expect(src.body.defaultRecipeId).toBe(s.recipeId);
    expect(src.body.recipes[0].runs[0]).toMatchObject({ id: s.runId, measurements: 67 });
  });
});

describe('exclusions', () => {
  it('requires a reason, requires the exclude action, is audited, shows in the grid, and can be undone', async () => {
    const cellId = s.cellIds[3];
    expect((await bio.post(`/api/cells/${cellId}/exclusion`).send({})).status).toBe(400);
    expect((await bio.post(`/api/cells/${cellId}/exclusion`).send({ reason: '  ' })).status).toBe(400);
    expect((await micro.post(`/api/cells/${cellId}/exclusion`).send({ reason: 'out of focus' })).status).toBe(403);
    const ex = await bio.post(`/api/cells/${cellId}/exclusion`).send({ reason: 'out of focus, two nuclei' });
    expect(ex.status).toBe(200);
    expect(ex.body).toMatchObject({ cellId, excluded: true, exclusionReason: 'out of focus, two nuclei', excludedBy: 'biologist' });
    expect((await bio.post(`/api/cells/${cellId}/exclusion`).send({ reason: 'again' })).status).toBe(409);

    const rows = (await grid('excluded=yes')).body.rows;
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ cellId, excluded: true, exclusionReason: 'out of focus, two nuclei' });
    expect((await grid('excluded=no')).body.total).toBe(66);

    // the comparison leaves it out and counts it
    const c = Comparison.parse((await bio.get(`/api/studies/${t.world.studyA}/compare?coefficient=pearson&resamples=200`)).body);
    expect(c.omitted.excluded).toBe(1);
    expect(c.points.some((p) => p.cellId === cellId)).toBe(false);

    const undo = await bio.delete(`/api/cells/${cellId}/exclusion`).send({});
    expect(undo.status).toBe(200);
    expect(undo.body).toMatchObject({ excluded: false, exclusionReason: null });
    expect((await bio.delete(`/api/cells/${cellId}/exclusion`)).status).toBe(409);

    const audit = t.ctx.db.$client.prepare("SELECT action, actor_id AS actor, study_id AS studyId, details FROM audit_events WHERE entity = 'cell' AND entity_id = ? ORDER BY id").all(cellId) as {
      action: string;
      actor: number;
      studyId: number;
      details: string;
    }[];
    expect(audit.map((a) => a.action)).toEqual(['cell.exclude', 'cell.restore']);
    expect(audit.every((a) => a.actor === t.world.users.biologist.id && a.studyId === t.world.studyA)).toBe(true);
    expect(JSON.parse(audit[0].details)).toEqual({ reason: 'out of focus, two nuclei' });
    expect(JSON.parse(audit[1].details)).toEqual({ previousReason: 'out of focus, two nuclei' });
    const hist = await micro.get(`/api/cells/${cellId}/exclusion-history`);
    expect(hist.body.events.map((e: { action: string }) => e.action)).toEqual(['cell.exclude', 'cell.restore']);
  });

  it('404 for an unknown cell, 400 for a malformed id', async () => {
    expect((await bio.post('/api/cells/99999999/exclusion').send({ reason: 'abc' })).status).toBe(404);
    expect((await bio.post('/api/cells/1;drop/exclusion').send({ reason: 'abc' })).status).toBe(400);
  });
});

describe('CSV exports (RFC 4180)', () => {
  it('per-cell: header, CRLF, quoting of commas and quotes, formula guard, column choice', async () => {
    const cellId = s.cellIds[0];
    await bio.post(`/api/cells/${cellId}/exclusion`).send({ reason: '=HYPERLINK("x"), bad "ROI"\nsecond line' });
    const res = await bio.get(`/api/studies/${t.world.studyA}/cells.csv?columns=cellId,condition,pearson,excluded,exclusionReason&sort=condition`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toMatch(/attachment; filename="Study-A-cells\.csv"/);
    const text = res.text;
    expect(text.startsWith('cellId,condition,pearson,excluded,exclusionReason\r\n')).toBe(true);
    expect(text.endsWith('\r\n')).toBe(true);
    // the reason contains a quote, a comma and a line break: enclosed, quotes doubled, and guarded with '
    expect(text).toContain(`${cellId},untreated,`);
    expect(text).toContain(`,true,"'=HYPERLINK(""x""), bad ""ROI""\nsecond line"\r\n`);
    // a condition name with a comma and quotes
    expect(text).toContain(`,"treated, ""high""",`);
    const lines = text.split('\r\n').filter(Boolean);
    expect(lines.length).toBe(1 + 67);
    // numbers at full precision
    const row = (await grid(`pageSize=1&sort=condition`)).body.rows[0];
    expect(text).toContain(String(row.pearson));
    expect((await bio.get(`/api/studies/${t.world.studyA}/cells.csv?columns=cellId,password_hash`)).status).toBe(400);
    await bio.delete(`/api/cells/${cellId}/exclusion`);
  });

  it('per-coverslip CSV of a comparison', async () => {
    const res = await bio.get(`/api/studies/${t.world.studyA}/compare/coverslips.csv?coefficient=mandersM1&resamples=200`);
    expect(res.status).toBe(200);
    const lines = res.text.split('\r\n').filter(Boolean);
    expect(lines[0]).toBe('condition,conditionId,coverslip,replicate,coverslipId,cells,mean_mandersM1,mean_z_mandersM1,median_mandersM1,sd_mandersM1,averaging,sourceKind,runId,recipeId,recipeName,recipeVersion,scale');
    expect(lines).toHaveLength(1 + 7 + 1); // 7 seeded coverslips + the world's empty CS1
    expect(lines.find((l) => /^untreated,\d+,untreated CS2,2,/.test(l))).toMatch(/,10,/);
    expect(lines.some((l) => l.startsWith('"treated, ""high""",'))).toBe(true);
  });
});

describe('comparison', () => {
  it('shows the seeded effect with coverslips as replicates, reproducibly', async () => {
    const url = `/api/studies/${t.world.studyA}/compare?coefficient=pearson&seed=9&resamples=500&conditionIds=${s.conditionIds.join(',')}`;
    const c = Comparison.parse((await bio.get(url)).body);
    expect(c.averaging).toBe('fisher_z');
    expect(c.points).toHaveLength(67);
    expect(c.conditions.map((x) => x.nCoverslips)).toEqual([3, 4]);
    expect(c.conditions[1].mean! - c.conditions[0].mean!).toBeGreaterThan(0.2);
    expect(c.effects[0]).toMatchObject({ a: s.conditionIds[0], b: s.conditionIds[1] });
    expect(c.effects[0].ci.lower!).toBeGreaterThan(0);
    expect(c.tests.map((x) => x.test)).toEqual(['welch_t', 'mann_whitney_u']);
    expect(c.tests[0].p!).toBeLessThan(0.05);
    // Mann–Whitney on 3 vs 4 coverslip means with complete separation: exact p = 2/35 (2 / C(7,3))
    expect(c.tests[1].p!).toBeCloseTo(2 / 35, 12);
    // the statistics point the way of the effect shown beside them (b − a = treated − untreated > 0):
    // Welch's t > 0; U of group b = n_a·n_b = 12 under complete separation (definition, Mann & Whitney 1947)
    expect(c.effects[0].estimate!).toBeGreaterThan(0);
    expect(c.tests[0].statistic!).toBeGreaterThan(0);
    expect(c.tests[1].statistic).toBe(12);
    // a sentence opens with a capital letter, even when the condition name does not
    expect(c.summary).toMatch(/\. Treated, "high" is higher than untreated by 0\.\d{3} \(95% hierarchical bootstrap interval/);
    expect(c.histograms.map((h) => h.key)).toEqual(['coefficient', 'mean1', 'mean2']);
    expect(c.histograms[0].byCondition[0].counts.reduce((a, b) => a + b, 0)).toBe(30);
    expect(c.histograms[0].distances[0].emd!).toBeGreaterThan(0.2);
    // quadratic-chi beside χ² and EMD, from the histograms shown (Pele & Werman 2010; A_ij = max(0, 1 − |i − j|/2))
    const [h0, h1] = c.histograms[0].byCondition.map((b) => b.counts);
    const A = triangleSimilarity(h0.length, 2);
    expect(c.histograms[0].distances[0].quadraticChiS).toBe(quadraticChiDistance(h0, h1, A, 0.5));
    expect(c.histograms[0].distances[0].quadraticChiN).toBe(quadraticChiDistance(h0, h1, A, 0.9));
    expect(c.histograms[0].distances[0].quadraticChiS!).toBeGreaterThan(0);
    const again = Comparison.parse((await bio.get(url)).body);
    expect(again.effects).toEqual(c.effects);
    // coverslip mean through Fisher's z
    const slip = c.coverslips.find((x) => x.id === s.coverslipIds[0][0])!;
    const vals = c.points.filter((p) => p.coverslipId === slip.id).map((p) => p.value);
    expect(slip.mean).toBeCloseTo(Math.tanh(vals.reduce((a, v) => a + Math.atanh(v), 0) / vals.length), 12);
  });

  it('warns for fewer than three coverslips and uses ANOVA/Kruskal–Wallis for more than two conditions', async () => {
    const c = Comparison.parse((await bio.get(`/api/studies/${t.world.studyA}/compare?coefficient=mandersM2&resamples=200`)).body);
    // three conditions: the world's 'control' (one empty coverslip) plus the two seeded
    expect(c.conditions).toHaveLength(3);
    expect(c.tests.map((x) => x.test)).toEqual(['welch_t', 'mann_whitney_u']); // control has no data
    expect(c.warnings.some((w) => w.startsWith('Control has 0 coverslips'))).toBe(true);
    expect(c.averaging).toBe('arithmetic');
  });

  it('rejects an unknown coefficient with 400', async () => {
    const res = await bio.get(`/api/studies/${t.world.studyA}/compare?coefficient=password_hash`);
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/coefficient/);
  });
});
