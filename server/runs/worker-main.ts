/**
 * `npm run worker`: a stateless run worker for the BullMQ queue. Takes field jobs (file store keys, outlines,
 * recipe settings) from Redis, reads the images from the file store, computes, and hands the measurements
 * back on the results queue. It never opens the database.
 *
 * Environment: QUEUE_URL (required, redis://…), STORE_URL (s3://bucket[/prefix] or file:///path; default the
 * local store under DATA_DIR), S3_ENDPOINT, DATA_DIR (default "data"), WORKER_CONCURRENCY (default 1; run
 * one process per core rather than raising it: computing blocks the process).
 */
import os from 'node:os';
import { Queue, Worker } from 'bullmq';
import { FIELDS_QUEUE, RESULTS_QUEUE, connectionOf, jobIdOf } from './bullmq.js';
import { createFileStore } from '../images/store.js';
import { runFieldJob } from './compute.js';
import { SweepThreads } from '../analysis/sweep-threads.js';
import type { FieldJob, FieldJobResult } from './job.js';

function fail(msg: string): never {
  console.error(`Syntopy worker could not start: ${msg}`);
  process.exit(1);
}

async function main() {
  const url = process.env.QUEUE_URL;
  if (!url || !/^rediss?:\/\//.test(url)) fail(`QUEUE_URL must be set to redis://host:port, got ${JSON.stringify(url ?? null)}`);
  const storeUrl = process.env.STORE_URL;
  if (storeUrl && !/^(s3|file):\/\//.test(storeUrl)) fail(`STORE_URL must start with s3:// or file://, got ${JSON.stringify(storeUrl)}`);
  const concurrency = Number(process.env.WORKER_CONCURRENCY ?? 1);
  if (!Number.isInteger(concurrency) || concurrency < 1 || concurrency > 64) fail(`WORKER_CONCURRENCY must be an integer 1–64, got ${JSON.stringify(process.env.WORKER_CONCURRENCY)}`);
  const store = createFileStore({ DATA_DIR: process.env.DATA_DIR ?? 'data', STORE_URL: storeUrl, S3_ENDPOINT: process.env.S3_ENDPOINT });
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
    { connection, concurrency, lockDuration: 5 * 60_000 },
  );
  worker.on('error', (e) => console.warn(`[worker] ${e.message}`));
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
