/**
 * Sign-in throttling on the `login_attempts` table. Failures are counted per (account, client address) and per
 * client address; reaching either limit within the window answers 429 with one generic message (it does not
 * say which limit tripped or whether the account exists). There is deliberately no per-account limit across
 * addresses: a stranger's failures from their address never stop the owner signing in from another one, so
 * nobody can lock an account they do not control. Guessing one password from many addresses stays bounded by
 * the per-address limit and the bcrypt cost of every attempt.
 * Limits: common practice (OWASP Authentication Cheat Sheet, "Login Throttling"; values chosen by us).
 * The client address is `req.ip`: the socket's peer, or with TRUST_PROXY=1 the address the one trusted proxy
 * saw (server/app.ts), so a client cannot pick its own address with X-Forwarded-For.
 */
import { and, eq, gte, lt, sql } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { loginAttempts } from '../db/schema.js';

export const THROTTLE = { windowMinutes: 15, perAccountAndAddress: 5, perAddress: 30 };
export const THROTTLED_MESSAGE = 'too many failed sign-in attempts; wait 15 minutes and try again';

/** The row keys of one attempt (exported for tests that age rows). */
export const throttleKeys = (email: string, ip: string) => ({ account: `account:${email.trim().toLowerCase()} from:${ip}`, address: `ip:${ip}` });

function since(now: Date) {
  return new Date(now.getTime() - THROTTLE.windowMinutes * 60_000).toISOString();
}

function count(db: Db, key: string, from: string) {
  return db
    .select({ n: sql<number>`count(*)` })
    .from(loginAttempts)
    .where(and(eq(loginAttempts.key, key), gte(loginAttempts.at, from)))
    .get()!.n;
}

export function isThrottled(db: Db, email: string, ip: string, now = new Date()): boolean {
  const k = throttleKeys(email, ip);
  const from = since(now);
  return count(db, k.account, from) >= THROTTLE.perAccountAndAddress || count(db, k.address, from) >= THROTTLE.perAddress;
}

export function recordFailure(db: Db, email: string, ip: string, now = new Date()) {
  const k = throttleKeys(email, ip);
  const at = now.toISOString();
  db.transaction((tx) => {
    tx.insert(loginAttempts).values([{ key: k.account, at }, { key: k.address, at }]).run();
    // keep the table small: drop rows older than the window
    tx.delete(loginAttempts).where(lt(loginAttempts.at, since(now))).run();
  });
}

/** A successful sign-in forgets that account's failures from this address (the address count stays). */
export function clearFailures(db: Db, email: string, ip: string) {
  db.delete(loginAttempts).where(eq(loginAttempts.key, throttleKeys(email, ip).account)).run();
}
