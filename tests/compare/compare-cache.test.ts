/**
 * Compare computed in threads from the grid index and cached per data version (server/compare/compute.ts).
 * The reference is the comparison's definition as it was computed before the move: the cells of the SQL query
 * Compare ran on the web thread (every ready, undeleted cell of the study with its source measurement), handed
 * to the computation as it was then (tests/compare/reference-comparison.ts) on this thread. The answer served from the
 * cache must equal a fresh one, and a write (an exclusion, a restore, a run's measurement) must move it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements, type Seeded } from './seed.js';
import { Comparison, CompareQuery, type ComparisonHead } from '../../shared/schemas/compare.js';
import { byKey } from '../../shared/coefficients.js';
import { pointList, pointsJson } from '../../server/compare/comparison.js';
import { comparisonFrom, pointsOf, type CompareInput } from './reference-comparison.js';
import { measurementJoin, resolveSource } from '../../server/compare/source.js';

let t: TestApp;
let s: Seeded;
let bio: Awaited<ReturnType<TestApp['login']>>;

beforeAll(async () => {
  // every comparison in the threads (by default a study this small is computed on the web thread, by the same functions)
  t = await makeTestApp({ COMPARE_INLINE_CELLS: '0' });
  s = seedMeasurements(t.ctx, {
    studyId: t.world.studyA,
    userId: t.world.users.biologist.id,
    conditions: [
      { name: 'untreated', coverslips: [30, 25, 40], pearson: 0.3 },
      { name: 'treated', coverslips: [35, 20, 28, 31], pearson: 0.55 },
      { name: 'washout', coverslips: [22, 26, 24], pearson: 0.4 },
    ],
  });
  const db = t.ctx.db.$client;
  // what the reference must get right too: an excluded cell, an undefined value, a provisional and a
  // calibrated measurement, a deleted cell
  db.prepare("UPDATE cells SET excluded = 1, exclusion_reason = 'debris' WHERE id = ?").run(s.cellIds[3]);
  db.prepare('UPDATE measurements SET pearson = NULL WHERE cell_id = ?').run(s.cellIds[5]);
  db.prepare('UPDATE measurements SET provisional = 1 WHERE cell_id = ?').run(s.cellIds[7]);
  db.prepare(`UPDATE measurements SET provenance = '{"calibration":{"id":4}}' WHERE cell_id IN (?, ?)`).run(s.cellIds[8], s.cellIds[9]);
  db.prepare("UPDATE cells SET deleted_at = '2026-12-01T00:00:00Z' WHERE id = ?").run(s.cellIds[10]);
  bio = await t.login('biologist');
});
afterAll(() => t.close());

/** The cells of the SQL query Compare used before the move, as the computation's input. */
function sqlInput(studyId: number, query: Record<string, unknown>): CompareInput {
  const opts = CompareQuery.parse(query);
  const db = t.ctx.db.$client;
  const src = resolveSource(t.ctx.db, studyId, { runId: opts.runId, recipeId: opts.recipeId });
  let conds = db.prepare('SELECT id, name FROM conditions WHERE study_id = ? ORDER BY position, id').all(studyId) as { id: number; name: string }[];
  if (opts.conditionIds?.length) conds = conds.filter((c) => opts.conditionIds!.includes(c.id));
  const ids = new Set(conds.map((c) => c.id));
  const slips = (
    db
      .prepare('SELECT cs.id, cs.name, cs.replicate, cs.condition_id AS conditionId FROM coverslips cs JOIN conditions cd ON cd.id = cs.condition_id WHERE cd.study_id = ? ORDER BY cd.position, cd.id, cs.position, cs.id')
      .all(studyId) as CompareInput['slips']
  ).filter((x) => ids.has(x.conditionId));
  const params: Record<string, unknown> = { studyId };
  const rows = db
    .prepare(
      `SELECT c.id AS cellId, f.id AS fieldId, cs.id AS coverslipId, cd.id AS conditionId, m.${byKey(opts.coefficient).column} AS value,
        m.mean1 AS mean1, m.mean2 AS mean2, c.excluded AS excluded, m.provisional AS provisional,
        (coalesce(m.saturated_fraction1, 0) > 0 OR coalesce(m.saturated_fraction2, 0) > 0) AS saturated,
        json_extract(m.provenance, '$.calibration.id') AS calibrationId
      FROM cells c
      JOIN fields f ON f.id = c.field_id AND f.status = 'ready'
      JOIN coverslips cs ON cs.id = f.coverslip_id
      JOIN conditions cd ON cd.id = cs.condition_id AND cd.study_id = @studyId
      ${measurementJoin(src, params, 'JOIN')}
      WHERE c.deleted_at IS NULL AND c.role = 'cell'
      ORDER BY c.id`,
    )
    .all(params) as Record<string, number | null>[];
  const num = (k: string) => Float64Array.from(rows, (r) => (r[k] === null ? NaN : (r[k] as number)));
  const int = (k: string) => Int32Array.from(rows, (r) => r[k] as number);
  const flag = (k: string) => Uint8Array.from(rows, (r) => (r[k] ? 1 : 0));
  return {
    studyId,
    opts,
    source: { kind: src.runId !== null ? 'run' : src.recipeId !== null ? 'recipe' : 'none', pinned: opts.runId !== undefined || opts.recipeId !== undefined, runId: src.runId, recipeId: src.recipeId, recipeName: src.recipeName, recipeVersion: src.recipeVersion },
    conds,
    slips,
    cellId: int('cellId'),
    fieldId: int('fieldId'),
    coverslipId: int('coverslipId'),
    conditionId: int('conditionId'),
    value: num('value'),
    mean1: num('mean1'),
    mean2: num('mean2'),
    excluded: flag('excluded'),
    provisional: flag('provisional'),
    saturated: flag('saturated'),
    calibration: num('calibrationId'),
  };
}

/** The reference comparison (computed here, on this thread), without its time stamp. */
function fresh(query: Record<string, unknown>) {
  const input = sqlInput(t.world.studyA, query);
  const head: Partial<ComparisonHead> = comparisonFrom(input);
  delete head.generatedAt;
  const p = pointsOf(input);
  const points = Array.from(p.cellId, (cellId, k) => ({ cellId, fieldId: p.fieldId[k], coverslipId: p.coverslipId[k], conditionId: p.conditionId[k], value: p.value[k] }));
  return { ...head, points, pointsTotal: points.length, pointsSample: null };
}

const url = (q: string) => `/api/studies/${t.world.studyA}/compare?${q}`;
async function served(q: string) {
  const res = await bio.get(url(q));
  expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(200);
  const c: Partial<Comparison> = Comparison.parse(res.body);
  const at = c.generatedAt;
  delete c.generatedAt;
  return { c, at, text: res.text };
}

describe('the points JSON written byte by byte', () => {
  it('is exactly JSON.stringify of the points (integers, −0, exponents, fields that repeat and change)', () => {
    const value = [0.123, -0, 0, 1, -1, 1e-7, 123456.789, -0.5, 2.5e21, 0.1 + 0.2, 7, Number.MIN_VALUE];
    const n = value.length;
    const p = {
      cellId: Int32Array.from({ length: n }, (_, i) => [1, 9, 10, 99, 100, 12345, 2147483647, 5, 6, 7, 8, 42][i]),
      fieldId: Int32Array.from({ length: n }, (_, i) => (i < 4 ? 3 : i < 5 ? 70 : i < 9 ? 1000000 : 3)),
      coverslipId: Int32Array.from({ length: n }, (_, i) => (i < 5 ? 2 : 11)),
      conditionId: Int32Array.from({ length: n }, (_, i) => (i < 9 ? 1 : 2)),
      value: Float64Array.from(value),
    };
    expect(new TextDecoder().decode(pointsJson(p))).toBe(JSON.stringify(pointList(p)));
    const none = { cellId: new Int32Array(0), fieldId: new Int32Array(0), coverslipId: new Int32Array(0), conditionId: new Int32Array(0), value: new Float64Array(0) };
    expect(new TextDecoder().decode(pointsJson(none))).toBe('[]');
  });
});

describe('Compare off the web thread, cached per data version', () => {
  const queries = [
    { q: 'coefficient=pearson', o: { coefficient: 'pearson' } },
    { q: 'coefficient=mandersM1&seed=7&resamples=800&bins=12', o: { coefficient: 'mandersM1', seed: 7, resamples: 800, bins: 12 } },
    { q: 'coefficient=spearman&confidence=0.9', o: { coefficient: 'spearman', confidence: 0.9 } },
  ];

  it('answers what the SQL definition gives on the web thread, for several coefficients and options', async () => {
    for (const { q, o } of queries) {
      const { c } = await served(q);
      expect(c, q).toEqual(fresh(o));
    }
    // the cases the input carries: each is counted, and the mixed calibrations are named
    const { c } = await served('coefficient=pearson');
    expect(c.omitted).toMatchObject({ excluded: 1, undefinedValue: 1, provisional: 1 });
    expect(c.points!.length).toBe(s.cellIds.length - 3); // the excluded, the undefined and the deleted cell
    expect(c.warnings!.some((w) => w.includes('mix channel calibrations (2 different'))).toBe(true);
    expect(c.bootstrap).toMatchObject({ resamples: 2000, normalAbove: 1000, normalCoverslips: 0 });
  });

  it('serves a repeated request from the cache: the same bytes, equal to a fresh computation', async () => {
    const q = `coefficient=pearson&seed=3&conditionIds=${s.conditionIds[0]},${s.conditionIds[2]}`;
    const a = await served(q);
    const b = await served(q);
    expect(b.text).toBe(a.text); // the time stamp too: not computed again
    expect(b.c).toEqual(fresh({ coefficient: 'pearson', seed: 3, conditionIds: `${s.conditionIds[0]},${s.conditionIds[2]}` }));
    expect(b.c.conditions!.map((x) => x.id)).toEqual([s.conditionIds[0], s.conditionIds[2]]);
  });

  it('an exclusion and its undoing each give a new answer, equal to a fresh one', async () => {
    const before = await served('coefficient=pearson');
    const cellId = s.cellIds[20];
    expect((await bio.post(`/api/cells/${cellId}/exclusion`).send({ reason: 'two nuclei' })).status).toBe(200);
    const after = await served('coefficient=pearson');
    expect(after.at).not.toBe(before.at);
    expect(after.c.omitted!.excluded).toBe(before.c.omitted!.excluded + 1);
    expect(after.c.points!.some((p) => p.cellId === cellId)).toBe(false);
    expect(after.c).toEqual(fresh({ coefficient: 'pearson' }));
    expect((await bio.delete(`/api/cells/${cellId}/exclusion`).send({})).status).toBe(200);
    const restored = await served('coefficient=pearson');
    expect(restored.c.omitted!.excluded).toBe(before.c.omitted!.excluded);
    expect(restored.c).toEqual(fresh({ coefficient: 'pearson' }));
    expect(restored.c).toEqual(before.c);
  });

  it('a measurement a run adds moves the answer (the newest measurement id is in the key)', async () => {
    const before = await served('coefficient=pearson');
    const db = t.ctx.db.$client;
    const run = db.prepare("INSERT INTO runs (study_id, recipe_id, scope_kind, scope_id, status) VALUES (?, ?, 'study', ?, 'done') RETURNING id").get(t.world.studyA, s.recipeId, t.world.studyA) as { id: number };
    const cellId = s.cellIds[30];
    const fieldId = (db.prepare('SELECT field_id FROM cells WHERE id = ?').pluck().get(cellId) as number);
    db.prepare(`INSERT INTO measurements (run_id, cell_id, field_id, pixels, pearson, mean1, mean2, provenance) VALUES (?, ?, ?, 16, 0.987, 1000, 800, '{}')`).run(run.id, cellId, fieldId);
    const after = await served('coefficient=pearson');
    expect(after.at).not.toBe(before.at);
    expect(after.c.points!.find((p) => p.cellId === cellId)!.value).toBe(0.987);
    expect(after.c).toEqual(fresh({ coefficient: 'pearson' }));
  });

  it('the cells CSV lists the served points', async () => {
    const { c } = await served('coefficient=pearson');
    const res = await bio.get(`/api/studies/${t.world.studyA}/compare/cells.csv?coefficient=pearson`);
    expect(res.status).toBe(200);
    const lines = res.text.trim().split('\n');
    expect(lines).toHaveLength(c.points!.length + 1);
    const header = lines[0].split(',');
    const at = header.indexOf('cellId');
    expect(lines.slice(1).map((l) => Number(l.split(',')[at]))).toEqual(c.points!.map((p) => p.cellId));
  });
});
