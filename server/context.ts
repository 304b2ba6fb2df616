/** Everything a request handler needs, built once at start-up (and once per test file). */
import path from 'node:path';
import type { Env } from './env.js';
import { openDb, type Db } from './db/client.js';

export interface Mailer {
  send(msg: { to: string; subject: string; text: string; html?: string }): Promise<void>;
  close(): Promise<void>;
}

export interface AppContext {
  env: Env;
  db: Db;
  mail: Mailer;
  /** content-addressed file store (server/images/store.ts) */
  store: import('./images/store.js').FileStore;
  /** analysis run queue (server/runs/queue.ts) */
  runs: import('./runs/queue.js').RunQueue;
  /** bumped after every state-changing API request (read caches key on it with the newest measurement id) */
  dataVersion: number;
  /** things to close on shutdown */
  closers: Array<() => Promise<void> | void>;
}

export async function createContext(env: Env): Promise<AppContext> {
  const db = openDb(path.join(env.DATA_DIR, 'syntopy.db'));
  const { createMailer } = await import('./mail/transport.js');
  const { createFileStore } = await import('./images/store.js');
  const { createRunQueue } = await import('./runs/queue.js');
  const ctx = { env, db, closers: [], dataVersion: 0 } as unknown as AppContext;
  ctx.mail = await createMailer(ctx);
  ctx.store = await createFileStore(ctx);
  ctx.runs = await createRunQueue(ctx);
  ctx.closers.push(() => ctx.runs.close(), () => ctx.mail.close(), () => void db.$client.close());
  return ctx;
}

export async function closeContext(ctx: AppContext) {
  for (const c of ctx.closers.splice(0)) {
    try {
      await c();
    } catch {
      /* closing best-effort */
    }
  }
}
