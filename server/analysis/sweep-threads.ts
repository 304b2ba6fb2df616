/**
 * The pair sweep of a big region (Kendall's C − D, dCor's cross terms, ρ's rank products; the O(n log L)
 * part of the exact set) split over threads. The engine (shared/analysis/sweep.ts) cuts the sweep into y
 * slabs whose partial results merge exactly and in a fixed order; here this thread plans the sweep, puts
 * the plan's big arrays on shared memory, hands contiguous runs of slabs (about equal item counts) to
 * helper threads (piscina), computes the first run itself, and merges. The slabs depend only on the data,
 * so the result is bit for bit the one-thread result. Regions below THREAD_MIN_PAIRS pairs are swept on
 * this thread (a hand-off costs more than it saves there).
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import {
  measurePairs,
  mergeSweep,
  planSweep,
  prepare,
  slabPartial,
  sweepLevels,
  type MeasureOptions,
  type Pairs,
  type PreparedPairs,
  type RegionResult,
  type SlabPartial,
  type SweepInput,
  type ThresholdInfo,
} from '../../shared/analysis/index.js';
import type { SlabTask } from './sweep-worker.js';

const WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'sweep-worker.ts');

/** Regions of at least this many pairs are swept over the threads. */
export const THREAD_MIN_PAIRS = 1 << 20;

type Shareable = Int32Array | Uint16Array | Uint32Array | Float64Array;

/** a copy on shared memory (read by every helper without copying it again) */
function shared<T extends Shareable>(a: T): T {
  const Ctor = a.constructor as new (b: SharedArrayBuffer) => T;
  const out = new Ctor(new SharedArrayBuffer(a.byteLength));
  out.set(a as never);
  return out;
}

/** Slabs 0..S−1 cut into `parts` contiguous runs of about equal item counts (no run empty when S ≥ parts). */
export function shareSlabs(items: ArrayLike<number>, parts: number): number[][] {
  const S = items.length;
  let total = 0;
  for (let s = 0; s < S; s++) total += items[s];
  const out: number[][] = [];
  let s = 0, done = 0;
  for (let k = 0; k < parts && s < S; k++) {
    const run: number[] = [];
    const goal = (total * (k + 1)) / parts;
    // leave at least one slab for each later run
    while (s < S && (run.length === 0 || (done + items[s] / 2 <= goal && S - s > parts - k - 1))) {
      run.push(s);
      done += items[s];
      s++;
    }
    out.push(run);
  }
  while (s < S) out[out.length - 1].push(s++);
  return out;
}

export class SweepThreads {
  private pool: Piscina | null = null;
  /**
   * `helpers` threads besides this one. `start` 'now' (default) starts them at once, so that they are
   * ready when the first sweep comes (a one-off command); 'on demand' starts them at the first big region
   * and lets them end after 30 s idle (a long-lived run thread, where most regions are small).
   */
  constructor(readonly helpers: number, private start: 'now' | 'on demand' = 'now') {
    if (!(Number.isInteger(helpers) && helpers >= 1)) throw new RangeError(`sweep threads need at least one helper thread, received ${helpers}`);
    if (start === 'now') this.threads();
  }

  private threads(): Piscina {
    return (this.pool ??= new Piscina({ filename: WORKER_FILE, execArgv: ['--import', 'tsx'], minThreads: this.start === 'now' ? this.helpers : 0, maxThreads: this.helpers, idleTimeout: 30_000 }));
  }

  /**
   * Sweeps `pairs` over this thread and the helpers when it has at least `minPairs` pairs and more than one
   * slab, leaving the result on the prepared pairs (measurePairs then reuses it). True when it did.
   */
  async sweep(pairs: PreparedPairs, minPairs = THREAD_MIN_PAIRS): Promise<boolean> {
    const p = pairs;
    if (p.sweep || p.n < minPairs) return false;
    const lv = sweepLevels(p);
    if (!lv) return false;
    const plan = planSweep(p, lv);
    if (plan.slabs < 2) return false;
    const runs = shareSlabs(plan.slabItems, this.helpers + 1);
    const { start, yRank, mult, cut, ux, uy } = plan.input;
    const input: SweepInput = { start: shared(start), yRank: shared(yRank), mult: shared(mult), cut, ux, uy };
    const pool = this.threads();
    // let the pool see threads that became ready while this thread was busy, so the hand-off is immediate
    await new Promise((r) => setImmediate(r));
    const pending = runs.slice(1).map((slabs) => pool.run({ input, slabs } satisfies SlabTask) as Promise<SlabPartial[]>);
    const partials: SlabPartial[] = new Array(plan.slabs);
    for (const s of runs[0]) partials[s] = slabPartial(plan.input, s);
    const theirs = await Promise.all(pending);
    runs.slice(1).forEach((slabs, k) => slabs.forEach((s, j) => (partials[s] = theirs[k][j])));
    p.useSweep(mergeSweep(plan, partials));
    return true;
  }

  async close(): Promise<void> {
    await this.pool?.destroy();
    this.pool = null;
  }
}

/** measurePairs with the pair sweep over `threads` for a big region (null: all on this thread). */
export async function measurePairsThreaded(threads: SweepThreads | null, pairs: Pairs | PreparedPairs, thresholds: ThresholdInfo, options: Pick<MeasureOptions, 'skipSlow' | 'mic'> = {}): Promise<RegionResult> {
  const p = prepare(pairs);
  if (threads && !options.skipSlow) await threads.sweep(p);
  return measurePairs(p, thresholds, options);
}
