/**
 * "Find cells…" in the field's scale (src/features/workspace/lib/findCells.ts): µm² / µm ↔ pixels, the
 * defaults for cells at a known pixel size, refusals that quote the value, and the preview summary.
 * Conversions are checked by arithmetic (area scales with the square of the pixel size); the defaults are our
 * stated choice (common practice).
 */
import { describe, expect, it } from 'vitest';
import { CELL_DEFAULTS_PX, CELL_DEFAULTS_UM, areaToPixels, defaultsFor, lengthToPixels, pixelsToArea, previewSummary, requestFor } from '../../src/features/workspace/lib/findCells';
import { AutoOutlineRequest } from '../../shared/schemas/cells';

const um = { pixelSizeUm: 0.065 };
const px = { pixelSizeUm: null };
const choice = { channel: 'sum' as const, level: null, smoothing: 1, split: true, seedDistance: 8, minArea: 40, maxArea: 4000, replace: true };

describe('scale', () => {
  it('areas go with the square of the pixel size, lengths with the pixel size; round trips agree', () => {
    expect(areaToPixels(40, um)).toBe(9467); // 40 / 0.004225 = 9467.46
    expect(pixelsToArea(9467, um)).toBeCloseTo(9467 * 0.004225, 12);
    expect(lengthToPixels(8, um)).toBeCloseTo(123.0769230769, 9);
    expect(areaToPixels(37, px)).toBe(37);
    expect(areaToPixels(0.0001, um)).toBe(1); // never below one pixel
    for (const a of [1, 12.5, 300, 2000]) expect(Math.abs(pixelsToArea(areaToPixels(a, um), um) - a)).toBeLessThanOrEqual(0.5 * 0.004225);
  });

  it('defaults: cells at a known scale in µm², pixels otherwise', () => {
    expect(defaultsFor(um)).toEqual({ minArea: CELL_DEFAULTS_UM.minAreaUm2, maxArea: CELL_DEFAULTS_UM.maxAreaUm2, smoothing: 1, seedDistance: 8 });
    expect(defaultsFor(px)).toEqual({ minArea: CELL_DEFAULTS_PX.minPixels, maxArea: null, smoothing: 2, seedDistance: 10 });
    // at 0.065 µm per pixel the puncta (67 to 364 pixels, 0.28 to 1.54 µm²) are far below the smallest cell
    expect(areaToPixels(CELL_DEFAULTS_UM.minAreaUm2, um)).toBeGreaterThan(364 * 20);
  });
});

describe('request', () => {
  it('carries pixels the server schema accepts', () => {
    const { body, error } = requestFor(choice, um, 1024 * 1024);
    expect(error).toBeNull();
    const parsed = AutoOutlineRequest.parse(body);
    expect(parsed).toMatchObject({ minPixels: 9467, maxPixels: 946746, split: true, threshold: { method: 'otsu' } });
    expect(parsed.smoothing).toBeCloseTo(15.3846, 3);
  });

  it('a largest cell beyond the field means no limit; a largest below the smallest is refused, quoting both', () => {
    expect(requestFor({ ...choice, maxArea: 100000 }, um, 1024 * 1024).body.maxPixels).toBeNull();
    expect(requestFor({ ...choice, minArea: 50, maxArea: 20 }, um, 1024 * 1024).error).toBe('the largest cell (20 µm²) is smaller than the smallest (50 µm²)');
  });

  it('a seed distance or smoothing beyond the server bounds in pixels is refused with the value in pixels', () => {
    const tiny = { pixelSizeUm: 0.01 };
    expect(requestFor(choice, tiny, 1e6).error).toBe('the least distance between cell centres is 800 pixels here; it must be from 1 to 500 pixels');
    expect(requestFor({ ...choice, seedDistance: 4, smoothing: 3 }, tiny, 1e6).error).toBe('smoothing of 300 pixels is more than 200 pixels');
    expect(requestFor({ ...choice, split: false, seedDistance: 99999 }, px, 1e6).error).toBeNull();
  });
});

describe('preview summary', () => {
  it('count, smallest, median and largest in the shown unit; nothing found → null', () => {
    expect(previewSummary([{ pixels: 400 }, { pixels: 100 }, { pixels: 200 }], px)).toEqual({ count: 3, smallest: 100, median: 200, largest: 400 });
    const s = previewSummary([{ pixels: 400 }, { pixels: 100 }], um)!;
    expect(s.median).toBeCloseTo(250 * 0.004225, 12);
    expect(previewSummary([], um)).toBeNull();
  });
});
