/** Small zod pieces shared by several resource schemas (owned by H2; others may import). */
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
export const Id = z.number().int().positive();
export const IsoDate = z.string();
export const OkResponse = z.object({ ok: z.literal(true) });
export type OkResponse = z.infer<typeof OkResponse>;
export const Name = (what: string, max = 120) => z.string({ message: `enter a ${what}` }).trim().min(1, `enter a ${what}`).max(max, `a ${what} has at most ${max} characters`);
