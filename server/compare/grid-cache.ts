/**
 * The grid indexes of one server (server/compare/grid-index.ts), shared by the Cell table, its CSV export and
 * Compare: one per (study, source[, field list]), read again when the data version changes (writes through
 * the API bump ctx.dataVersion); measurements added by runs are appended, and exclusions patch it in place
 * (`patchExcluded`, which moves the index to the version after that write). `stamp` names the data an index
 * holds (data version and newest measurement id), so caches built from an index (Compare's answers) key on it.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Response } from 'express';
import { Piscina } from 'piscina';
import type { AppContext } from '../context.js';
import type { ResolvedSource } from './source.js';
import { appendMeasurements, buildGridIndex, gridIndexOf, type GridData, type GridIndex } from './grid-index.js';
import type { GridIndexTask } from './grid-index-worker.js';

const GRID_WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'grid-index-worker.ts');

export interface GridCache {
  /** the index of a study and source (or of the listed fields only), current for this moment's data */
  index(studyId: number, src: ResolvedSource, fieldIds?: number[]): Promise<{ ix: GridIndex; stamp: string }>;
  /** the version of committed data a response cache keys on (data version and newest measurement id) */
  currentVersion(): string;
  /** an exclusion changed one flag: patch the study's indexes and move them to the version after this write */
  patchExcluded(studyId: number, cellId: number, excluded: boolean, res: Response): void;
}

const caches = new WeakMap<AppContext, GridCache>();

/** The server's grid indexes (one cache per context, created on first use). */
export function gridCacheOf(ctx: AppContext): GridCache {
  let c = caches.get(ctx);
  if (!c) caches.set(ctx, (c = createGridCache(ctx)));
  return c;
}

function createGridCache(ctx: AppContext): GridCache {
  const sqlite = ctx.db.$client;
  const indexes = new Map<string, { dataVersion: number; maxMeasurement: number; ix: GridIndex; studyId: number }>();
  const maxMeasurementStmt = sqlite.prepare('SELECT coalesce(max(id), 0) AS id FROM measurements');
  const maxMeasurement = () => (maxMeasurementStmt.get() as { id: number }).id;
  const stampOf = (e: { dataVersion: number; maxMeasurement: number }) => `${e.dataVersion}:${e.maxMeasurement}`;
  /**
   * A study-wide index is read in a thread (grid-index-worker.ts; seconds at a million cells), requests for the
   * same version waiting on the same read; an index of listed fields is small and read here.
   */
  let pool: Piscina | undefined;
  const reading = new Map<string, Promise<GridIndex>>();
  ctx.closers.unshift(() => pool?.destroy());

  async function index(studyId: number, src: ResolvedSource, fieldIds?: number[]) {
    const scope = fieldIds?.length ? [...new Set(fieldIds)].sort((a, b) => a - b) : undefined;
    const key = JSON.stringify([studyId, src.runIds, scope ?? 'study']);
    const newest = maxMeasurement();
    const dataVersion = ctx.dataVersion;
    const hit = indexes.get(key);
    if (hit && hit.dataVersion === dataVersion) {
      // only measurements were added since (a run in progress): add them instead of reading everything again
      if (hit.maxMeasurement === newest || appendMeasurements(sqlite, hit.ix, src, hit.maxMeasurement, scope)) {
        hit.maxMeasurement = newest;
        indexes.delete(key);
        indexes.set(key, hit); // most recently used last
        return { ix: hit.ix, stamp: stampOf(hit) };
      }
    }
    let ix: GridIndex;
    if (scope) ix = buildGridIndex(sqlite, studyId, src, scope);
    else {
      const readKey = `${key}:${dataVersion}:${newest}`;
      let p = reading.get(readKey);
      if (!p) {
        pool ??= new Piscina({ filename: GRID_WORKER_FILE, execArgv: ['--import', 'tsx'], minThreads: 0, maxThreads: 1, idleTimeout: 30_000 });
        const task: GridIndexTask = { file: sqlite.name, studyId, src };
        p = (pool.run(task) as Promise<GridData>).then(gridIndexOf);
        reading.set(readKey, p);
        void p.finally(() => reading.delete(readKey)).catch(() => {});
      }
      ix = await p;
      // a newer index stored while this one was read wins
      const now = indexes.get(key);
      if (now && (now.dataVersion > dataVersion || (now.dataVersion === dataVersion && now.maxMeasurement >= newest))) return { ix: now.ix, stamp: stampOf(now) };
    }
    const entry = { dataVersion, maxMeasurement: newest, ix, studyId };
    indexes.delete(key);
    indexes.set(key, entry);
    // at most about 3,000,000 rows held (~700 MB at the full column set), and 16 indexes
    let rows = 0;
    for (const e of indexes.values()) rows += e.ix.n;
    for (const [k, e] of indexes) {
      if ((rows <= 3_000_000 && indexes.size <= 16) || k === key) break;
      rows -= e.ix.n;
      indexes.delete(k);
    }
    return { ix, stamp: stampOf(entry) };
  }

  function patchExcluded(studyId: number, cellId: number, excluded: boolean, res: Response) {
    const before = ctx.dataVersion;
    ctx.dataVersion++;
    res.locals.dataVersionBumped = true;
    for (const entry of indexes.values()) {
      if (entry.studyId !== studyId || entry.dataVersion !== before) continue;
      const row = entry.ix.rowOf(cellId);
      if (row >= 0) entry.ix.excluded[row] = excluded ? 1 : 0;
      entry.ix.filtered.clear();
      entry.ix.sorts.delete('excluded:asc');
      entry.ix.sorts.delete('excluded:desc');
      entry.dataVersion = ctx.dataVersion;
    }
  }

  return { index, currentVersion: () => `${ctx.dataVersion}:${maxMeasurement()}`, patchExcluded };
}
