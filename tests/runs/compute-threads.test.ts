/**
 * computeFieldResultThreaded (server/runs/compute.ts): a cell above THREAD_MIN_PAIRS pixels has its pair
 * sweep split over a helper thread, and the field's rows equal those of computeFieldResult bit for bit
 * (a 1100 × 1000 synthetic 16-bit field, one big cell and one small one, Otsu thresholds over the field).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { computeFieldResult, computeFieldResultThreaded } from '../../server/runs/compute.js';
import { SweepThreads, THREAD_MIN_PAIRS } from '../../server/analysis/sweep-threads.js';
import type { FieldJob } from '../../server/runs/job.js';
import { RecipeSettings } from '../../shared/schemas/recipes.js';
import { syntheticPair } from './helpers.js';

const W = 1100, H = 1000;
const threads = new SweepThreads(1, 'on demand');
afterAll(() => threads.close());

function job(): FieldJob {
  return {
    runId: 1,
    fieldId: 1,
    fieldName: 'Big',
    sources: [{ key: 'k1', sha256: 'a'.repeat(64), channel: 1 }, { key: 'k1', sha256: 'a'.repeat(64), channel: 2 }],
    width: W,
    height: H,
    sizeZ: 1,
    bitDepth: 16,
    sampleFormat: 'uint',
    pixelSizeUm: null,
    cells: [
      { id: 1, role: 'cell', geometry: { kind: 'rect', x: 0, y: 0, width: W, height: 990 } },
      { id: 2, role: 'cell', geometry: { kind: 'rect', x: 10, y: 990, width: 300, height: 10 } },
    ],
    settings: RecipeSettings.parse({ threshold: { method: 'otsu' } }),
    recipe: { id: 1, name: 'R', version: 1, status: 'approved' },
    provisional: false,
    calibration: null,
    calibrationProblem: null,
  };
}

describe('runs: the pair sweep of big cells over threads', () => {
  it('gives the same rows as one thread', async () => {
    const [A, B] = syntheticPair(W, H, 5);
    const px = { width: W, height: H, ch1: A, ch2: B };
    const at = '2026-12-03T00:00:00.000Z';
    const one = computeFieldResult(job(), px, at);
    const two = await computeFieldResultThreaded(job(), px, threads, at);
    expect(one.measurements[0].pixels).toBeGreaterThanOrEqual(THREAD_MIN_PAIRS);
    expect(one.measurements[0].kendallTauB).not.toBeNull();
    expect(two).toEqual(one);
  }, 120_000);
});
