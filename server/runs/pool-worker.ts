/**
 * Piscina worker thread of the in-process run pool: computes one field job (reads its files from the file
 * store, decodes, measures) and returns the result. Stateless: no database here.
 * Only static imports in this graph: under `--import tsx` the thread loads it through the CommonJS hook,
 * where a dynamic import() would miss tsx's .js → .ts resolution.
 */
import os from 'node:os';
import path from 'node:path';
import { workerData } from 'node:worker_threads';
import { LocalFileStore, type FileStore } from '../images/store.js';
import { S3FileStore } from '../images/store-s3.js';
import { runFieldJob } from './compute.js';
import type { FieldJob, FieldJobResult, StoreEnv } from './job.js';

let store: FileStore | null = null;

// On Linux, setpriority(PRIO_PROCESS, 0) applies to the calling thread only: computing threads yield to the
// thread that answers HTTP requests. Elsewhere it may lower the whole process or be refused; both are fine.
if (process.platform === 'linux') {
  try {
    os.setPriority(Math.min(19, os.getPriority() + 5));
  } catch {
    /* not permitted: keep the default priority */
  }
}

/** The file store a worker reads from, chosen the way createFileStore chooses it. */
export function openStore(env: StoreEnv): FileStore {
  if (env.STORE_URL?.startsWith('s3://')) return S3FileStore.fromUrl(env.STORE_URL, env.S3_ENDPOINT);
  if (env.STORE_URL?.startsWith('file://')) return new LocalFileStore(new URL(env.STORE_URL).pathname);
  return new LocalFileStore(path.join(env.DATA_DIR, 'store'));
}

export default async function computeFieldTask(job: FieldJob): Promise<FieldJobResult> {
  store ??= openStore((workerData ?? {}) as StoreEnv);
  return runFieldJob(store, job);
}
