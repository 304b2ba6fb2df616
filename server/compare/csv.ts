/**
 * CSV per RFC 4180 (Shafranovich 2005, doi:10.17487/RFC4180): CRLF line breaks, a header line, fields
 * containing a comma, double quote, CR or LF enclosed in double quotes with inner quotes doubled.
 * Text fields that begin with = + - @ (tab or CR) get a leading apostrophe so a spreadsheet does not run
 * them as formulas (OWASP "CSV Injection" guidance; common practice). Numbers are written in full
 * precision; null is an empty field.
 */
export function csvField(v: unknown): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  if (typeof v === 'boolean') return v ? 'true' : 'false';
  let s = String(v);
  if (/^[=+\-@\t\r]/.test(s)) s = `'${s}`;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export const csvLine = (values: unknown[]) => values.map(csvField).join(',') + '\r\n';

export function toCsv(header: string[], rows: unknown[][]): string {
  return csvLine(header) + rows.map(csvLine).join('');
}

/** A safe file name part: letters, digits, dash and underscore. */
export const fileSafe = (s: string) => s.replace(/[^A-Za-z0-9_-]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 60) || 'study';
