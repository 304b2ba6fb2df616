/** Everything a request handler needs, built once at start-up (and once per test file). */
import path from 'node:path';
import type { Env } from './env.js';
import { openDb, type Db } from './db/client.js';
import type { FileStore, Mailer, RunQueue } from './services.js';
import { createMailer } from './mail/transport.js';
import { createFileStore } from './images/store.js';
import { createRunQueue } from './runs/queue.js';
import { notifyRunFinished } from './mail/notify.js';

export interface AppContext {
  env: Env;
  db: Db;
  mail: Mailer;
  /** content-addressed file store (server/images/store.ts) */
  store: FileStore;
  /** analysis run queue (server/runs/queue.ts) */
  runs: RunQueue;
  /** bumped after every state-changing API request (read caches key on it with the newest measurement id) */
  dataVersion: number;
  /** things to close on shutdown */
  closers: Array<() => Promise<void> | void>;
}

/** Opens the database, then each service with what it needs; on a failure closes what was opened and rethrows. */
export async function createContext(env: Env): Promise<AppContext> {
  const db = openDb(path.join(env.DATA_DIR, 'syntopy.db'));
  const closers: AppContext['closers'] = [() => void db.$client.close()];
  try {
    const mail = await createMailer({ db, smtpUrl: env.SMTP_URL, from: env.MAIL_FROM });
    closers.unshift(() => mail.close());
    const store = createFileStore(env);
    const onRunFinished = (runId: number) =>
      void notifyRunFinished({ db, mail, env }, runId).catch((e: Error) => console.warn(`[notify] run ${runId}: ${e.message}`));
    const runs = await createRunQueue({ db, settings: env, onRunFinished });
    closers.unshift(() => runs.close());
    return { env, db, mail, store, runs, dataVersion: 0, closers };
  } catch (e) {
    await closeAll(closers);
    throw e;
  }
}

async function closeAll(closers: AppContext['closers']) {
  for (const c of closers.splice(0)) {
    try {
      await c();
    } catch {
      /* closing best-effort */
    }
  }
}

export async function closeContext(ctx: AppContext) {
  await closeAll(ctx.closers);
}
