/**
 * Sign-in throttling on the `login_attempts` table: failures are recorded per e-mail and per client IP;
 * more than the limit within the window answers 429 with one generic message (it does not say which key
 * tripped or whether the account exists). Limits: common practice (OWASP Authentication Cheat Sheet
 * suggests lockout/throttle after a small number of failures; values chosen by us).
 */
import { and, eq, gte, lt, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { loginAttempts } from '../db/schema.js';

export const THROTTLE = { windowMinutes: 15, perEmail: 5, perIp: 30 };
export const THROTTLED_MESSAGE = 'too many failed sign-in attempts; wait 15 minutes and try again';

const keys = (email: string, ip: string) => ({ email: `email:${email.toLowerCase()}`, ip: `ip:${ip}` });

function since(now: Date) {
  return new Date(now.getTime() - THROTTLE.windowMinutes * 60_000).toISOString();
}

function count(ctx: AppContext, key: string, from: string) {
  return ctx.db
    .select({ n: sql<number>`count(*)` })
    .from(loginAttempts)
    .where(and(eq(loginAttempts.key, key), gte(loginAttempts.at, from)))
    .get()!.n;
}

export function isThrottled(ctx: AppContext, email: string, ip: string, now = new Date()): boolean {
  const k = keys(email, ip);
  const from = since(now);
  return count(ctx, k.email, from) >= THROTTLE.perEmail || count(ctx, k.ip, from) >= THROTTLE.perIp;
}

export function recordFailure(ctx: AppContext, email: string, ip: string, now = new Date()) {
  const k = keys(email, ip);
  const at = now.toISOString();
  ctx.db.transaction((tx) => {
    tx.insert(loginAttempts).values([{ key: k.email, at }, { key: k.ip, at }]).run();
    // keep the table small: drop rows older than the window
    tx.delete(loginAttempts).where(lt(loginAttempts.at, since(now))).run();
  });
}

/** A successful sign-in forgets that e-mail's failures (the IP count stays). */
export function clearFailures(ctx: AppContext, email: string) {
  ctx.db.delete(loginAttempts).where(eq(loginAttempts.key, keys(email, '').email)).run();
}
