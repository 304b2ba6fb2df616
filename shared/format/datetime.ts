/**
 * The one way a date is shown to people, in the app and in e-mails: `2026-12-02 14:05 UTC` (ISO 8601 calendar
 * date and 24-hour time, ISO 8601:2019, always in UTC and always saying so). Stored timestamps are ISO-8601 UTC
 * text; showing them in UTC everywhere keeps a date in an e-mail, a report and the screen the same for every
 * reader in every time zone.
 */

/** An ISO-8601 timestamp must name its offset (Z or ±hh:mm); a bare local time would be read differently per machine. */
const HAS_ZONE = /(Z|[+-]\d\d:?\d\d)$/i;

/** `2026-12-02 14:05 UTC`; null/undefined (no such moment yet) → "—". Throws on text that is not a zoned timestamp. */
export function formatDateTime(value: string | Date | null | undefined): string {
  if (value === null || value === undefined) return '—';
  const d = typeof value === 'string' ? (HAS_ZONE.test(value.trim()) ? new Date(value) : null) : value;
  if (!d || Number.isNaN(d.getTime())) throw new RangeError(`not a timestamp with a time zone: ${JSON.stringify(value)}`);
  const p = (n: number) => String(n).padStart(2, '0');
  return `${d.getUTCFullYear()}-${p(d.getUTCMonth() + 1)}-${p(d.getUTCDate())} ${p(d.getUTCHours())}:${p(d.getUTCMinutes())} UTC`;
}
