/**
 * Numbers for people are written in one place (shared/format.ts): a value that rounds to zero has no sign, and
 * p-values have one wording ("p = 0.032", "p < 0.001"; "0.032", "< 0.001" in a p column).
 */
import { describe, expect, it } from 'vitest';
import { formatFixed, formatMagnitude, formatNumber, formatP, formatPValue, formatTick, formatIntensity } from '../../shared/format/number.js';
import { formatCoefficient } from '../../shared/coefficients.js';
import { formatColumn } from '../../shared/schemas/cell-table.js';

describe('number formatting', () => {
  it('never prints a negative zero', () => {
    for (const v of [-0, -0.0001, -0.0004999, -1e-12]) {
      expect(formatFixed(v, 3)).toBe('0.000');
      expect(formatCoefficient('pearson', v)).toBe('0.000');
      expect(formatColumn('spearman', v)).toBe('0.000');
      expect(formatIntensity(v)).toBe('0.000');
      expect(formatFixed(v, 0)).toBe('0');
      expect(formatTick(v)).not.toMatch(/^-0$/);
    }
    expect(formatTick(-0)).toBe('0');
    expect(formatMagnitude(-0)).toBe('0');
    expect(formatColumn('threshold1', -0.2)).toBe('-0.200');
    expect(formatFixed(-0.0005, 3)).toBe('-0.001'); // toFixed rounds half away from zero here: a real negative value keeps its sign
    expect(formatFixed(-0.5, 3)).toBe('-0.500');
  });

  it('writes undefined values as "—"', () => {
    for (const v of [null, undefined, Number.NaN, Infinity]) {
      expect(formatFixed(v, 3)).toBe('—');
      expect(formatMagnitude(v)).toBe('—');
      expect(formatPValue(v)).toBe('—');
    }
    expect(formatP(null)).toBe('p not defined');
  });

  it('has one p-value wording', () => {
    expect(formatP(0.0321)).toBe('p = 0.032');
    expect(formatP(0.0009)).toBe('p < 0.001');
    expect(formatP(0.001)).toBe('p = 0.001');
    expect(formatPValue(0.0321)).toBe('0.032');
    expect(formatPValue(1e-9)).toBe('< 0.001');
    expect(formatCoefficient('dcorPValue', 2e-5)).toBe('< 0.001');
    expect(formatCoefficient('randomizationP', 0.25)).toBe('0.250');
  });

  it('sizes statistics, intensities, counts and ticks sensibly', () => {
    expect(formatMagnitude(4.093122)).toBe('4.093');
    expect(formatMagnitude(123.456)).toBe('123.5');
    expect(formatMagnitude(12345)).toBe('1.23e+4');
    expect(formatMagnitude(-0.00001234)).toBe('-1.23e-5');
    expect(formatIntensity(1234.6)).toBe('1235');
    expect(formatIntensity(56.78)).toBe('56.8');
    expect(formatNumber(1234, 'count')).toBe('1234');
    expect(formatTick(0.30000000000000004)).toBe('0.3');
    expect(formatTick(-0.2)).toBe('-0.2');
  });
});
