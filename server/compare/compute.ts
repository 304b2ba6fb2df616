/**
 * Compare's answers: the input gathered from the study's grid index (server/compare/grid-cache.ts, the same
 * in-memory columns as the Cell table, so a million cells are not read again from SQL), the computation
 * (server/compare/comparison.ts) and the points' JSON run in two threads (compare-worker.ts) so the web thread
 * keeps answering, and the answer cached per data version: the key is the study, the source's runs, the options and the grid index's
 * stamp, which moves with every write through the API (an exclusion included) and every measurement a run adds.
 *
 * Used by GET /api/studies/:id/compare and its CSVs (server/routes/compare.ts) and by report snapshots.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import type { AppContext } from '../context.js';
import { badRequest } from '../http/errors.js';
import { COMPARE_POINTS_MAX, CompareQuery, type CompareOptions, type Comparison, type ComparisonHead } from '../../shared/schemas/compare.js';
import { gridCacheOf } from './grid-cache.js';
import type { GridIndex } from './grid-index.js';
import { resolveSource } from './source.js';
import { comparisonJsonParts, pointList, type CompareTask, type PointColumns } from './comparison.js';
import compareTask, { pointsPart, type CompareJob, type PointsResult } from './compare-worker.js';

export { MEAN_MEDIAN_GAP, BOOTSTRAP_BUDGET, NORMAL_ABOVE, meanMedianGaps, capitalize } from './comparison.js';

const COMPARE_WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'compare-worker.ts');

/** A computed comparison: its JSON (the response body, in parts; points sampled above COMPARE_POINTS_MAX), its
 * head and every point as columns. */
export interface CachedComparison {
  json: Uint8Array[];
  head: ComparisonHead;
  points: PointColumns;
}

interface CompareCache {
  pool?: Piscina;
  answers: Map<string, Promise<CachedComparison>>;
  bytes: Map<string, number>;
}
const caches = new WeakMap<AppContext, CompareCache>();
/** answers kept per server, at most (a million-cell answer is ~110 MB: JSON and point columns) */
const MAX_CACHED_BYTES = 512 * 1024 ** 2;
const MAX_CACHED = 64;

function cacheOf(ctx: AppContext): CompareCache {
  let c = caches.get(ctx);
  if (!c) {
    const cache: CompareCache = { answers: new Map(), bytes: new Map() };
    ctx.closers.unshift(() => cache.pool?.destroy());
    caches.set(ctx, (c = cache));
  }
  return c;
}

/**
 * Reads what a comparison needs (validates the options, the study, the source, the conditions): the cache key,
 * and the threads' task (the grid index's columns, shared, not copied) for when it must be computed.
 */
export async function comparisonInput(ctx: AppContext, studyId: number, options: CompareOptions): Promise<{ input: () => CompareTask; key: string }> {
  const opts = CompareQuery.parse({ ...options, conditionIds: options.conditionIds?.join(',') || undefined });
  const db = ctx.db.$client;
  const study = db.prepare('SELECT id FROM studies WHERE id = ?').get(studyId);
  if (!study) throw badRequest(`no study with id ${studyId}`);
  const src = resolveSource(ctx.db, studyId, { runId: opts.runId, recipeId: opts.recipeId });

  let conds = db.prepare('SELECT id, name FROM conditions WHERE study_id = ? ORDER BY position, id').all(studyId) as { id: number; name: string }[];
  if (opts.conditionIds?.length) {
    const unknown = opts.conditionIds.filter((id) => !conds.some((c) => c.id === id));
    if (unknown.length) throw badRequest(`conditionIds: ${unknown.join(', ')} not in study ${studyId}`);
    conds = conds.filter((c) => opts.conditionIds!.includes(c.id));
  }
  const condIds = new Set(conds.map((c) => c.id));
  const slips = (
    db
      .prepare('SELECT cs.id, cs.name, cs.replicate, cs.condition_id AS conditionId FROM coverslips cs JOIN conditions cd ON cd.id = cs.condition_id WHERE cd.study_id = ? ORDER BY cd.position, cd.id, cs.position, cs.id')
      .all(studyId) as { id: number; name: string; replicate: number; conditionId: number }[]
  ).filter((s) => condIds.has(s.conditionId));

  // the measured cells of the chosen conditions, from the grid index (rows in cell id order)
  const { ix, stamp } = await gridCacheOf(ctx).index(studyId, src);
  const source: CompareTask['source'] = {
    kind: src.runId !== null ? 'run' : src.recipeId !== null ? 'recipe' : 'none',
    pinned: opts.runId !== undefined || opts.recipeId !== undefined,
    runId: src.runId,
    recipeId: src.recipeId,
    recipeName: src.recipeName,
    recipeVersion: src.recipeVersion,
  };
  // names and positions of conditions and coverslips are in the key, though renaming one (a write) moves the
  // stamp already
  const { seed, resamples, confidence, bins, coefficient } = opts;
  const key = JSON.stringify([studyId, src.runIds, source, coefficient, seed, resamples, confidence, bins, conds, slips, stamp]);
  return { key, input: () => inputOf(ix, opts, source, studyId, conds, slips) };
}

/**
 * What the thread needs: the grid index's columns (structured-cloned with the task, a plain copy of ~50 MB at a
 * million cells, rather than picked here row by row on the web thread) and the names. The grid index stays
 * in use by the Cell table meanwhile.
 */
function inputOf(ix: GridIndex, opts: CompareQuery, source: CompareTask['source'], studyId: number, conds: CompareTask['conds'], slips: CompareTask['slips']): CompareTask {
  const { cellId, field, measured, excluded, saturated, calibration, fieldId, coverslipId, conditionId } = ix;
  return {
    studyId,
    opts,
    source,
    conds,
    slips,
    grid: { cellId, field, measured, excluded, saturated, calibration, fieldId, coverslipId, conditionId, value: ix.cols[opts.coefficient], mean1: ix.cols.mean1, mean2: ix.cols.mean2, provisional: ix.cols.provisional },
  };
}

/** The comparison of a study for these options: cached per data version, computed in a thread when not. */
export async function cachedComparison(ctx: AppContext, studyId: number, options: CompareOptions): Promise<CachedComparison> {
  const cache = cacheOf(ctx);
  const { input, key } = await comparisonInput(ctx, studyId, options);
  let p = cache.answers.get(key);
  if (p) {
    cache.answers.delete(key);
    cache.answers.set(key, p); // most recently used last
    return p;
  }
  const task = input();
  let parts: Promise<[ComparisonHead, PointsResult]>;
  if (task.grid.cellId.length <= ctx.env.COMPARE_INLINE_CELLS) {
    // a small study: the same computation here, in milliseconds (no thread to start or hop to)
    parts = Promise.resolve().then(() => [compareTask({ ...task, part: 'head' }) as ComparisonHead, pointsPart(task)]);
  } else {
    // two threads, one for the statistics and one for the points (the grid's columns are shared, not copied)
    const pool = (cache.pool ??= new Piscina({ filename: COMPARE_WORKER_FILE, execArgv: ['--import', 'tsx'], minThreads: 0, maxThreads: 2, idleTimeout: 120_000 }));
    const run = <T>(part: CompareJob['part']) => pool.run({ ...task, part } satisfies CompareJob) as Promise<T>;
    parts = Promise.all([run<ComparisonHead>('head'), run<PointsResult>('points')]);
  }
  p = parts.then(([head, pts]) => {
    // the answer names its sample; the head kept here (reports, the CSVs) goes with every point
    const json = comparisonJsonParts({ ...head, pointsSample: pts.sampled ? { method: 'coverslip_even', max: COMPARE_POINTS_MAX } : null }, pts.json);
    cache.bytes.set(key, pts.json.byteLength + pts.points.cellId.length * 24);
    return { json, head, points: pts.points };
  });
  cache.answers.set(key, p);
  // a failed computation is not kept (the error goes to this request)
  p.catch(() => {
    if (cache.answers.get(key) === p) cache.answers.delete(key);
    cache.bytes.delete(key);
  });
  await p;
  let total = 0;
  for (const b of cache.bytes.values()) total += b;
  for (const k of cache.answers.keys()) {
    if ((total <= MAX_CACHED_BYTES && cache.answers.size <= MAX_CACHED) || k === key) break;
    total -= cache.bytes.get(k) ?? 0;
    cache.answers.delete(k);
    cache.bytes.delete(k);
  }
  return p;
}

/** The comparison as an object (report snapshots, tests); the same numbers as GET …/compare answers. */
export async function computeComparison(ctx: AppContext, studyId: number, options: CompareOptions): Promise<Comparison> {
  const c = await cachedComparison(ctx, studyId, options);
  return { ...c.head, points: pointList(c.points) };
}
