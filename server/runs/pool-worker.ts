/**
 * Piscina worker thread of the in-process run pool: computes a batch of field jobs one after another (reads
 * each field's files from the file store, decodes, measures) and returns their results in the same order.
 * Stateless: no database here. A batch is one hand-off each way, however many fields it holds.
 * Only static imports in this graph: under `--import tsx` the thread loads it through the CommonJS hook,
 * where a dynamic import() would miss tsx's .js → .ts resolution.
 */
import os from 'node:os';
import { workerData } from 'node:worker_threads';
import type { FileStore, FileStoreSettings } from '../services.js';
import { createFileStore } from '../images/store.js';
import { dropSpareBuffers, runFieldJob } from './compute.js';
import { SweepThreads } from '../analysis/sweep-threads.js';
import type { FieldJob, FieldJobResult } from './job.js';

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

export default async function computeFieldBatch(jobs: FieldJob[]): Promise<FieldJobResult[]> {
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
