/** Small zod pieces shared by several resource schemas (owned by H2; others may import). */
import { z } from 'zod';

/** A positive integer id from a URL segment or JSON body ("12" or 12). */
export const IdParam = z.coerce.number({ message: 'expected a numeric id' }).int('expected a whole-number id').positive('expected a positive id');
export const Id = z.number().int().positive();
export const IsoDate = z.string();
export const OkResponse = z.object({ ok: z.literal(true) });
export type OkResponse = z.infer<typeof OkResponse>;
export const Name = (what: string, max = 120) => z.string({ message: `enter a ${what}` }).trim().min(1, `enter a ${what}`).max(max, `a ${what} has at most ${max} characters`);
