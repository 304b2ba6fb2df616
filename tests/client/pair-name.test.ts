/** A pair of single-channel files is named after both files: their shared part, else both names. (common practice) */
import { describe, expect, it } from 'vitest';
import { pairName } from '../../src/features/fields/lib/pairName';

describe('pairName', () => {
  it('keeps what both names share, without the separators around the channel part', () => {
    expect(pairName('cell3_ch1.tif', 'cell3_ch2.tif')).toBe('cell3');
    expect(pairName('field 12 - GFP.ome.tif', 'field 12 - mCherry.ome.tif')).toBe('field 12');
    expect(pairName('c07_ch1_z0.tif', 'c07_ch2_z0.tif')).toBe('c07_z0');
    expect(pairName('same.tif', 'same.tiff')).toBe('same');
  });
  it('names both files when they share too little', () => {
    expect(pairName('gfp.tif', 'rfp.tif')).toBe('gfp + rfp');
    expect(pairName('a1.tif', 'b1.tif')).toBe('a1 + b1');
    expect(pairName('x_ch1.tif', 'x_ch2.tif')).toBe('x_ch1 + x_ch2');
  });
  it('is the same either way round when the names share a start', () => {
    expect(pairName('cell3_ch2.tif', 'cell3_ch1.tif')).toBe(pairName('cell3_ch1.tif', 'cell3_ch2.tif'));
  });
});
