/** TEMPORARY: replaced by the worker-pool / BullMQ run queue (runs work). */
import type { AppContext } from '../context.js';

export interface RunQueue {
  readonly kind: 'pool' | 'bullmq';
  /** Schedule the unfinished fields of a run. */
  enqueue(runId: number): Promise<void>;
  /** Re-schedule runs left queued/running by a previous process. */
  resume(): Promise<void>;
  close(): Promise<void>;
}

export async function createRunQueue(_ctx: AppContext): Promise<RunQueue> {
  return { kind: 'pool', async enqueue() {}, async resume() {}, async close() {} };
}
