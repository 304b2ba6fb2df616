/**
 * The run queue is an interface (PRODUCT.md "Beyond one machine"): the in-process worker-thread pool by
 * default (server/runs/pool.ts), BullMQ on Redis when QUEUE_URL is set (server/runs/bullmq.ts, with
 * stateless workers started by `npm run worker`). Either way the database holds the durable state
 * (runs / run_fields) and only the web server writes it.
 */
import type { AppContext } from '../context.js';

export interface RunQueue {
  readonly kind: 'pool' | 'bullmq';
  /** Schedule the unfinished fields of a run. */
  enqueue(runId: number): Promise<void>;
  /** Re-schedule runs left queued/running by a previous process. */
  resume(): Promise<void>;
  /** Resolves when this process has nothing pending or in flight (tests; the BullMQ queue resolves when every active run is finished). */
  idle?(): Promise<void>;
  close(): Promise<void>;
}

export async function createRunQueue(ctx: AppContext): Promise<RunQueue> {
  if (ctx.env.QUEUE_URL) {
    const { BullRunQueue } = await import('./bullmq.js');
    return BullRunQueue.create(ctx);
  }
  const { PoolRunQueue } = await import('./pool.js');
  return new PoolRunQueue(ctx);
}
