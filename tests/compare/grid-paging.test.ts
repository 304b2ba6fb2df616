/**
 * The Cell table's in-memory index (server/compare/grid-index.ts) answers exactly what the SQL of source.ts
 * answers: for every sort key either way and every filter kind, the pages by number and the pages after each
 * `nextCursor` concatenate to the rows of `SELECT … ORDER BY …` (ties broken by cell id), and `total` is their
 * count. The reference is SQLite itself running gridFrom + orderBy (the definition of the grid's order).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedMeasurements, type Seeded } from './seed.js';
import { gridFrom, orderBy, resolveSource } from '../../server/compare/source.js';
import { GridQuery, GridResponse, SORT_KEYS, type SortKey } from '../../shared/schemas/cell-table.js';

let t: TestApp;
let bio: Awaited<ReturnType<TestApp['login']>>;
let seeded: Seeded;
const PAGE = 17;

beforeAll(async () => {
  t = await makeTestApp();
  seeded = seedMeasurements(t.ctx, {
    studyId: t.world.studyA,
    userId: t.world.users.biologist.id,
    conditions: [
      { name: 'b-second', coverslips: [30, 25], pearson: 0.3 },
      { name: 'A-first', coverslips: [20, 35, 15], pearson: 0.5 },
    ],
  });
  const db = t.ctx.db.$client;
  db.transaction(() => {
    // ties only the cell id breaks, NULLs, unmeasured cells, flags, names differing in case
    db.prepare('UPDATE measurements SET pearson = round(pearson, 1), mean1 = round(mean1 / 100) * 100').run();
    db.prepare('UPDATE measurements SET pearson = NULL, spearman = NULL WHERE cell_id % 11 = 0').run();
    db.prepare('UPDATE measurements SET provisional = 1 WHERE cell_id % 5 = 0').run();
    db.prepare('UPDATE measurements SET saturated_fraction2 = 0.02 WHERE cell_id % 9 = 0').run();
    db.prepare('DELETE FROM measurements WHERE cell_id % 17 = 0').run();
    db.prepare("UPDATE cells SET excluded = 1, exclusion_reason = 'debris' WHERE id % 7 = 0").run();
    db.prepare("UPDATE cells SET name = 'Cell ' || substr(name, 6) WHERE id % 3 = 0").run();
    db.prepare("UPDATE cells SET deleted_at = '2026-12-01T00:00:00Z' WHERE id % 19 = 0").run();
    db.prepare("UPDATE cells SET role = 'background' WHERE id % 23 = 0").run();
    // same position for both conditions: the condition id decides
    db.prepare('UPDATE conditions SET position = 3 WHERE id IN (?, ?)').run(...seeded.conditionIds);
    // a second run of the same recipe re-measures some cells: the latest measurement counts
    const run2 = (db.prepare("INSERT INTO runs (study_id, recipe_id, scope_kind, scope_id, status) VALUES (?, ?, 'study', ?, 'done') RETURNING id").get(t.world.studyA, seeded.recipeId, t.world.studyA) as { id: number }).id;
    db.prepare(
      `INSERT INTO measurements (run_id, cell_id, field_id, pixels, pearson, spearman, manders_m1, manders_m2, mean1, mean2, provenance)
       SELECT ?, cell_id, field_id, pixels, -pearson, spearman, manders_m1, manders_m2, mean1, mean2, '{}' FROM measurements WHERE run_id = ? AND cell_id % 4 = 0`,
    ).run(run2, seeded.runId);
  })();
  bio = await t.login('biologist');
}, 60000);
afterAll(() => t.close());

/** the grid's ids by SQL: the definition the index must match */
function sqlIds(params: Record<string, string>) {
  const q = GridQuery.parse(params);
  const src = resolveSource(t.ctx.db, t.world.studyA, q);
  const g = gridFrom(t.world.studyA, src, q);
  return (t.ctx.db.$client.prepare(`SELECT c.id ${g.from} ${orderBy(q.sort, q.dir)}`).raw().all(g.params) as [number][]).map((r) => r[0]);
}

async function byPages(params: Record<string, string>) {
  const ids: number[] = [];
  let total = -1;
  for (let page = 0; ; page++) {
    const res = await bio.get(`/api/studies/${t.world.studyA}/cell-table`).query({ ...params, pageSize: PAGE, page });
    expect(res.status).toBe(200);
    const body = GridResponse.parse(res.body);
    total = body.total;
    ids.push(...body.rows.map((r) => r.cellId));
    if (body.rows.length < PAGE) break;
  }
  return { ids, total };
}

async function byCursor(params: Record<string, string>) {
  const ids: number[] = [];
  let cursor: string | null = null;
  for (let i = 0; i < 1000; i++) {
    const res = await bio.get(`/api/studies/${t.world.studyA}/cell-table`).query({ ...params, pageSize: PAGE, ...(cursor ? { cursor } : {}) });
    expect(res.status).toBe(200);
    const body = GridResponse.parse(res.body);
    ids.push(...body.rows.map((r) => r.cellId));
    cursor = body.nextCursor;
    if (!cursor) break;
  }
  return ids;
}

async function expectSame(params: Record<string, string>) {
  const want = sqlIds(params);
  const pages = await byPages(params);
  expect(pages.total, JSON.stringify(params)).toBe(want.length);
  expect(pages.ids, JSON.stringify(params)).toEqual(want);
  expect(await byCursor(params), JSON.stringify(params)).toEqual(want);
  return want;
}

describe('Cell table paging: the index and the cursor give exactly the SQL rows', () => {
  it('has the cases it is meant to check (ties, NULLs, unmeasured, deleted, background, re-measured)', () => {
    const db = t.ctx.db.$client;
    const n = (sql: string) => (db.prepare(sql).raw().get() as [number])[0];
    expect(n('SELECT count(*) FROM measurements WHERE pearson IS NULL')).toBeGreaterThan(0);
    expect(n('SELECT count(*) FROM cells WHERE deleted_at IS NOT NULL')).toBeGreaterThan(0);
    expect(n("SELECT count(*) FROM cells WHERE role = 'background'")).toBeGreaterThan(0);
    expect(n('SELECT count(*) FROM (SELECT cell_id FROM measurements GROUP BY cell_id HAVING count(*) > 1)')).toBeGreaterThan(0);
    expect(n('SELECT count(*) FROM (SELECT pearson FROM measurements GROUP BY pearson HAVING count(*) > 3)')).toBeGreaterThan(0);
  });

  it('every sort key, both directions, no filter', async () => {
    for (const sort of SORT_KEYS) for (const dir of ['asc', 'desc']) await expectSame({ sort, dir });
  }, 120000);

  const filters: Record<string, string>[] = [
    { excluded: 'no' },
    { excluded: 'yes' },
    { saturated: 'yes' },
    { saturated: 'no', provisional: 'no' },
    { provisional: 'yes' },
    { measured: 'no' },
    { measured: 'yes', range: 'pearson:0.3:0.5' },
    { range: 'mandersM1::0.6' },
    { q: 'CELL 1' },
    { q: '%' },
  ];
  it('each filter kind (and condition, coverslip, field lists) with several sorts', async () => {
    const lists: Record<string, string>[] = [{ conditionId: String(seeded.conditionIds[1]) }, { coverslipId: `${seeded.coverslipIds[0][1]},${seeded.coverslipIds[1][2]}` }, { fieldId: String(seeded.fieldIds[2]) }];
    const sorts: SortKey[] = ['condition', 'pearson', 'cell', 'coverslip', 'provisional'];
    for (const f of [...filters, ...lists]) for (const sort of sorts) for (const dir of ['asc', 'desc']) await expectSame({ ...f, sort, dir });
  }, 120000);

  it('one run as the source, and the recipe source over two runs', async () => {
    await expectSame({ runId: String(seeded.runId), sort: 'pearson', dir: 'desc' });
    await expectSame({ recipeId: String(seeded.recipeId), sort: 'spearman' });
  });

  it('a cursor stays valid when rows change: the next page starts after the cursor row', async () => {
    const params = { sort: 'pearson', dir: 'asc', excluded: 'no' };
    const first = await bio.get(`/api/studies/${t.world.studyA}/cell-table`).query({ ...params, pageSize: PAGE });
    const body = GridResponse.parse(first.body);
    const last = body.rows[PAGE - 1].cellId;
    // the cursor's own row is deleted, and a row after it is excluded through the API (patched in place)
    t.ctx.db.$client.prepare("UPDATE cells SET deleted_at = '2026-12-02T00:00:00Z' WHERE id = ?").run(last);
    t.ctx.dataVersion++;
    const next = await bio.get(`/api/studies/${t.world.studyA}/cell-table`).query({ ...params, pageSize: PAGE, cursor: body.nextCursor });
    const want = sqlIds(params);
    const from = want.indexOf(body.rows[PAGE - 2].cellId) + 1;
    expect(GridResponse.parse(next.body).rows.map((r) => r.cellId)).toEqual(want.slice(from, from + PAGE));

    const victim = want[from + 3];
    const ex = await bio.post(`/api/cells/${victim}/exclusion`).send({ reason: 'out of focus' });
    expect(ex.status).toBe(200);
    const after = await expectSame(params);
    expect(after).not.toContain(victim);
    expect((await expectSame({ ...params, excluded: 'yes' })).includes(victim)).toBe(true);
    const undo = await bio.delete(`/api/cells/${victim}/exclusion`).send({});
    expect(undo.status).toBe(200);
    expect(await expectSame(params)).toContain(victim);
  });

  it('measurements a run adds after the index was read are in the next page (appended, or read again)', async () => {
    const db = t.ctx.db.$client;
    const params = { recipeId: String(seeded.recipeId), sort: 'pearson', dir: 'desc' };
    await expectSame(params);
    const run2 = (db.prepare('SELECT max(id) FROM runs').raw().get() as [number])[0];
    // a run writes re-measurements of cells the index holds (no API write, so the data version stays)
    db.prepare(
      `INSERT OR REPLACE INTO measurements (run_id, cell_id, field_id, pixels, pearson, spearman, manders_m1, manders_m2, mean1, mean2, saturated_fraction1, provenance)
       SELECT ?, m.cell_id, m.field_id, m.pixels, 0.999, m.spearman, m.manders_m1, m.manders_m2, m.mean1, m.mean2, 0.5, '{}' FROM measurements m
       JOIN cells c ON c.id = m.cell_id AND c.deleted_at IS NULL AND c.role = 'cell' WHERE m.run_id = ? AND m.cell_id % 6 = 1`,
    ).run(run2, seeded.runId);
    const after = await expectSame(params);
    const top = db.prepare('SELECT cell_id FROM measurements WHERE run_id = ? AND pearson = 0.999 ORDER BY cell_id LIMIT 1').pluck().get(run2) as number;
    expect(top).toBeGreaterThan(0);
    expect(after[0]).toBe(top);
    await expectSame({ ...params, saturated: 'yes' });
    // a measurement of a cell the index does not hold (a background region): the index is read again
    const bg = db.prepare("SELECT id, field_id FROM cells WHERE role = 'background' LIMIT 1").get() as { id: number; field_id: number };
    db.prepare("INSERT INTO measurements (run_id, cell_id, field_id, pixels, pearson, provenance) VALUES (?, ?, ?, 10, 0.1, '{}')").run(run2, bg.id, bg.field_id);
    await expectSame(params);
  });

  it('refuses a cursor of another sort or a garbled one, quoting it', async () => {
    const first = GridResponse.parse((await bio.get(`/api/studies/${t.world.studyA}/cell-table`).query({ sort: 'pearson', pageSize: 5 })).body);
    const other = await bio.get(`/api/studies/${t.world.studyA}/cell-table`).query({ sort: 'spearman', cursor: first.nextCursor });
    expect(other.status).toBe(400);
    expect(other.body.error).toMatch(/made for sort "pearson" asc.*"spearman" asc/);
    const bad = await bio.get(`/api/studies/${t.world.studyA}/cell-table`).query({ cursor: 'nonsense' });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toContain('"nonsense"');
  });
});
