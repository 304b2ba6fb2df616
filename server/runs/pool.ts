/**
 * The default run queue: an in-process pool of worker threads (piscina). The database is the queue: the
 * scheduler hands queued fields to the threads in batches (one hand-off per batch, the batch's fields marked
 * running in one transaction) and writes each batch's results in one transaction. Two batches per thread are
 * in flight, so a thread computes the next batch while this thread writes the last one. After a restart
 * `resume()` re-queues what was left running.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import type { Db } from '../db/client.js';
import type { FileStoreSettings, RunQueue, RunQueueSettings } from '../services.js';
import type { FieldJob, FieldJobResult } from './job.js';
import { WARM_UP_MESSAGE, type WarmUpReport } from './warm-up.js';
import { buildJob, fieldName, markFieldsStarted, queuedFieldsOf, recordFieldResults, refreshRun, unfinishedWork, type RunPartCache } from './records.js';

const WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'pool-worker.ts');

/** The store settings handed to each worker thread (structured-cloned, so only these fields). */
/** At most this many fields per hand-off (progress advances per batch, so batches stay small). */
export const MAX_BATCH = 8;
/** Batches in flight per thread: one computing, one waiting in the thread's queue. */
const BATCHES_PER_THREAD = 2;

/**
 * How many of `pending` queued fields the next batch takes: enough that every thread gets about four batches
 * of what is pending (so the threads share the work evenly to the end), 1 to MAX_BATCH.
 */
export function batchSize(pending: number, workers: number): number {
  return Math.max(1, Math.min(MAX_BATCH, Math.ceil(pending / (workers * 4))));
}

export function storeSettingsOf(s: FileStoreSettings): FileStoreSettings {
  return { DATA_DIR: s.DATA_DIR, STORE_URL: s.STORE_URL, S3_ENDPOINT: s.S3_ENDPOINT };
}

/**
 * Where a pool's time went since it was made, cumulative (`BENCH=runs npm run bench` prints the differences over
 * a run): on this thread, building the batches' jobs and marking their fields running, and writing results; in
 * the pool threads, reading + decoding and measuring the fields (as each field's result reports it).
 */
export interface PoolTimings {
  batches: number;
  fields: number;
  prepareMs: number;
  recordMs: number;
  threadMs: number;
  threadLoadMs: number;
}

export class PoolRunQueue implements RunQueue {
  readonly kind = 'pool' as const;
  readonly timings: PoolTimings = { batches: 0, fields: 0, prepareMs: 0, recordMs: 0, threadMs: 0, threadLoadMs: 0 };
  /** made at the first run (threads on demand, ending after 30 s idle) or by warm() (threads started at once and kept) */
  private pool: Piscina | null = null;
  private pending: { runId: number; fieldId: number }[] = [];
  private inFlight = new Set<string>();
  private batchesInFlight = 0;
  private closed = false;
  private idleWaiters: (() => void)[] = [];
  /** every started thread's warm-up report, in the order they ended (warm-up.ts) */
  readonly warmUps: WarmUpReport[] = [];
  private warmUpWaiters: (() => void)[] = [];
  private warmUpWarned = new Set<string>();

  private readonly workers: number;

  constructor(
    private db: Db,
    private settings: RunQueueSettings,
    private onRunFinished?: (runId: number) => void,
  ) {
    this.workers = settings.WORKERS;
  }

  private threads(keep = false): Piscina {
    if (this.pool) return this.pool;
    this.pool = new Piscina({
      filename: WORKER_FILE,
      execArgv: ['--import', 'tsx'],
      minThreads: keep ? this.workers : 0,
      maxThreads: this.workers,
      idleTimeout: 30_000,
      workerData: storeSettingsOf(this.settings),
    });
    // each thread, when it starts (here or on demand later), reports its warm-up before it takes a batch
    this.pool.on('message', (m: unknown) => {
      const report = m && typeof m === 'object' ? (m as Record<string, WarmUpReport | undefined>)[WARM_UP_MESSAGE] : undefined;
      if (report) this.warmedUp(report);
    });
    return this.pool;
  }

  private warmedUp(report: WarmUpReport) {
    this.warmUps.push(report);
    // a failed warm-up costs only the warming; said once per distinct message, however many threads hit it
    if (report.error !== null && !this.warmUpWarned.has(report.error)) {
      this.warmUpWarned.add(report.error);
      console.warn(`[runs] a pool thread's warm-up stopped after ${report.fields} field(s) (${report.ms.toFixed(0)} ms); its runs are unaffected but start unwarmed: ${report.error}`);
    }
    for (const r of this.warmUpWaiters.splice(0)) r();
  }

  /** Resolves once `n` warm-up reports are in. */
  private warmUpReports(n: number): Promise<void> {
    return new Promise((resolve) => {
      const check = () => (this.warmUps.length >= n || this.closed ? resolve() : this.warmUpWaiters.push(check));
      check();
    });
  }

  /**
   * Starts the pool's threads now and keeps them for the life of the queue (the server calls it at start), so a
   * run does not wait for a thread to start, load the engine and warm it up (0.7–0.9 s at load 2–4, the warm-up
   * ~0.3 s of it) after the server started or after a quiet spell. Resolves with the milliseconds until every thread answered and reported its
   * warm-up (each report is in `warmUps`). Without it (tests, one-off scripts) threads start at the first run,
   * warm up then (that run waits for it) and end after 30 s idle. Has no effect once the pool exists.
   */
  async warm(): Promise<number> {
    const t0 = performance.now();
    if (this.pool) return 0;
    const pool = this.threads(true);
    // an empty batch per thread: each resolves once a thread has loaded the worker module and warmed up
    await Promise.all([...Array.from({ length: this.workers }, () => pool.run([])), this.warmUpReports(this.warmUps.length + this.workers)]);
    return performance.now() - t0;
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
    while (!this.closed && this.batchesInFlight < this.workers * BATCHES_PER_THREAD && this.pending.length) {
      const t0 = performance.now();
      const take = this.pending.splice(0, batchSize(this.pending.length, this.workers));
      const jobs: FieldJob[] = [];
      const refused: FieldJobResult[] = [];
      const runParts: RunPartCache = new Map();
      for (const w of take) {
        try {
          jobs.push(buildJob(this.db, w.runId, w.fieldId, runParts));
        } catch (e) {
          refused.push({ runId: w.runId, fieldId: w.fieldId, ok: false, error: (e as Error).message, ms: 0 });
        }
      }
      if (refused.length) this.record(refused);
      if (!jobs.length) continue;
      markFieldsStarted(this.db, jobs.map((j) => ({ runId: j.runId, fieldId: j.fieldId, fieldName: fieldName(this.db, j.fieldId) })));
      const keys = jobs.map((j) => `${j.runId}:${j.fieldId}`);
      for (const k of keys) this.inFlight.add(k);
      this.batchesInFlight++;
      this.timings.batches++;
      this.timings.fields += jobs.length;
      this.timings.prepareMs += performance.now() - t0;
      this.threads()
        .run(jobs)
        .then(
          (res: FieldJobResult[]) => this.record(res),
          (e: unknown) => {
            if (!this.closed) this.record(jobs.map((j) => ({ runId: j.runId, fieldId: j.fieldId, ok: false as const, error: `worker failed: ${(e as Error)?.message ?? String(e)}`, ms: 0 })));
          },
        )
        .finally(() => {
          this.batchesInFlight--;
          for (const k of keys) this.inFlight.delete(k);
          this.pump();
          if (!this.pending.length && !this.inFlight.size) for (const r of this.idleWaiters.splice(0)) r();
        });
    }
  }

  private record(res: FieldJobResult[]) {
    if (this.closed) return;
    const t0 = performance.now();
    for (const r of res) {
      this.timings.threadMs += r.ms;
      if (r.ok) this.timings.threadLoadMs += r.loadMs ?? 0;
    }
    try {
      recordFieldResults(this.db, res, this.onRunFinished);
      this.timings.recordMs += performance.now() - t0;
    } catch (e) {
      // the database refused (e.g. closing); the fields stay running and resume() picks them up
      console.warn(`[runs] could not record ${res.length} field result(s) of run ${res[0]?.runId}: ${(e as Error).message}`);
    }
  }

  async close() {
    this.closed = true;
    this.pending = [];
    await this.pool?.destroy();
    for (const r of this.idleWaiters.splice(0)) r();
    for (const r of this.warmUpWaiters.splice(0)) r();
  }
}
