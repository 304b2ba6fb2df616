/** Small zod pieces shared by several resource schemas. */
import { z } from 'zod';

/**
 * A positive integer id from a URL segment: plain decimal digits, no sign, no leading zero, no blanks, no
 * exponent, at most Number.MAX_SAFE_INTEGER ("12" → 12; "12abc", "-1", "0", "1e3", " 7", "9007199254740993"
 * refused). The one parser of every :id-like path parameter (server/routes/_params.ts idParam).
 */
const ID_DIGITS = /^[1-9][0-9]{0,15}$/;
export const IdParam = z
  .string({ error: (iss) => `expected a positive whole-number id, got ${JSON.stringify(iss.input ?? null)}` })
  .refine((s) => ID_DIGITS.test(s) && Number.isSafeInteger(Number(s)), {
    error: (iss) => `expected a positive whole-number id, got ${JSON.stringify(iss.input)}`,
  })
  .transform(Number);
/** A token from an e-mailed link (a share link or an invitation), as it appears in the path. */
export const LinkToken = z.string().min(1);
export const Id = z.number().int().positive();
export const IsoDate = z.string();
export const OkResponse = z.object({ ok: z.literal(true) });
export type OkResponse = z.infer<typeof OkResponse>;
/** Every 4xx/5xx answer of the API (server/http/errors.ts): a message, and per-field issues for a refused request. */
export const ErrorResponse = z.object({ error: z.string(), issues: z.array(z.object({ path: z.string(), message: z.string() })).optional() });
export const Name = (what: string, max = 120) => z.string({ message: `enter a ${what}` }).trim().min(1, `enter a ${what}`).max(max, `a ${what} has at most ${max} characters`);

/**
 * A number typed into a box (client forms): plain decimal text (an exponent is allowed), finite, within
 * [min, max] (an end is left open with `minExclusive` / `maxExclusive`), whole when `integer` (and a safe
 * integer: beyond 2^53 whole numbers are no longer exact in JavaScript); each refusal
 * quotes the text received. `what` names the box in messages.
 */
export type NumberTextBounds = { min?: number; max?: number; minExclusive?: boolean; maxExclusive?: boolean; integer?: boolean };
export function NumberText(what: string, opts: NumberTextBounds = {}) {
  const { min, max, minExclusive, maxExclusive, integer } = opts;
  const lower = min === undefined ? '' : minExclusive ? `greater than ${min}` : `at least ${min}`;
  const upper = max === undefined ? '' : maxExclusive ? `less than ${max}` : `at most ${max}`;
  const range =
    min !== undefined && max !== undefined && !minExclusive && !maxExclusive ? `between ${min} and ${max}` : [lower, upper].filter(Boolean).join(' and ');
  return z.string().transform((text, ctx) => {
    const t = text.trim();
    const n = Number(t);
    const fail = (m: string) => {
      ctx.addIssue({ code: 'custom', message: `${what} ${m}, got ${JSON.stringify(text)}` });
      return z.NEVER;
    };
    if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(t) || !Number.isFinite(n)) return fail(`must be a number${range ? ` ${range}` : ''}`);
    if (integer && !Number.isSafeInteger(n)) return fail('must be a whole number');
    const below = min !== undefined && (minExclusive ? n <= min : n < min);
    const above = max !== undefined && (maxExclusive ? n >= max : n > max);
    if (below || above) return fail(`must be ${range}`);
    return n;
  });
}

/**
 * NumberText with the bounds of a shared zod number schema (its minValue, maxValue and whole-number rule; an
 * end the schema itself refuses, as in `.positive()`, is open), so a box refuses exactly what the request it
 * feeds would refuse, with a message quoting the text.
 */
export function NumberTextFor(what: string, schema: z.ZodNumber | z.ZodCoercedNumber) {
  // zod's .int() implies the safe-integer range, which NumberText's whole-number rule already checks
  const implied = (v: number | null) => v === null || !Number.isFinite(v) || (schema.isInt && Math.abs(v) === Number.MAX_SAFE_INTEGER);
  const lo = schema.minValue, hi = schema.maxValue;
  const min = implied(lo) ? undefined : lo!;
  const max = implied(hi) ? undefined : hi!;
  return NumberText(what, {
    min,
    max,
    minExclusive: min !== undefined && !schema.safeParse(min).success,
    maxExclusive: max !== undefined && !schema.safeParse(max).success,
    integer: schema.isInt,
  });
}

/** Checks box text with a NumberText schema: the number, or the first message. */
export function readNumberText(schema: ReturnType<typeof NumberText>, text: string): { value: number; error: null } | { value: null; error: string } {
  const r = schema.safeParse(text);
  return r.success ? { value: r.data, error: null } : { value: null, error: r.error.issues[0].message };
}
