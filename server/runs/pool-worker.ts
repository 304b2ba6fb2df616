/**
 * Piscina worker thread of the in-process run pool: computes a batch of field jobs one after another (reads
 * each field's files from the file store, decodes, measures) and returns their results in the same order.
 * Stateless: no database here. A batch is one hand-off each way, however many fields it holds.
 * As it starts, the thread warms its code (warm-up.ts: small synthetic fields through the same path, results
 * discarded) and only then hands piscina its handler: a batch sent to a thread that is still warming waits in
 * that thread's queue until the warm-up ends (at most a few hundred ms), then runs as any other. The warm-up's
 * report goes to the pool as a message; a failed warm-up is reported there and the handler is handed over all
 * the same, so it can delay a batch but never fail one.
 * Only static imports in this graph: under `--import tsx` the thread loads it through the CommonJS hook,
 * where a dynamic import() would miss tsx's .js → .ts resolution.
 */
import os from 'node:os';
import { parentPort, workerData } from 'node:worker_threads';
import type { FileStore, FileStoreSettings } from '../services.js';
import { createFileStore } from '../images/store.js';
import { dropSpareBuffers, runFieldJob } from './compute.js';
import { SweepThreads } from '../analysis/sweep-threads.js';
import type { FieldJob, FieldJobResult } from './job.js';
import { WARM_UP_MESSAGE, warmUpRunPath } from './warm-up.js';

let store: FileStore | null = null;
/** one helper thread for the pair sweep of a cell of a million pixels or more, started on the first such cell */
const threads = new SweepThreads(1, 'on demand');

// On Linux, setpriority(PRIO_PROCESS, 0) applies to the calling thread only: computing threads yield to the
// thread that answers HTTP requests. Elsewhere it may lower the whole process or be refused; both are fine.
if (process.platform === 'linux') {
  try {
    os.setPriority(Math.min(19, os.getPriority() + 5));
  } catch {
    /* not permitted: keep the default priority */
  }
}

async function computeFieldBatch(jobs: FieldJob[]): Promise<FieldJobResult[]> {
  store ??= createFileStore(workerData as FileStoreSettings);
  const out: FieldJobResult[] = [];
  try {
    for (const job of jobs) out.push(await runFieldJob(store, job, threads));
  } finally {
    // the fields of a batch share the unmixing arrays; an idle thread keeps none
    dropSpareBuffers();
  }
  return out;
}

// piscina awaits a Promise exported as the handler before it hands the thread any batch (warmUpRunPath never rejects)
export default warmUpRunPath(threads).then((report) => {
  parentPort?.postMessage({ [WARM_UP_MESSAGE]: report });
  return computeFieldBatch;
});
