import bcrypt from 'bcryptjs';

const ROUNDS = process.env.NODE_ENV === 'test' ? 4 : 11;
export const hashPassword = (pw: string) => bcrypt.hash(pw, ROUNDS);
export const verifyPassword = (pw: string, hash: string | null | undefined) => (hash ? bcrypt.compare(pw, hash) : Promise.resolve(false));
/**
 * A fixed hash compared against when the e-mail is unknown, so timing does not reveal which accounts exist
 * (same cost as real hashes).
 */
export const DUMMY_HASH = bcrypt.hashSync('no-such-user-password', ROUNDS);
