import { expect, it } from 'vitest';
import { fmtCoef } from '../../src/features/workspace/components/LivePreview';

it('shows coefficients with three decimals, "—" for undefined values, and no negative zero', () => {
  expect(fmtCoef(0.12345)).toBe('0.123');
  expect(fmtCoef(-0.5)).toBe('-0.500');
  expect(fmtCoef(-0.0001)).toBe('0.000');
  expect(fmtCoef(-0)).toBe('0.000');
  expect(fmtCoef(null)).toBe('—');
  expect(fmtCoef(Number.NaN)).toBe('—');
});
