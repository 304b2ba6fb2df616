/**
 * The Cell table, exclusions of a study. Shapes: shared/schemas/cell-table.ts
 * (comparisons: server/routes/compare.ts).
 *
 *   GET    /api/studies/:studyId/measurement-sources         recipes and runs that produced measurements
 *   GET    /api/studies/:studyId/cell-table                  one page of the grid (filters, sort, paging)
 *   GET    /api/studies/:studyId/cells.csv                   every filtered row as CSV (column choice)
 *   POST   /api/cells/:cellId/exclusion   { reason }         exclude a cell (biologist: 'exclude')
 *   DELETE /api/cells/:cellId/exclusion   { reason? }        undo the exclusion
 *   GET    /api/cells/:cellId/exclusion-history              audited exclusion events of the cell
 */
import { Router } from 'express';
import type { AppContext } from '../context.js';
import { requireUser } from '../auth/session.js';
import { notFoundAsked, requireStudy, studyPermissions } from '../auth/policy.js';
import { conflict, parse } from '../http/errors.js';
import { idParam } from '../http/params.js';
import { CsvQuery, ExcludeRequest, GridQuery, RestoreRequest, type ExclusionState, type GridResponse, type MeasurementSources } from '../../shared/schemas/cell-table.js';
import { GRID_SELECT, gridFrom, resolveSource, toGridRow } from '../compare/source.js';
import { decodeCursor, encodeCursor, filteredRows, positionAfter } from '../compare/grid-index.js';
import { gridCacheOf } from '../compare/grid-cache.js';
import { csvField, csvLine, fileSafe } from '../compare/csv.js';


export default function cellTableRoutes(ctx: AppContext) {
  const r = Router();
  const sqlite = ctx.db.$client;

  const grids = gridCacheOf(ctx);
  /** prepared statements by SQL text (the grid's SQL varies only with the filters in use) */
  const statements = new Map<string, ReturnType<typeof sqlite.prepare>>();
  const prepared = (sql: string) => {
    let st = statements.get(sql);
    if (!st) {
      st = sqlite.prepare(sql);
      statements.set(sql, st);
      if (statements.size > 256) statements.delete(statements.keys().next().value!);
    }
    return st;
  };
  const gridIndex = async (studyId: number, src: ReturnType<typeof resolveSource>, fieldIds: number[] | undefined) => (await grids.index(studyId, src, fieldIds)).ix;
  const currentVersion = () => grids.currentVersion();
  const patchExcluded = grids.patchExcluded;

  r.get('/studies/:studyId/measurement-sources', requireUser, (req, res) => {
    const studyId = idParam(req, 'studyId');
    requireStudy(ctx.db, req.user, studyId, 'read');
    const runs = sqlite
      .prepare(
        `SELECT r.id, r.status, r.created_at AS createdAt, r.provisional, r.recipe_id AS recipeId, rc.name, rc.version,
           (SELECT count(*) FROM measurements m WHERE m.run_id = r.id) AS measurements
         FROM runs r JOIN recipes rc ON rc.id = r.recipe_id WHERE r.study_id = ? ORDER BY r.id DESC`,
      )
      .all(studyId) as { id: number; status: string; createdAt: string; provisional: number; recipeId: number; name: string; version: number; measurements: number }[];
    const recipes = new Map<number, MeasurementSources['recipes'][number]>();
    for (const x of runs) {
      if (!recipes.has(x.recipeId)) recipes.set(x.recipeId, { recipeId: x.recipeId, name: x.name, version: x.version, runs: [] });
      recipes.get(x.recipeId)!.runs.push({ id: x.id, status: x.status, createdAt: x.createdAt, provisional: !!x.provisional, measurements: x.measurements });
    }
    const body: MeasurementSources = { recipes: [...recipes.values()], defaultRecipeId: runs.find((x) => x.measurements > 0)?.recipeId ?? null };
    res.json(body);
  });

  /** The grid's SELECT for a list of cell ids (rows come back in any order), with its parameters. */
  function byIdQuery(studyId: number, src: ReturnType<typeof resolveSource>, ids: number[]) {
    const params: Record<string, unknown> = {};
    ids.forEach((id, i) => (params[`id${i}`] = id));
    const d = gridFrom(studyId, src, { conditionId: undefined, coverslipId: undefined, fieldId: undefined, range: [], q: undefined, excluded: 'any', saturated: 'any', provisional: 'any', measured: 'any' });
    return { stmt: prepared(`${GRID_SELECT} ${d.from} AND c.id IN (${ids.map((_, i) => `@id${i}`).join(', ')})`), params: { ...d.params, ...params } };
  }

  /** Full grid rows of the given cell ids, in that order, fresh from SQL (one IN query). */
  function rowsById(studyId: number, src: ReturnType<typeof resolveSource>, ids: number[]) {
    if (!ids.length) return [];
    const { stmt, params } = byIdQuery(studyId, src, ids);
    const byId = new Map((stmt.raw(false).all(params) as Record<string, unknown>[]).map((r) => [r.cellId as number, r]));
    return ids.map((id) => byId.get(id)).filter((r): r is Record<string, unknown> => r !== undefined);
  }

  /** One page of full grid rows (fresh from SQL by id), cached per version, query and page already serialized. */
  const pageCache = new Map<string, string>();
  function pageRows(studyId: number, src: ReturnType<typeof resolveSource>, ids: number[]) {
    const key = JSON.stringify([studyId, src.runIds, ids, currentVersion()]);
    const hit = pageCache.get(key);
    if (hit) return hit;
    const rows = rowsById(studyId, src, ids);
    const out = JSON.stringify(rows.map(toGridRow));
    pageCache.set(key, out);
    while (pageCache.size > 512) pageCache.delete(pageCache.keys().next().value!);
    return out;
  }

  r.get('/studies/:studyId/cell-table', requireUser, async (req, res) => {
    const studyId = idParam(req, 'studyId');
    const study = requireStudy(ctx.db, req.user, studyId, 'read');
    const canExclude = studyPermissions(ctx.db, req.user!, study).has('exclude');
    const q = parse(GridQuery, req.query);
    const src = resolveSource(ctx.db, studyId, q);
    const ix = await gridIndex(studyId, src, q.fieldId);
    const rows = filteredRows(ix, q, q.sort, q.dir);
    // a cursor continues after the row it names (keyset paging); otherwise the page number counts from the top
    const start = q.cursor !== undefined ? positionAfter(ix, rows, decodeCursor(q.cursor, q.sort, q.dir)) : q.page * q.pageSize;
    const pageRowsIdx = rows.subarray(Math.min(start, rows.length), Math.min(start + q.pageSize, rows.length));
    const rowsJson = pageRows(studyId, src, Array.from(pageRowsIdx, (r) => ix.cellId[r]));
    const end = start + pageRowsIdx.length;
    const body: Omit<GridResponse, 'rows'> = {
      total: rows.length,
      page: Math.floor(start / q.pageSize),
      pageSize: q.pageSize,
      nextCursor: end < rows.length && pageRowsIdx.length ? encodeCursor(ix, q.sort, q.dir, rows[end - 1]) : null,
      source: { runId: src.runId, recipeId: src.recipeId, recipeName: src.recipeName, recipeVersion: src.recipeVersion },
      canExclude,
    };
    // the page's rows are cached already serialized (GridResponse = { rows, ...body })
    res.type('application/json').send(`{"rows":${rowsJson},${JSON.stringify(body).slice(1)}`);
  });

  /**
   * Every filtered row as CSV, streamed: the order and membership come from the grid index when the request
   * starts; rows are read in chunks of 100 and written as the client takes them (waiting for 'drain'), so a
   * million rows start at once and never sit in server memory. Small chunks keep fewer rows alive across a
   * young-generation GC, so fewer are promoted: over 100,000 rows the heap grew 175 MB with chunks of 500
   * and 80 MB with chunks of 100. Each chunk is one string built by concatenation (no array per row, no
   * array of lines) handed to the socket as one Buffer, so what waits for 'drain' is outside the heap: over
   * 1,000,000 rows the peak heap growth fell from 80–104 MB to 11–53 MB (2026-12-03). A thread with a capped
   * heap was tried too: its own footprint (~75 MB resident on the first export: a new allocator arena, V8's
   * compiler memory) made the first export no smaller, so the rows stay on this thread.
   * A row removed after the start is left out.
   */
  r.get('/studies/:studyId/cells.csv', requireUser, async (req, res) => {
    const studyId = idParam(req, 'studyId');
    const study = requireStudy(ctx.db, req.user, studyId, 'read');
    const q = parse(CsvQuery, req.query);
    const src = resolveSource(ctx.db, studyId, q);
    const ix = await gridIndex(studyId, src, q.fieldId);
    const order = filteredRows(ix, q, q.sort, q.dir);

    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(study.name)}-cells.csv"`);
    let closed = false;
    res.on('close', () => (closed = true));
    res.write(csvLine(q.columns));
    // the header goes out before the first chunk is read
    await new Promise<void>((resolve) => setImmediate(resolve));
    const CHUNK = 100;
    const BOOLEAN = new Set(['saturated', 'provisional', 'excluded']);
    let picks: { at: number; bool: boolean }[] | undefined;
    const waitDrain = () =>
      new Promise<void>((resolve) => {
        const done = () => (res.off('drain', done), res.off('close', done), resolve());
        res.on('drain', done);
        res.on('close', done);
      });
    // cell ids are taken chunk by chunk from the order (none of a million looked up before the header goes out)
    for (let i = 0; i < order.length && !closed; i += CHUNK) {
      const chunk = Array.from(order.subarray(i, i + CHUNK), (r) => ix.cellId[r]);
      // rows as arrays (no object per row): the export's columns picked by their position in the SELECT
      const { stmt, params } = byIdQuery(studyId, src, chunk);
      const raw = stmt.raw(true);
      picks ??= (() => {
        const names = raw.columns().map((c) => c.name);
        return q.columns.map((c) => {
          if (!names.includes(c)) throw new Error(`export column ${c} is not in the grid's SELECT`);
          return { at: names.indexOf(c), bool: BOOLEAN.has(c) };
        });
      })();
      const byId = new Map<number, unknown[]>();
      for (const row of raw.all(params) as unknown[][]) byId.set(row[0] as number, row);
      let text = '';
      for (const id of chunk) {
        const row = byId.get(id);
        if (!row) continue;
        for (let k = 0; k < picks.length; k++) {
          const v = row[picks[k].at];
          text += (k ? ',' : '') + csvField(picks[k].bool ? !!v : v);
        }
        text += '\r\n';
      }
      // wait while the socket's buffer is full; otherwise let other requests in between chunks
      if (!res.write(Buffer.from(text, 'utf8'))) await waitDrain();
      else await new Promise<void>((resolve) => setImmediate(resolve));
    }
    res.end();
  });

  // ---- exclusions ---------------------------------------------------------------------------------------
  function cellStudy(cellId: number) {
    const row = sqlite
      .prepare(
        `SELECT c.id, c.excluded, c.exclusion_reason AS reason, cd.study_id AS studyId FROM cells c
         JOIN fields f ON f.id = c.field_id JOIN coverslips cs ON cs.id = f.coverslip_id JOIN conditions cd ON cd.id = cs.condition_id
         WHERE c.id = ? AND c.deleted_at IS NULL`,
      )
      .get(cellId) as { id: number; excluded: number; reason: string | null; studyId: number } | undefined;
    if (!row) throw notFoundAsked({ what: 'cell', id: cellId });
    return row;
  }
  function state(cellId: number): ExclusionState {
    const s = sqlite
      .prepare('SELECT c.id AS cellId, c.excluded, c.exclusion_reason AS exclusionReason, c.excluded_at AS excludedAt, u.name AS excludedBy FROM cells c LEFT JOIN users u ON u.id = c.excluded_by WHERE c.id = ?')
      .get(cellId) as Omit<ExclusionState, 'excluded'> & { excluded: number };
    return { ...s, excluded: !!s.excluded };
  }
  const audit = sqlite.prepare('INSERT INTO audit_events (actor_id, action, entity, entity_id, study_id, details) VALUES (?, ?, ?, ?, ?, ?)');

  r.post('/cells/:cellId/exclusion', requireUser, (req, res) => {
    const cellId = idParam(req, 'cellId');
    const cell = cellStudy(cellId);
    requireStudy(ctx.db, req.user, cell.studyId, 'exclude', { what: 'cell', id: cellId });
    const body = parse(ExcludeRequest, req.body ?? {});
    if (cell.excluded) throw conflict(`cell ${cellId} is already excluded (reason: ${JSON.stringify(cell.reason)})`);
    sqlite.transaction(() => {
      sqlite
        .prepare("UPDATE cells SET excluded = 1, exclusion_reason = ?, excluded_by = ?, excluded_at = strftime('%Y-%m-%dT%H:%M:%fZ','now') WHERE id = ?")
        .run(body.reason, req.user!.id, cellId);
      audit.run(req.user!.id, 'cell.exclude', 'cell', cellId, cell.studyId, JSON.stringify({ reason: body.reason }));
    })();
    patchExcluded(cell.studyId, cellId, true, res);
    res.json(state(cellId));
  });

  r.delete('/cells/:cellId/exclusion', requireUser, (req, res) => {
    const cellId = idParam(req, 'cellId');
    const cell = cellStudy(cellId);
    requireStudy(ctx.db, req.user, cell.studyId, 'exclude', { what: 'cell', id: cellId });
    const body = parse(RestoreRequest, req.body ?? {});
    if (!cell.excluded) throw conflict(`cell ${cellId} is not excluded`);
    sqlite.transaction(() => {
      sqlite.prepare('UPDATE cells SET excluded = 0, exclusion_reason = NULL, excluded_by = NULL, excluded_at = NULL WHERE id = ?').run(cellId);
      audit.run(req.user!.id, 'cell.restore', 'cell', cellId, cell.studyId, JSON.stringify({ previousReason: cell.reason, ...(body.reason ? { reason: body.reason } : {}) }));
    })();
    patchExcluded(cell.studyId, cellId, false, res);
    res.json(state(cellId));
  });

  r.get('/cells/:cellId/exclusion-history', requireUser, (req, res) => {
    const cellId = idParam(req, 'cellId');
    const cell = cellStudy(cellId);
    requireStudy(ctx.db, req.user, cell.studyId, 'read', { what: 'cell', id: cellId });
    const events = sqlite
      .prepare(
        `SELECT a.id, a.at, a.action, u.name AS actor, a.details FROM audit_events a LEFT JOIN users u ON u.id = a.actor_id
         WHERE a.entity = 'cell' AND a.entity_id = ? AND a.action IN ('cell.exclude', 'cell.restore') ORDER BY a.id`,
      )
      .all(cellId) as { id: number; at: string; action: string; actor: string | null; details: string }[];
    res.json({
      events: events.map((e) => {
        const d = JSON.parse(e.details || '{}') as { reason?: string; previousReason?: string };
        return { id: e.id, at: e.at, action: e.action, actor: e.actor, reason: d.reason ?? null };
      }),
    });
  });

  return r;
}
