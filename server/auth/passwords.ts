import bcrypt from 'bcryptjs';

/** bcrypt work factor: 10 (OWASP Password Storage Cheat Sheet minimum for bcrypt); 4 in tests for speed. */
const ROUNDS = process.env.NODE_ENV === 'test' ? 4 : 10;

/**
 * bcryptjs runs on the main thread (in slices); at most two hashes run at once and the rest wait in order,
 * so a burst of sign-ins is answered one after another instead of all together at the end, and every other
 * request keeps being served in between.
 */
const MAX_ACTIVE = 2;
let active = 0;
const waiting: (() => void)[] = [];
async function limited<T>(work: () => Promise<T>): Promise<T> {
  if (active >= MAX_ACTIVE) await new Promise<void>((r) => waiting.push(r));
  active++;
  try {
    return await work();
  } finally {
    active--;
    waiting.shift()?.();
  }
}

export const hashPassword = (pw: string) => limited(() => bcrypt.hash(pw, ROUNDS));
export const verifyPassword = (pw: string, hash: string | null | undefined) => limited(() => (hash ? bcrypt.compare(pw, hash) : Promise.resolve(false)));
/**
 * A fixed hash compared against when the e-mail is unknown, so timing does not reveal which accounts exist
 * (same cost as real hashes).
 */
export const DUMMY_HASH = bcrypt.hashSync('no-such-user-password', ROUNDS);
