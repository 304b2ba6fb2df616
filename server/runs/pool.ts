/**
 * The default run queue: an in-process pool of worker threads (piscina). The database is the queue: the
 * scheduler hands at most `WORKERS` queued fields to the threads at a time, marks each running, and writes
 * each result in one transaction. After a restart `resume()` re-queues what was left running.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import type { AppContext } from '../context.js';
import type { RunQueue } from './queue.js';
import type { FieldJobResult, StoreEnv } from './job.js';
import { buildJob, fieldName, markFieldStarted, queuedFieldsOf, recordFieldResult, refreshRun, unfinishedWork } from './records.js';

const WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'pool-worker.ts');

export function storeEnvOf(env: AppContext['env']): StoreEnv {
  return { DATA_DIR: env.DATA_DIR, STORE_URL: env.STORE_URL, S3_ENDPOINT: env.S3_ENDPOINT };
}

export class PoolRunQueue implements RunQueue {
  readonly kind = 'pool' as const;
  private pool: Piscina;
  private pending: { runId: number; fieldId: number }[] = [];
  private inFlight = new Set<string>();
  private closed = false;
  private idleWaiters: (() => void)[] = [];

  constructor(private ctx: AppContext) {
    this.pool = new Piscina({
      filename: WORKER_FILE,
      execArgv: ['--import', 'tsx'],
      minThreads: 0,
      maxThreads: ctx.env.WORKERS,
      idleTimeout: 30_000,
      workerData: storeEnvOf(ctx.env),
    });
  }

  async enqueue(runId: number) {
    for (const w of queuedFieldsOf(this.ctx.db, runId)) this.add(w);
    refreshRun(this.ctx.db, runId);
    this.pump();
  }

  async resume() {
    for (const w of unfinishedWork(this.ctx.db)) this.add(w);
    this.pump();
  }

  /** Resolves when nothing is pending or in flight (tests). */
  idle(): Promise<void> {
    if (!this.pending.length && !this.inFlight.size) return Promise.resolve();
    return new Promise((r) => this.idleWaiters.push(r));
  }

  private add(w: { runId: number; fieldId: number }) {
    const k = `${w.runId}:${w.fieldId}`;
    if (this.inFlight.has(k) || this.pending.some((p) => p.runId === w.runId && p.fieldId === w.fieldId)) return;
    this.pending.push(w);
  }

  private pump() {
    while (!this.closed && this.inFlight.size < this.ctx.env.WORKERS && this.pending.length) {
      const w = this.pending.shift()!;
      const k = `${w.runId}:${w.fieldId}`;
      let job;
      try {
        job = buildJob(this.ctx.db, w.runId, w.fieldId);
      } catch (e) {
        this.record({ runId: w.runId, fieldId: w.fieldId, ok: false, error: (e as Error).message, ms: 0 });
        continue;
      }
      markFieldStarted(this.ctx.db, w.runId, w.fieldId, fieldName(this.ctx.db, w.fieldId));
      this.inFlight.add(k);
      this.pool
        .run(job)
        .then(
          (res: FieldJobResult) => this.record(res),
          (e: unknown) => {
            if (!this.closed) this.record({ runId: w.runId, fieldId: w.fieldId, ok: false, error: `worker failed: ${(e as Error)?.message ?? String(e)}`, ms: 0 });
          },
        )
        .finally(() => {
          this.inFlight.delete(k);
          this.pump();
          if (!this.pending.length && !this.inFlight.size) for (const r of this.idleWaiters.splice(0)) r();
        });
    }
  }

  private record(res: FieldJobResult) {
    if (this.closed) return;
    try {
      recordFieldResult(this.ctx.db, res);
    } catch (e) {
      // the database refused (e.g. closing); the field stays running and resume() picks it up
      console.warn(`[runs] could not record field ${res.fieldId} of run ${res.runId}: ${(e as Error).message}`);
    }
  }

  async close() {
    this.closed = true;
    this.pending = [];
    await this.pool.destroy();
    for (const r of this.idleWaiters.splice(0)) r();
  }
}
