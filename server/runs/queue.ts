/**
 * The run queue's factory (interface in server/services.ts): the in-process worker-thread pool by default
 * (server/runs/pool.ts), BullMQ on Redis when QUEUE_URL is set (server/runs/bullmq.ts, with stateless workers
 * started by `npm run worker`). Either way the database holds the durable state (runs / run_fields) and only
 * the web server writes it.
 */
import type { Db } from '../db/client.js';
import type { RunQueue, RunQueueSettings } from '../services.js';
import { PoolRunQueue } from './pool.js';

/** `onRunFinished` is called once when a field's result finishes its run (done, failed or partial). */
export async function createRunQueue(deps: { db: Db; settings: RunQueueSettings; onRunFinished?: (runId: number) => void }): Promise<RunQueue> {
  const { db, settings, onRunFinished } = deps;
  if (settings.QUEUE_URL) {
    // loaded only when used: BullMQ and its Redis client take most of a second to import
    const { BullRunQueue } = await import('./bullmq.js');
    return BullRunQueue.create(db, settings.QUEUE_URL, onRunFinished);
  }
  return new PoolRunQueue(db, settings, onRunFinished);
}
