/**
 * How numbers are written for people, in one place (tables, plots, reports, sentences, the `analyze` table).
 * Rules: undefined values (null, NaN, ±Infinity) print as "—"; a value that rounds to zero prints without a
 * sign ("0.000", never "-0.000"); p-values read "p = 0.032" or "p < 0.001" in sentences and "0.032" or
 * "< 0.001" in a column headed p. CSV and JSON keep full precision and do not use these.
 */

/** What kind of number a value is, which decides how it is written. */
export type NumberKind = 'coefficient' | 'fraction' | 'pValue' | 'count' | 'statistic' | 'intensity';

export const MISSING = '—';

const finite = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v);

/** Drops the sign of a printed zero: "-0.000" → "0.000", "-0" → "0" (also "-0.0e+0"). */
function unsignedZero(s: string): string {
  return /^-0(?:\.0*)?(?:e[+-]?\d+)?$/i.test(s) ? s.slice(1) : s;
}

/** Fixed decimals, no negative zero; "—" for an undefined value. */
export function formatFixed(v: number | null | undefined, digits = 3): string {
  if (!finite(v)) return MISSING;
  return unsignedZero(v.toFixed(digits));
}

/**
 * A number whose size is not known in advance (test statistics, intensities, differences): 3 decimals below 10,
 * 1 decimal below 1000, scientific notation (3 significant digits) beyond, or below 0.001 in magnitude.
 */
export function formatMagnitude(v: number | null | undefined): string {
  if (!finite(v)) return MISSING;
  const a = Math.abs(v);
  if (a === 0) return '0';
  if (a >= 1000 || a < 0.001) return unsignedZero(v.toExponential(2));
  return unsignedZero(a >= 10 ? v.toFixed(1) : v.toFixed(3));
}

/** An axis tick (a "nice" value from a scale): shortest exact form, no floating-point noise, no "-0". */
export function formatTick(t: number): string {
  if (!Number.isFinite(t)) return MISSING;
  return unsignedZero(String(Number(t.toPrecision(12))));
}

/** A p-value in a column headed p: "0.032", "< 0.001", "—". */
export function formatPValue(p: number | null | undefined): string {
  if (!finite(p)) return MISSING;
  return p < 0.001 ? '< 0.001' : formatFixed(p, 3);
}

/** A p-value in running text: "p = 0.032", "p < 0.001", "p not defined". */
export function formatP(p: number | null | undefined): string {
  if (!finite(p)) return 'p not defined';
  return p < 0.001 ? 'p < 0.001' : `p = ${formatFixed(p, 3)}`;
}

/** An intensity or other measured quantity: 0 decimals from 1000, 1 from 10, else 3; no negative zero. */
export function formatIntensity(v: number | null | undefined): string {
  if (!finite(v)) return MISSING;
  const a = Math.abs(v);
  return formatFixed(v, a >= 1000 ? 0 : a >= 10 ? 1 : 3);
}

/** A count ("1234"); "—" when undefined. */
export function formatCount(v: number | null | undefined): string {
  return finite(v) ? String(Math.round(v)) : MISSING;
}

/** A value of the given kind, as tables show it. */
export function formatNumber(v: number | null | undefined, kind: NumberKind): string {
  switch (kind) {
    case 'coefficient':
    case 'fraction':
      return formatFixed(v, 3);
    case 'pValue':
      return formatPValue(v);
    case 'count':
      return formatCount(v);
    case 'statistic':
      return formatMagnitude(v);
    case 'intensity':
      return formatIntensity(v);
  }
}
