/**
 * The one date format (shared/format/datetime.ts) and the one plural helper (shared/format/plural.ts).
 */
import { describe, expect, it } from 'vitest';
import { formatDateTime } from '../../shared/format/datetime';
import { noun, plural } from '../../shared/format/plural';

describe('formatDateTime', () => {
  it('shows UTC calendar date and 24-hour time and says UTC', () => {
    expect(formatDateTime('2026-12-02T14:05:59.999Z')).toBe('2026-12-02 14:05 UTC');
    expect(formatDateTime('2026-01-09T03:07:00Z')).toBe('2026-01-09 03:07 UTC');
    expect(formatDateTime(new Date(Date.UTC(2027, 0, 1, 0, 0)))).toBe('2027-01-01 00:00 UTC');
  });
  it('converts other offsets to UTC (the same moment reads the same everywhere)', () => {
    expect(formatDateTime('2026-12-02T23:30:00+02:00')).toBe('2026-12-02 21:30 UTC');
    expect(formatDateTime('2026-12-02T23:30:00-05:00')).toBe('2026-12-03 04:30 UTC');
  });
  it('does not depend on the machine time zone', () => {
    const tz = process.env.TZ;
    try {
      process.env.TZ = 'Pacific/Kiritimati';
      expect(formatDateTime('2026-12-02T14:05:00Z')).toBe('2026-12-02 14:05 UTC');
    } finally {
      process.env.TZ = tz;
    }
  });
  it('no moment yet → "—"', () => {
    expect(formatDateTime(null)).toBe('—');
    expect(formatDateTime(undefined)).toBe('—');
  });
  it('refuses text without a time zone or that is no date, quoting it', () => {
    expect(() => formatDateTime('2026-12-02 14:05:00')).toThrow(/not a timestamp with a time zone: "2026-12-02 14:05:00"/);
    expect(() => formatDateTime('soon')).toThrow(/"soon"/);
    expect(() => formatDateTime('2026-13-45T00:00:00Z')).toThrow(/"2026-13-45T00:00:00Z"/);
    expect(() => formatDateTime(new Date(NaN))).toThrow(/not a timestamp/);
  });
});

describe('plural', () => {
  it('singular for exactly one, plural otherwise (including zero)', () => {
    expect(plural(1, 'cell')).toBe('1 cell');
    expect(plural(2, 'cell')).toBe('2 cells');
    expect(plural(0, 'cell')).toBe('0 cells');
    expect(plural(1, 'study', 'studies')).toBe('1 study');
    expect(plural(3, 'study', 'studies')).toBe('3 studies');
  });
  it('groups thousands', () => expect(plural(1048576, 'pixel')).toBe('1,048,576 pixels'));
  it('noun gives the word alone, for "run #5" and "runs #5, #6"', () => {
    expect(`${noun(1, 'run')} #5`).toBe('run #5');
    expect(`${noun(2, 'run')} #5, #6`).toBe('runs #5, #6');
  });
  it('refuses a count that is not a number', () => {
    expect(() => plural(NaN, 'cell')).toThrow(/got NaN/);
  });
});
