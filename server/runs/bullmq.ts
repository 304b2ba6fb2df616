/**
 * The run queue across machines: BullMQ on Redis (QUEUE_URL=redis://…). The web server puts one job per field
 * on `syntopy-fields` (everything a stateless worker needs: file store keys, outlines, recipe settings);
 * `npm run worker` processes (server/runs/worker-main.ts) compute and put the measurements on
 * `syntopy-results`; the web server alone consumes that queue and writes SQLite, one transaction per field.
 * Durable: the database holds run state; results wait in Redis while the server is down; job ids
 * (`r<run>-f<field>`) make re-adding after a restart harmless, and a result for a finished field is ignored.
 */
import { Queue, QueueEvents, Worker, type ConnectionOptions } from 'bullmq';
import { inArray } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { runs } from '../db/schema.js';
import type { RunQueue } from '../services.js';
import type { FieldJob, FieldJobResult } from './job.js';
import { buildJob, fieldName, markFieldStarted, queuedFieldsOf, recordFieldResult, refreshRun, unfinishedWork } from './records.js';

export const FIELDS_QUEUE = 'syntopy-fields';
export const RESULTS_QUEUE = 'syntopy-results';
export const jobIdOf = (runId: number, fieldId: number) => `r${runId}-f${fieldId}`;
const parseJobId = (id: string) => {
  const m = /^r(\d+)-f(\d+)$/.exec(id);
  return m ? { runId: Number(m[1]), fieldId: Number(m[2]) } : null;
};

export const connectionOf = (url: string): ConnectionOptions => ({ url, maxRetriesPerRequest: null });

export class BullRunQueue implements RunQueue {
  readonly kind = 'bullmq' as const;
  private fields!: Queue<FieldJob>;
  private results!: Worker<FieldJobResult>;
  private events!: QueueEvents;

  private constructor(
    private db: Db,
    private onRunFinished?: (runId: number) => void,
  ) {}

  static async create(db: Db, queueUrl: string, onRunFinished?: (runId: number) => void) {
    const q = new BullRunQueue(db, onRunFinished);
    const connection = connectionOf(queueUrl);
    q.fields = new Queue<FieldJob>(FIELDS_QUEUE, { connection });
    q.results = new Worker<FieldJobResult>(
      RESULTS_QUEUE,
      async (job) => {
        recordFieldResult(db, job.data, onRunFinished);
      },
      { connection, concurrency: 1, removeOnComplete: { count: 0 }, removeOnFail: { count: 1000 } },
    );
    q.results.on('error', (e) => console.warn(`[runs] results queue: ${e.message}`));
    q.events = new QueueEvents(FIELDS_QUEUE, { connection });
    q.events.on('active', ({ jobId }) => {
      const ids = parseJobId(jobId);
      if (ids) {
        try {
          markFieldStarted(db, ids.runId, ids.fieldId, fieldName(db, ids.fieldId));
        } catch {
          /* progress is best-effort */
        }
      }
    });
    q.events.on('error', (e) => console.warn(`[runs] queue events: ${e.message}`));
    await Promise.all([q.fields.waitUntilReady(), q.results.waitUntilReady(), q.events.waitUntilReady()]);
    return q;
  }

  private async add(work: { runId: number; fieldId: number }[]) {
    const jobs: { name: string; data: FieldJob; opts: { jobId: string; removeOnComplete: boolean | number; removeOnFail: boolean | number; attempts: number } }[] = [];
    for (const w of work) {
      let data: FieldJob;
      try {
        data = buildJob(this.db, w.runId, w.fieldId);
      } catch (e) {
        recordFieldResult(this.db, { runId: w.runId, fieldId: w.fieldId, ok: false, error: (e as Error).message, ms: 0 }, this.onRunFinished);
        continue;
      }
      jobs.push({ name: 'field', data, opts: { jobId: jobIdOf(w.runId, w.fieldId), removeOnComplete: 1000, removeOnFail: 1000, attempts: 2 } });
    }
    for (let i = 0; i < jobs.length; i += 100) await this.fields.addBulk(jobs.slice(i, i + 100));
  }

  async enqueue(runId: number) {
    refreshRun(this.db, runId);
    await this.add(queuedFieldsOf(this.db, runId));
  }

  async resume() {
    // Fields left unfinished: jobs BullMQ still holds as waiting/active stay (re-adding the same id is a
    // no-op); finished (completed or failed) jobs are removed and added again, because their result may
    // have been lost with the previous process. A duplicate result is ignored by recordFieldResult.
    const work = unfinishedWork(this.db);
    for (const w of work) {
      const job = await this.fields.getJob(jobIdOf(w.runId, w.fieldId));
      if (job && ((await job.isFailed()) || (await job.isCompleted()))) await job.remove().catch(() => undefined);
    }
    await this.add(work);
  }

  /** Resolves when no run is queued or running (tests). */
  async idle() {
    for (;;) {
      const active = this.db.select({ id: runs.id }).from(runs).where(inArray(runs.status, ['queued', 'running'])).all();
      if (!active.length) return;
      await new Promise((r) => setTimeout(r, 50));
    }
  }

  async close() {
    await Promise.allSettled([this.results.close(), this.events.close(), this.fields.close()]);
  }
}
