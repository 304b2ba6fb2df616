/** Configuration from the environment, validated once with zod; a bad value is named in one line. */
import { z } from 'zod';
import fs from 'node:fs';
import path from 'node:path';
import crypto from 'node:crypto';
import os from 'node:os';

/**
 * Default analysis worker threads: the machine's available parallelism minus one (one core stays with the
 * thread that answers requests), at least 1 and at most 4 (more threads mostly add memory: each holds a
 * decoded field).
 */
export function defaultWorkers(parallelism = os.availableParallelism()): number {
  return Math.max(1, Math.min(4, parallelism - 1));
}

const EnvSchema = z.object({
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  HOST: z.string().min(1).default('0.0.0.0'),
  DATA_DIR: z.string().min(1).default('data'),
  SESSION_SECRET: z.string().min(32, 'SESSION_SECRET must be at least 32 characters').optional(),
  SESSION_HOURS: z.coerce.number().positive().max(24 * 90).default(12),
  PUBLIC_URL: z.string().url().optional(),
  SMTP_URL: z.string().url().optional(),
  MAIL_FROM: z.string().min(3).default('Syntopy <no-reply@syntopy.local>'),
  QUEUE_URL: z.string().regex(/^rediss?:\/\//, 'QUEUE_URL must start with redis://').optional(),
  STORE_URL: z.string().regex(/^(s3|file):\/\//, 'STORE_URL must start with s3:// or file://').optional(),
  S3_ENDPOINT: z.string().url().optional(),
  MAX_UPLOAD_BYTES: z.coerce.number().int().positive().default(2 * 1024 ** 3),
  MAX_FILES_PER_REQUEST: z.coerce.number().int().positive().default(100),
  PIXEL_BUDGET: z.coerce.number().int().positive().default(2 ** 28),
  /** most bytes the image data of one uploaded file may unpack to (server/images/decode.ts) */
  MAX_DECODED_BYTES: z.coerce.number().int().positive().default(2 ** 31),
  /** heap limit (MB) and time limit (ms) of the thread that decodes an uploaded or imported file */
  DECODE_HEAP_MB: z.coerce.number().int().min(16).max(65536).default(1024),
  DECODE_TIMEOUT_MS: z.coerce.number().int().min(1).max(3_600_000).default(120_000),
  WORKERS: z.coerce.number().int().min(1).max(64).default(() => defaultWorkers()),
  /**
   * Compare computes a study of at most this many cells on the web thread (a few milliseconds: no thread hop or
   * thread start), larger ones in its threads (server/compare/compute.ts); 0 sends every comparison to them
   */
  COMPARE_INLINE_CELLS: z.coerce.number().int().min(0).max(100_000).default(2000),
  /** requests a minute each personal API token may make (server/auth/tokens.ts); beyond it 429 */
  TOKEN_REQUESTS_PER_MINUTE: z.coerce.number().int().min(1).max(1_000_000).default(600),
  SEED_DEMO: z.enum(['auto', 'never']).default('auto'),
  TRUST_PROXY: z.enum(['0', '1']).default('0'),
  /** production unless told otherwise; `npm run dev` sets development, the test set-up sets test */
  NODE_ENV: z.enum(['production', 'development', 'test'], { error: 'NODE_ENV must be production, development or test' }).default('production'),
  /** folder of the built client (vite build output) */
  CLIENT_DIR: z.string().min(1).optional(),
});

export type Env = z.infer<typeof EnvSchema> & { SESSION_SECRET: string; DATA_DIR: string };

/**
 * `npm run worker` (server/runs/worker-main.ts): a stateless run worker never opens the database, so it reads
 * only these. WORKER_LOCK_MS is how long a worker holds a field job without renewing its lock: BullMQ renews it
 * every half of that while the process is responsive, and when a worker dies its job goes to another worker
 * after at most about this long (the stalled-job check runs as often). Computing a field blocks the process, so
 * the lock must outlast the slowest field (default 5 minutes), else a slow field is computed twice (the second
 * result is ignored: nothing is counted twice, but the time is spent).
 */
const WorkerEnvSchema = z.object({
  QUEUE_URL: z.string({ error: 'QUEUE_URL must be set to redis://host:port' }).regex(/^rediss?:\/\//, 'QUEUE_URL must start with redis://'),
  STORE_URL: EnvSchema.shape.STORE_URL,
  S3_ENDPOINT: EnvSchema.shape.S3_ENDPOINT,
  DATA_DIR: EnvSchema.shape.DATA_DIR,
  /** field jobs one worker process computes at once (run one process per core rather than raising it) */
  WORKER_CONCURRENCY: z.coerce.number().int().min(1).max(64).default(1),
  WORKER_LOCK_MS: z.coerce.number().int().min(1000).max(3_600_000).default(5 * 60_000),
});
export type WorkerEnv = z.infer<typeof WorkerEnvSchema>;

/** Parse a run worker's environment; throws ConfigError with one line naming the variable and its value. */
export function loadWorkerEnv(source: NodeJS.ProcessEnv = process.env): WorkerEnv {
  const parsed = WorkerEnvSchema.safeParse(source);
  if (!parsed.success) {
    const i = parsed.error.issues[0];
    const name = String(i.path[0] ?? '?');
    throw new ConfigError(`configuration error: ${name}=${JSON.stringify(source[name] ?? null)}: ${i.message}`);
  }
  return parsed.data;
}

export class ConfigError extends Error {}

/** Parse env; throws ConfigError with one clear line naming the variable. */
export function loadEnv(source: NodeJS.ProcessEnv = process.env): Env {
  const parsed = EnvSchema.safeParse(source);
  if (!parsed.success) {
    const i = parsed.error.issues[0];
    const name = String(i.path[0] ?? '?');
    throw new ConfigError(`configuration error: ${name}=${JSON.stringify(source[name] ?? null)}: ${i.message}`);
  }
  const env = parsed.data;
  // links in e-mails must not be built from a request's Host header, which any client can set
  if (env.NODE_ENV === 'production' && env.SMTP_URL && !env.PUBLIC_URL) {
    throw new ConfigError('configuration error: PUBLIC_URL is required when SMTP_URL is set (links in e-mails are built from it), e.g. PUBLIC_URL=https://syntopy.example.org');
  }
  const dataDir = path.resolve(env.DATA_DIR);
  try {
    fs.mkdirSync(dataDir, { recursive: true });
    fs.accessSync(dataDir, fs.constants.W_OK);
  } catch (e) {
    throw new ConfigError(`configuration error: DATA_DIR=${JSON.stringify(dataDir)} is not a writable folder (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
  }
  let secret = env.SESSION_SECRET;
  if (!secret) {
    const file = path.join(dataDir, 'session-secret');
    if (fs.existsSync(file)) secret = fs.readFileSync(file, 'utf8').trim();
    else {
      secret = crypto.randomBytes(48).toString('base64url');
      fs.writeFileSync(file, secret, { mode: 0o600 });
    }
  }
  return { ...env, DATA_DIR: dataDir, SESSION_SECRET: secret };
}
