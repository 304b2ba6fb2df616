/**
 * The default run queue: an in-process pool of worker threads (piscina). The database is the queue: the
 * scheduler hands at most `WORKERS` queued fields to the threads at a time, marks each running, and writes
 * each result in one transaction. After a restart `resume()` re-queues what was left running.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import type { Db } from '../db/client.js';
import type { FileStoreSettings, RunQueue, RunQueueSettings } from '../services.js';
import type { FieldJobResult } from './job.js';
import { buildJob, fieldName, markFieldStarted, queuedFieldsOf, recordFieldResult, refreshRun, unfinishedWork } from './records.js';

const WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'pool-worker.ts');

/** The store settings handed to each worker thread (structured-cloned, so only these fields). */
export function storeSettingsOf(s: FileStoreSettings): FileStoreSettings {
  return { DATA_DIR: s.DATA_DIR, STORE_URL: s.STORE_URL, S3_ENDPOINT: s.S3_ENDPOINT };
}

export class PoolRunQueue implements RunQueue {
  readonly kind = 'pool' as const;
  private pool: Piscina;
  private pending: { runId: number; fieldId: number }[] = [];
  private inFlight = new Set<string>();
  private closed = false;
  private idleWaiters: (() => void)[] = [];

  private readonly workers: number;

  constructor(
    private db: Db,
    settings: RunQueueSettings,
    private onRunFinished?: (runId: number) => void,
  ) {
    this.workers = settings.WORKERS;
    this.pool = new Piscina({
      filename: WORKER_FILE,
      execArgv: ['--import', 'tsx'],
      minThreads: 0,
      maxThreads: settings.WORKERS,
      idleTimeout: 30_000,
      workerData: storeSettingsOf(settings),
    });
  }

  async enqueue(runId: number) {
    for (const w of queuedFieldsOf(this.db, runId)) this.add(w);
    refreshRun(this.db, runId);
    this.pump();
  }

  async resume() {
    for (const w of unfinishedWork(this.db)) this.add(w);
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
    while (!this.closed && this.inFlight.size < this.workers && this.pending.length) {
      const w = this.pending.shift()!;
      const k = `${w.runId}:${w.fieldId}`;
      let job;
      try {
        job = buildJob(this.db, w.runId, w.fieldId);
      } catch (e) {
        this.record({ runId: w.runId, fieldId: w.fieldId, ok: false, error: (e as Error).message, ms: 0 });
        continue;
      }
      markFieldStarted(this.db, w.runId, w.fieldId, fieldName(this.db, w.fieldId));
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
      recordFieldResult(this.db, res, this.onRunFinished);
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
