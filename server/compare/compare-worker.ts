/**
 * Threads that compute a comparison (server/compare/comparison.ts) and write its points' JSON, so that neither
 * the bootstrap nor serializing a million points runs on the thread that answers requests. A comparison is two
 * tasks run side by side on two threads: 'head' (every statistic) and 'points' (the points as columns and as
 * JSON). The grid index's columns arrive on shared memory (not copied); results move back without copying.
 * A study of at most COMPARE_INLINE_CELLS cells is computed by the same functions on the web thread.
 * Only static imports in this graph: under `--import tsx` the thread loads it through the CommonJS hook.
 */
import os from 'node:os';
import { isMainThread } from 'node:worker_threads';
import { Piscina } from 'piscina';
import { comparisonFrom, pointsFromGrid, pointsJson, samplePoints, type CompareTask, type PointColumns } from './comparison.js';
import { COMPARE_POINTS_MAX, type ComparisonHead } from '../../shared/schemas/compare.js';

// On Linux this lowers this thread only (as the grid index reader does): requests keep the CPU first. Not when
// imported by the web thread (compute.ts runs small comparisons there with the same functions).
if (process.platform === 'linux' && !isMainThread) {
  try {
    os.setPriority(Math.min(19, os.getPriority() + 5));
  } catch {
    /* not permitted: keep the default priority */
  }
}

export type CompareJob = CompareTask & { part: 'head' | 'points' };
export interface PointsResult {
  /** the JSON of the points the answer lists: every one, or at most COMPARE_POINTS_MAX (`samplePoints`) */
  json: Uint8Array;
  /** whether `json` lists a sample */
  sampled: boolean;
  /** every point (the cells CSV, reports) */
  points: PointColumns;
}

/** The points of a task as columns, and the JSON of those the answer lists. */
export function pointsPart(task: CompareTask): PointsResult {
  const points = pointsFromGrid(task);
  const listed = samplePoints(points, COMPARE_POINTS_MAX);
  return { json: pointsJson(listed.points), sampled: listed.sampled, points };
}

export default function compareTask(job: CompareJob): ComparisonHead | unknown {
  if (job.part === 'head') return comparisonFrom(job);
  const result = pointsPart(job);
  const points = result.points;
  return Piscina.move({
    get [Piscina.transferableSymbol]() {
      return [result.json.buffer, ...Object.values(points).map((a) => a.buffer)];
    },
    get [Piscina.valueSymbol]() {
      return result;
    },
  } as never);
}
