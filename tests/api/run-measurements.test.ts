/**
 * A run's measurements for scripts: GET /api/runs/:id/measurements (cursor pages) and …/measurements.csv
 * (streamed in pages), and the ids in cells.csv. Checked against the rows stored in the database: every page
 * joined gives each measurement of the run exactly once, with the ids of its cell, field, coverslip and
 * condition, every registry measure and its provenance. CSV per RFC 4180. (common practice: keyset paging;
 * no outside reference value — the values are the stored ones)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { buildReportWorld, insertRun, type ReportWorld } from '../reports/fixtures.js';
import { cells, measurements, runs } from '../../server/db/schema.js';
import { MEASURE_KEYS } from '../../shared/analysis/types.js';
import { MEASUREMENT_CSV_COLUMNS, MEASUREMENT_INPUT_KEYS, RunMeasurementsPage, type RunMeasurement } from '../../shared/schemas/runs.js';
import { byKey } from '../../shared/coefficients.js';

let t: TestApp;
let rw: ReportWorld;
let runId: number;
let bigRunId: number;
let bio: Awaited<ReturnType<TestApp['login']>>;
const BIG = 4500; // more than two CSV pages of 2000

beforeAll(async () => {
  t = await makeTestApp();
  rw = await buildReportWorld(t.ctx, t.world);
  runId = insertRun(t.ctx, t.world.studyA, rw, (s, c) => 0.1 + 0.07 * s + 0.013 * c);
  // a large run: BIG extra cells in the first field, one measurement each
  const big = t.ctx.db.insert(runs).values({ studyId: t.world.studyA, recipeId: rw.recipeId, scopeKind: 'study', scopeId: t.world.studyA, status: 'done', seed: 1, engineVersion: 'e', fieldsTotal: 1, fieldsDone: 1 }).returning().get();
  bigRunId = big.id;
  const sqlite = t.ctx.db.$client;
  sqlite.transaction(() => {
    const addCell = sqlite.prepare("INSERT INTO cells (field_id, name, role, source, geometry, pixel_count) VALUES (?, ?, 'cell', 'drawn', ?, 1) RETURNING id");
    const addM = sqlite.prepare('INSERT INTO measurements (run_id, cell_id, field_id, pixels, pearson, provenance) VALUES (?, ?, ?, 1, ?, ?)');
    for (let i = 0; i < BIG; i++) {
      const { id } = addCell.get(rw.fieldIds[0], `bulk, "${i}"`, JSON.stringify({ kind: 'rect', x: 0, y: 0, width: 1, height: 1 })) as { id: number };
      addM.run(bigRunId, id, rw.fieldIds[0], i / BIG, JSON.stringify({ recipeId: rw.recipeId, engineVersion: 'e', seed: 1, z: 'mip', computedAt: 'now' }));
    }
  })();
  bio = await t.login('biologist');
}, 60_000);
afterAll(() => t?.close());

async function allPages(id: number, limit: number) {
  const out: RunMeasurement[] = [];
  let cursor: number | null = null;
  let pages = 0;
  do {
    const res = await bio.get(`/api/runs/${id}/measurements`).query({ limit, ...(cursor !== null ? { cursor } : {}) });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const page = RunMeasurementsPage.parse(res.body);
    expect(page.measurements.length).toBeLessThanOrEqual(limit);
    out.push(...page.measurements);
    cursor = page.nextCursor;
    pages++;
  } while (cursor !== null);
  return { rows: out, pages };
}

/** RFC 4180 fields of one CSV text (quoted fields with doubled quotes, CRLF rows). */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let f = '';
  let q = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (q) {
      if (ch === '"' && text[i + 1] === '"') (f += '"'), i++;
      else if (ch === '"') q = false;
      else f += ch;
    } else if (ch === '"') q = true;
    else if (ch === ',') row.push(f), (f = '');
    else if (ch === '\r' && text[i + 1] === '\n') row.push(f), rows.push(row), (row = []), (f = ''), i++;
    else f += ch;
  }
  return rows;
}

describe('GET /api/runs/:id/measurements', () => {
  it('pages through every measurement of the run exactly once, in id order, whatever the page size', async () => {
    const stored = t.ctx.db.select().from(measurements).where(eq(measurements.runId, runId)).all();
    for (const limit of [1, 7, 1000]) {
      const { rows, pages } = await allPages(runId, limit);
      expect(rows.map((r) => r.measurementId)).toEqual(stored.map((m) => m.id).sort((a, b) => a - b));
      expect(pages).toBe(Math.ceil(stored.length / limit)); // the last full page already says nextCursor: null
    }
  });

  it('carries the ids of cell, field, coverslip and condition, every registry measure and the provenance as stored', async () => {
    const { rows } = await allPages(runId, 1000);
    const sqlite = t.ctx.db.$client;
    for (const r of rows) {
      const where = sqlite
        .prepare('SELECT c.field_id AS fieldId, f.coverslip_id AS coverslipId, cs.condition_id AS conditionId FROM cells c JOIN fields f ON f.id = c.field_id JOIN coverslips cs ON cs.id = f.coverslip_id WHERE c.id = ?')
        .get(r.cellId) as { fieldId: number; coverslipId: number; conditionId: number };
      expect({ fieldId: r.fieldId, coverslipId: r.coverslipId, conditionId: r.conditionId }).toEqual(where);
      const m = sqlite.prepare('SELECT * FROM measurements WHERE id = ?').get(r.measurementId) as Record<string, unknown>;
      for (const k of MEASURE_KEYS) expect(r[k], k).toBe(m[byKey(k).column]);
      for (const k of MEASUREMENT_INPUT_KEYS) expect(r[k], k).toBe(m[k.replace(/[A-Z0-9]/g, (x) => (/[0-9]/.test(x) ? x : `_${x.toLowerCase()}`))]);
      expect(r.provenance).toEqual(JSON.parse(String(m.provenance)));
      expect(r.runId).toBe(runId);
    }
    // the fixture's Pearson values (0.1 + 0.07·slip + 0.013·cell) come back unchanged
    expect(rows[0].pearson).toBe(0.1);
    expect(Object.keys(rows[0])).toEqual(expect.arrayContaining([...MEASURE_KEYS]));
  });

  it('names the run and its recipe version', async () => {
    const res = await bio.get(`/api/runs/${runId}/measurements?limit=1`);
    expect(res.body.run).toEqual({ id: runId, studyId: t.world.studyA, status: 'done', provisional: false, recipeId: rw.recipeId, recipeName: 'Facility standard', recipeVersion: 2 });
  });

  it('leaves out cells deleted since the run', async () => {
    const before = (await allPages(runId, 1000)).rows.length;
    const victim = rw.cellIds[5][0];
    t.ctx.db.update(cells).set({ deletedAt: new Date().toISOString() }).where(eq(cells.id, victim)).run();
    const after = (await allPages(runId, 1000)).rows;
    expect(after.length).toBe(before - 1);
    expect(after.some((r) => r.cellId === victim)).toBe(false);
    t.ctx.db.update(cells).set({ deletedAt: null }).where(eq(cells.id, victim)).run();
  });

  it('refuses a bad cursor or limit with a 400 quoting it, and hides other labs’ runs (404)', async () => {
    const bad = await bio.get(`/api/runs/${runId}/measurements?cursor=abc`);
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/cursor/);
    expect(bad.body.error).toMatch(/abc/);
    const big = await bio.get(`/api/runs/${runId}/measurements?limit=5001`);
    expect(big.status).toBe(400);
    expect(big.body.error).toMatch(/limit/);
    const outsider = await t.login('outsider');
    expect((await outsider.get(`/api/runs/${runId}/measurements`)).status).toBe(404);
    expect((await outsider.get(`/api/runs/${runId}/measurements.csv`)).status).toBe(404);
    expect((await bio.get('/api/runs/999999/measurements')).body.error).toBe('no run with id 999999');
  });
});

describe('GET /api/runs/:id/measurements.csv', () => {
  it('holds the same rows as the JSON pages, columns in the documented order', async () => {
    const res = await bio.get(`/api/runs/${runId}/measurements.csv`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toMatch(new RegExp(`run-${runId}-Facility-standard-v2-measurements\\.csv`));
    const [header, ...rows] = parseCsv(res.text);
    expect(header).toEqual([...MEASUREMENT_CSV_COLUMNS]);
    const json = (await allPages(runId, 1000)).rows;
    expect(rows.length).toBe(json.length);
    const col = (name: string) => header.indexOf(name);
    for (const [i, r] of json.entries()) {
      expect(Number(rows[i][col('measurementId')])).toBe(r.measurementId);
      expect(Number(rows[i][col('conditionId')])).toBe(r.conditionId);
      expect(rows[i][col('pearson')] === '' ? null : Number(rows[i][col('pearson')])).toBe(r.pearson); // full precision
      expect(rows[i][col('engineVersion')]).toBe(r.provenance.engineVersion);
      expect(rows[i][col('input1Sha256')]).toBe(r.provenance.inputSha256[0]);
    }
  });

  it('streams a run larger than one page: every row once, in order, names quoted', async () => {
    const res = await bio.get(`/api/runs/${bigRunId}/measurements.csv`);
    const [header, ...rows] = parseCsv(res.text);
    expect(rows.length).toBe(BIG);
    const ids = rows.map((r) => Number(r[header.indexOf('measurementId')]));
    expect(new Set(ids).size).toBe(BIG);
    expect(ids).toEqual([...ids].sort((a, b) => a - b));
    expect(rows[4321][header.indexOf('cell')]).toBe('bulk, "4321"');
    expect(Number(rows[4321][header.indexOf('pearson')])).toBe(4321 / BIG);
  });
});

describe('cells.csv', () => {
  it('carries the field, coverslip and condition ids by default', async () => {
    const res = await bio.get(`/api/studies/${t.world.studyA}/cells.csv?runId=${runId}`);
    const [header, ...rows] = parseCsv(res.text);
    expect(header.slice(0, 9)).toEqual(['cellId', 'conditionId', 'condition', 'coverslipId', 'coverslip', 'replicate', 'fieldId', 'field', 'cell']);
    const byCell = new Map(rows.map((r) => [Number(r[0]), r]));
    for (const [s, ids] of rw.cellIds.entries())
      for (const id of ids) {
        const r = byCell.get(id)!;
        expect(Number(r[header.indexOf('fieldId')])).toBe(rw.fieldIds[s]);
        expect(Number(r[header.indexOf('coverslipId')])).toBe(rw.coverslipIds[s]);
        expect(Number(r[header.indexOf('conditionId')])).toBe(rw.conditionIds[s < 3 ? 0 : 1]);
      }
  });
});
