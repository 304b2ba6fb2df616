/**
 * The outside services the server talks to, as interfaces. Each has one factory beside its implementations,
 * taking only what it needs:
 *   Mailer    — createMailer({ db, smtpUrl, from })          server/mail/transport.ts
 *   FileStore — createFileStore({ DATA_DIR, STORE_URL, … })   server/images/store.ts (local disk, S3)
 *   RunQueue  — createRunQueue({ db, settings })             server/runs/queue.ts (worker-thread pool, BullMQ)
 * server/context.ts composes them into the AppContext.
 */

export interface Mailer {
  send(msg: { to: string; subject: string; text: string; html?: string }): Promise<void>;
  close(): Promise<void>;
}

/** Content-addressed file store. */
export interface FileStore {
  readonly kind: 'local' | 's3';
  /** Moves (or uploads) a finished local temp file to `key`. Idempotent when the key exists. */
  putFile(key: string, localPath: string): Promise<void>;
  has(key: string): Promise<boolean>;
  get(key: string): Promise<Buffer>;
  delete(key: string): Promise<void>;
  /** every key in the store (for fault tests) */
  list(): Promise<string[]>;
}

/** Where the file store is (also handed to run worker threads and read from the environment by worker-main). */
export interface FileStoreSettings {
  DATA_DIR: string;
  STORE_URL?: string;
  S3_ENDPOINT?: string;
}

/**
 * The run queue (PRODUCT.md "Beyond one machine"): the in-process worker-thread pool by default, BullMQ on
 * Redis when QUEUE_URL is set. Either way the database holds the durable state (runs / run_fields) and only
 * the web server writes it.
 */
export interface RunQueue {
  readonly kind: 'pool' | 'bullmq';
  /** Schedule the unfinished fields of a run. */
  enqueue(runId: number): Promise<void>;
  /** Re-schedule runs left queued/running by a previous process. */
  resume(): Promise<void>;
  /** Starts this process's computing threads now and keeps them (the server at start); resolves with the ms it took. */
  warm?(): Promise<number>;
  /** Resolves when this process has nothing pending or in flight (tests; the BullMQ queue resolves when every active run is finished). */
  idle?(): Promise<void>;
  close(): Promise<void>;
}

/** What the run queue needs to know besides the database. */
export interface RunQueueSettings extends FileStoreSettings {
  /** worker threads of the in-process pool (fields in flight at once) */
  WORKERS: number;
  /** redis:// URL: use BullMQ instead of the in-process pool */
  QUEUE_URL?: string;
}
