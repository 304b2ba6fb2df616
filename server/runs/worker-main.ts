/**
 * `npm run worker`: a stateless run worker for the BullMQ queue. Takes field jobs (file store keys, outlines,
 * recipe settings) from Redis, reads the images from the file store, computes, and hands the measurements
 * back on the results queue. It never opens the database.
 *
 * Environment (checked by `loadWorkerEnv`, server/env.ts): QUEUE_URL (required, redis://…), STORE_URL
 * (s3://bucket[/prefix] or file:///path; default the local store under DATA_DIR), S3_ENDPOINT, DATA_DIR (default
 * "data"), WORKER_CONCURRENCY (default 1; run one process per core rather than raising it: computing blocks the
 * process), WORKER_LOCK_MS (default 300000: how long a job stays with a worker that stopped answering).
 */
import os from 'node:os';
import { Queue, Worker } from 'bullmq';
import { FIELDS_QUEUE, RESULTS_QUEUE, connectionOf, jobIdOf } from './bullmq.js';
import { createFileStore } from '../images/store.js';
import { runFieldJob } from './compute.js';
import { SweepThreads } from '../analysis/sweep-threads.js';
import type { FieldJob, FieldJobResult } from './job.js';
import { ConfigError, loadWorkerEnv, type WorkerEnv } from '../env.js';

function fail(msg: string): never {
  console.error(`Syntopy worker could not start: ${msg}`);
  process.exit(1);
}

async function main() {
  let env: WorkerEnv;
  try {
    env = loadWorkerEnv();
  } catch (e) {
    fail(e instanceof ConfigError ? e.message : String(e));
  }
  const url = env.QUEUE_URL;
  const concurrency = env.WORKER_CONCURRENCY;
  const store = createFileStore({ DATA_DIR: env.DATA_DIR, STORE_URL: env.STORE_URL, S3_ENDPOINT: env.S3_ENDPOINT });
  // one helper thread for the pair sweep of a cell of a million pixels or more, started on the first such cell
  const threads = new SweepThreads(1, 'on demand');
  const connection = connectionOf(url);
  const results = new Queue<FieldJobResult>(RESULTS_QUEUE, { connection });
  const name = `${os.hostname()}:${process.pid}`;
  const worker = new Worker<FieldJob, { worker: string; ok: boolean; measurements: number; ms: number }>(
    FIELDS_QUEUE,
    async (job) => {
      const res = await runFieldJob(store, job.data, threads);
      await results.add('result', res, { jobId: jobIdOf(res.runId, res.fieldId), removeOnComplete: true, removeOnFail: 1000 });
      return { worker: name, ok: res.ok, measurements: res.ok ? res.measurements.length : 0, ms: Math.round(res.ms) };
    },
    // a dead worker's job is noticed at the next stalled-job check and given to another worker
    { connection, concurrency, lockDuration: env.WORKER_LOCK_MS, stalledInterval: Math.min(30_000, env.WORKER_LOCK_MS) },
  );
  worker.on('error', (e) => console.warn(`[worker] ${e.message}`));
  worker.on('active', (job) => console.log(`[worker ${name}] field ${job.data.fieldId} of run ${job.data.runId}: started`));
  worker.on('completed', (job, rv) => console.log(`[worker ${name}] field ${job.data.fieldId} of run ${job.data.runId}: ${rv.ok ? `${rv.measurements} cells` : 'failed'} in ${rv.ms} ms`));
  await worker.waitUntilReady();
  console.log(`Syntopy worker ${name} is taking field jobs from ${url.replace(/\/\/[^@]*@/, '//***@')} (store: ${store.kind})`);
  const stop = async () => {
    await worker.close();
    await results.close();
    await threads.close();
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

main().catch((e) => fail(e instanceof Error ? e.message : String(e)));
