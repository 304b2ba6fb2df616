/**
 * Which measurements a study's Cell table and Compare page use, and the one SQL query behind both.
 *
 * Source: `runId` → that run's measurements; `recipeId` → for each cell, the latest measurement among the
 * study's runs of that recipe version; neither → the recipe of the study's most recent run with
 * measurements. Mixing recipes is never done silently.
 *
 * Safety: every identifier in ORDER BY and WHERE comes from a fixed whitelist (SORT_SQL / COLUMN_SQL);
 * every value is a bound parameter. Filters and sort keys are validated by zod (shared/schemas/
 * measurements.ts) before they reach this file, so a hostile value is a 400, not SQL.
 */
import type { Db } from '../db/client.js';
import { badRequest } from '../http/errors.js';
import { CELL_TABLE_KEYS, byKey } from '../../shared/coefficients.js';
import { NUMERIC_COLUMNS, type GridFilters, type NumericColumn, type SortKey, type SourceInfo } from '../../shared/schemas/cell-table.js';

/** API column name → SQL expression over alias m (measurements): measures by their registry column. */
export const COLUMN_SQL: Record<NumericColumn, string> = {
  ...(Object.fromEntries(CELL_TABLE_KEYS.map((k) => [k, `m.${byKey(k).column}`])) as Record<(typeof CELL_TABLE_KEYS)[number], string>),
  threshold1: 'm.threshold1',
  threshold2: 'm.threshold2',
  background1: 'm.background1',
  background2: 'm.background2',
  saturatedFraction1: 'm.saturated_fraction1',
  saturatedFraction2: 'm.saturated_fraction2',
  mean1: 'm.mean1',
  mean2: 'm.mean2',
};

const SATURATED_SQL = '(coalesce(m.saturated_fraction1, 0) > 0 OR coalesce(m.saturated_fraction2, 0) > 0)';

/** Sort key → list of [expression, nullable]; the row id breaks ties so paging is stable. */
const SORT_SQL: Record<SortKey, [string, boolean][]> = {
  condition: [['cd.position', false], ['cd.id', false], ['cs.position', false], ['cs.id', false], ['f.id', false]],
  coverslip: [['cs.name', false], ['cs.id', false]],
  field: [['f.name', false], ['f.id', false]],
  cell: [['c.name', false]],
  excluded: [['c.excluded', false]],
  provisional: [['m.provisional', true]],
  saturated: [[SATURATED_SQL, false]],
  ...(Object.fromEntries(NUMERIC_COLUMNS.map((k) => [k, [[COLUMN_SQL[k], true]]])) as Record<NumericColumn, [string, boolean][]>),
};

export interface ResolvedSource extends SourceInfo {
  /** the runs whose measurements count; for each cell the latest (highest id) of its measurements in them */
  runIds: number[];
}

/** Statements of this file, prepared once per connection (the grid asks for its source on every page). */
const statements = new WeakMap<object, Map<string, import('better-sqlite3').Statement>>();
function prepared(db: import('better-sqlite3').Database, sql: string) {
  let byText = statements.get(db);
  if (!byText) statements.set(db, (byText = new Map()));
  let st = byText.get(sql);
  if (!st) byText.set(sql, (st = db.prepare(sql)));
  return st;
}

export function resolveSource(database: Db, studyId: number, q: { runId?: number; recipeId?: number }): ResolvedSource {
  const db = { prepare: (sql: string) => prepared(database.$client, sql) };
  if (q.runId !== undefined) {
    const run = db.prepare('SELECT r.id, r.study_id AS studyId, r.recipe_id AS recipeId, rc.name, rc.version FROM runs r JOIN recipes rc ON rc.id = r.recipe_id WHERE r.id = ?').get(q.runId) as
      | { id: number; studyId: number; recipeId: number; name: string; version: number }
      | undefined;
    if (!run || run.studyId !== studyId) throw badRequest(`runId: no run ${q.runId} in study ${studyId}`, { issues: [{ path: 'runId', message: 'no such run in this study' }] });
    return { runId: run.id, recipeId: run.recipeId, recipeName: run.name, recipeVersion: run.version, runIds: [run.id] };
  }
  let recipeId = q.recipeId;
  if (recipeId === undefined) {
    const latest = db
      .prepare('SELECT r.recipe_id AS recipeId FROM runs r WHERE r.study_id = ? AND EXISTS (SELECT 1 FROM measurements m WHERE m.run_id = r.id) ORDER BY r.id DESC LIMIT 1')
      .get(studyId) as { recipeId: number } | undefined;
    recipeId = latest?.recipeId;
  }
  if (recipeId === undefined) return { runId: null, recipeId: null, recipeName: null, recipeVersion: null, runIds: [] };
  const rc = db.prepare('SELECT id, name, version FROM recipes WHERE id = ?').get(recipeId) as { id: number; name: string; version: number } | undefined;
  if (!rc) throw badRequest(`recipeId: no recipe ${recipeId}`, { issues: [{ path: 'recipeId', message: 'no such recipe' }] });
  const runIds = (
    db.prepare('SELECT r.id FROM runs r WHERE r.study_id = ? AND r.recipe_id = ? AND EXISTS (SELECT 1 FROM measurements m WHERE m.run_id = r.id) ORDER BY r.id').all(studyId, rc.id) as { id: number }[]
  ).map((x) => x.id);
  return { runId: null, recipeId: rc.id, recipeName: rc.name, recipeVersion: rc.version, runIds };
}

/**
 * JOIN of alias m (the measurement used for cell c): one run → a direct probe of the (run_id, cell_id)
 * index; several runs → the highest measurement id among probes of the same index, one per run.
 */
export function measurementJoin(src: ResolvedSource, params: Record<string, unknown>, kind: 'LEFT JOIN' | 'JOIN' = 'LEFT JOIN') {
  if (src.runIds.length === 0) return `${kind} measurements m ON 0`;
  src.runIds.forEach((id, i) => (params[`run${i}`] = id));
  if (src.runIds.length === 1) return `${kind} measurements m ON m.run_id = @run0 AND m.cell_id = c.id`;
  const list = src.runIds.map((_, i) => `@run${i}`).join(', ');
  return `${kind} measurements m ON m.id = (SELECT max(m2.id) FROM measurements m2 WHERE m2.run_id IN (${list}) AND m2.cell_id = c.id)`;
}

/** FROM … WHERE … of the grid for a study, with its bound parameters. */
export function gridFrom(studyId: number, src: ResolvedSource, f: GridFilters) {
  const where: string[] = ["c.deleted_at IS NULL", "c.role = 'cell'"];
  const params: Record<string, unknown> = { studyId };
  const inList = (col: string, name: string, values: number[] | undefined) => {
    if (!values || values.length === 0) return;
    const keys = values.map((v, i) => {
      params[`${name}${i}`] = v;
      return `@${name}${i}`;
    });
    where.push(`${col} IN (${keys.join(', ')})`);
  };
  inList('cd.id', 'cond', f.conditionId);
  inList('cs.id', 'slip', f.coverslipId);
  inList('f.id', 'fld', f.fieldId);
  if (f.excluded === 'yes') where.push('c.excluded = 1');
  if (f.excluded === 'no') where.push('c.excluded = 0');
  if (f.saturated === 'yes') where.push(SATURATED_SQL);
  if (f.saturated === 'no') where.push(`NOT ${SATURATED_SQL}`);
  if (f.provisional === 'yes') where.push('m.provisional = 1');
  if (f.provisional === 'no') where.push('coalesce(m.provisional, 0) = 0');
  if (f.measured === 'yes') where.push('m.id IS NOT NULL');
  if (f.measured === 'no') where.push('m.id IS NULL');
  f.range.forEach((r, i) => {
    const col = COLUMN_SQL[r.column];
    if (!col) throw badRequest(`range: unknown column ${JSON.stringify(r.column)}`);
    if (r.min !== null) {
      params[`rmin${i}`] = r.min;
      where.push(`${col} >= @rmin${i}`);
    }
    if (r.max !== null) {
      params[`rmax${i}`] = r.max;
      where.push(`${col} <= @rmax${i}`);
    }
  });
  if (f.q) {
    params.q = `%${f.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    where.push("c.name LIKE @q ESCAPE '\\'");
  }
  const from = `FROM cells c
    JOIN fields f ON f.id = c.field_id AND f.status = 'ready'
    JOIN coverslips cs ON cs.id = f.coverslip_id
    JOIN conditions cd ON cd.id = cs.condition_id AND cd.study_id = @studyId
    ${measurementJoin(src, params)}
    WHERE ${where.join(' AND ')}`;
  return { from, params };
}

export function orderBy(sort: SortKey, dir: 'asc' | 'desc') {
  const parts = SORT_SQL[sort];
  if (!parts) throw badRequest(`sort: unknown column ${JSON.stringify(sort)}`);
  const d = dir === 'desc' ? 'DESC' : 'ASC';
  const terms = parts.flatMap(([e, nullable]) => (nullable ? [`(${e}) IS NULL`, `${e} ${d}`] : [`${e} ${d}`]));
  return `ORDER BY ${[...terms, 'c.id ASC'].join(', ')}`;
}

export const GRID_SELECT = `SELECT c.id AS cellId, c.name AS cell,
  CASE WHEN f.size_z > 1 THEN coalesce(json_extract(c.geometry, '$.z[0]'), 1) || '–' || coalesce(json_extract(c.geometry, '$.z[1]'), f.size_z) END AS slices,
  f.id AS fieldId, f.name AS field, cs.id AS coverslipId, cs.name AS coverslip,
  cs.replicate AS replicate, cd.id AS conditionId, cd.name AS condition, m.id AS measurementId, m.run_id AS runId,
  ${NUMERIC_COLUMNS.map((k) => `${COLUMN_SQL[k]} AS ${k}`).join(', ')},
  m.threshold_method AS thresholdMethod, ${SATURATED_SQL} AS saturated, coalesce(m.provisional, 0) AS provisional,
  c.excluded AS excluded, c.exclusion_reason AS exclusionReason, c.excluded_at AS excludedAt,
  (SELECT ux.name FROM users ux WHERE ux.id = c.excluded_by) AS excludedBy`;

/** SQLite row → API row (booleans; the pixel count falls back to the cell's own when unmeasured). */
export function toGridRow(r: Record<string, unknown>) {
  return { ...r, saturated: !!r.saturated, provisional: !!r.provisional, excluded: !!r.excluded } as import('../../shared/schemas/cell-table.js').GridRow;
}
