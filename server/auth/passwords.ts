import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import bcrypt from 'bcryptjs';
import { Piscina } from 'piscina';
import type { PasswordTask } from './password-worker.js';

/** bcrypt work factor: 10 (OWASP Password Storage Cheat Sheet minimum for bcrypt); 4 in tests for speed. */
const ROUNDS = process.env.NODE_ENV === 'test' ? 4 : 10;

/**
 * Hashing runs in worker threads (password-worker.ts): one fewer than the machine's cores, at least one, at most
 * two, so a burst of sign-ins queues there in order while the event loop keeps serving every other request.
 * Threads start on demand and end after 30 s idle (they do not keep the process alive).
 */
const WORKER_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'password-worker.ts');
let pool: Piscina | undefined;
function run<T>(task: PasswordTask): Promise<T> {
  pool ??= new Piscina({
    filename: WORKER_FILE,
    execArgv: ['--import', 'tsx'],
    minThreads: 0,
    maxThreads: Math.max(1, Math.min(2, os.availableParallelism() - 1)),
    idleTimeout: 30_000,
  });
  return pool.run(task) as Promise<T>;
}

export const hashPassword = (password: string) => run<string>({ op: 'hash', password, rounds: ROUNDS });
/**
 * A fixed hash compared against when the e-mail is unknown, so timing does not reveal which accounts exist
 * (same cost as real hashes).
 */
export const DUMMY_HASH = bcrypt.hashSync('no-such-user-password', ROUNDS);
/** An account without a password is checked against DUMMY_HASH (same time) and never matches. */
export const verifyPassword = async (password: string, hash: string | null | undefined) => (await run<boolean>({ op: 'verify', password, hash: hash || DUMMY_HASH })) && !!hash;
