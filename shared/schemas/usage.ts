/**
 * Facility usage for facility managers: per lab and calendar month (UTC), what the lab's studies gained and
 * used. GET /api/usage and GET /api/usage.csv (the same rows). Counting rules: server/routes/usage.ts.
 */
import { z } from 'zod';

const MONTH = /^(\d{4})-(0[1-9]|1[0-2])$/;
const Month = z.string().regex(MONTH, { error: (iss) => `expected a month as YYYY-MM, got ${JSON.stringify(iss.input)}` });
export const MAX_USAGE_MONTHS = 36;

/** Months between two YYYY-MM values, both included (from ≤ to). */
export function monthsBetween(from: string, to: string): string[] {
  const out: string[] = [];
  let [y, m] = from.split('-').map(Number);
  const [ty, tm] = to.split('-').map(Number);
  while (y < ty || (y === ty && m <= tm)) {
    out.push(`${y}-${String(m).padStart(2, '0')}`);
    m++;
    if (m === 13) (m = 1), y++;
  }
  return out;
}

export const UsageQuery = z
  .object({ from: Month.optional(), to: Month.optional() })
  .refine((q) => !q.from || !q.to || q.from <= q.to, { error: (iss) => `from (${(iss.input as { from: string }).from}) must not be after to (${(iss.input as { to: string }).to})`, path: ['from'] })
  .refine((q) => !q.from || !q.to || monthsBetween(q.from, q.to).length <= MAX_USAGE_MONTHS, { error: `at most ${MAX_USAGE_MONTHS} months at once`, path: ['to'] });
export type UsageQuery = z.infer<typeof UsageQuery>;

export const UsageRow = z.object({
  labId: z.number().int(),
  lab: z.string(),
  /** YYYY-MM (UTC) */
  month: z.string(),
  /** studies created in the month */
  studies: z.number().int(),
  /** fields uploaded in the month (still stored) */
  fields: z.number().int(),
  /** bytes of image files those fields brought (a file shared by two fields counts for each) */
  storedBytes: z.number().int(),
  /** runs started in the month */
  runs: z.number().int(),
  /** wall-clock seconds from a run's start to its end, for the runs started in the month that ended */
  computeSeconds: z.number(),
  /** people who changed something in the lab's studies or started a run there in the month */
  activeUsers: z.number().int(),
});
export type UsageRow = z.infer<typeof UsageRow>;

export const UsageResponse = z.object({ from: z.string(), to: z.string(), rows: z.array(UsageRow) });
export type UsageResponse = z.infer<typeof UsageResponse>;

export const USAGE_CSV_COLUMNS = ['labId', 'lab', 'month', 'studies', 'fields', 'storedBytes', 'runs', 'computeSeconds', 'activeUsers'] as const;
