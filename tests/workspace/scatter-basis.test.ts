/**
 * The Pixel scatter's default thresholds describe the cells (issue 19 item 1): Otsu over the outlined cells'
 * pixels (the selected cell's, or the whole field before any cell is outlined), pixels saturated in either
 * channel left out; and every saturated pixel is marked on the scatter. Reference values: scikit-image's
 * threshold_otsu over the same pixel sets (tests/fixtures/workspace/generate.py, expected.json).
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { defaultThresholds, describeBasis, saturatedMarks } from '../../src/features/workspace/lib/scatterBasis';
import { prepareRegion, scatter } from '../../src/features/workspace/lib/scatterCore';
import { cellIndices, cellsMask, type CellGeometry } from '../../shared/schemas/cells';
import { encodeRuns } from '../../shared/analysis/rle';

const DIR = path.join(import.meta.dirname, '../fixtures/workspace');
const ref = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8'));
const read = (f: string) => {
  const b = fs.readFileSync(path.join(DIR, f));
  return new Uint16Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
};
const img = { width: ref.width as number, height: ref.height as number, ch1: read('ch1.bin'), ch2: read('ch2.bin'), saturationLevel: ref.saturationLevel as number };
const cells: CellGeometry[] = ref.cells.map((c: { x: number; y: number; width: number; height: number }) => ({ kind: 'rect', ...c }));

describe('default thresholds (scikit-image threshold_otsu on the same pixels)', () => {
  it('whole field with outlined cells: over the union of the cells, saturated pixels left out', () => {
    const d = defaultThresholds(img, null, cells);
    expect([d.t1, d.t2]).toEqual(ref.cells_union.otsu);
    expect(d.basis).toEqual({ over: 'cells', cells: 3, pixels: ref.cells_union.pixels, saturatedLeftOut: ref.cells_union.saturatedLeftOut });
  });

  it('a selected cell: over its own pixels, saturated pixels left out', () => {
    const d = defaultThresholds(img, cellIndices(cells[0], img.width, img.height), cells);
    expect([d.t1, d.t2]).toEqual(ref.cell0.otsu);
    expect(d.basis).toEqual({ over: 'region', cells: 0, pixels: ref.cell0.pixels, saturatedLeftOut: ref.cell0.saturatedLeftOut });
  });

  it('whole field before any cell is outlined: every pixel but the saturated ones', () => {
    const d = defaultThresholds(img, null, []);
    expect([d.t1, d.t2]).toEqual(ref.field.otsu);
    expect(d.basis).toEqual({ over: 'field', cells: 0, pixels: ref.field.pixels, saturatedLeftOut: ref.field.saturatedLeftOut });
    // and they differ from Otsu over every pixel with the debris (scikit-image, "plain")
    expect([d.t1, d.t2]).not.toEqual(ref.plain.otsu);
  });

  it('a bigger saturated speck outside the cells leaves the defaults unchanged (invariance, common practice)', () => {
    const ch1 = img.ch1.slice(), ch2 = img.ch2.slice();
    for (let y = 0; y < 12; y++) for (let x = 80; x < 96; x++) ch1[y * img.width + x] = ch2[y * img.width + x] = img.saturationLevel;
    const a = defaultThresholds(img, null, cells), b = defaultThresholds({ ...img, ch1, ch2 }, null, cells);
    expect([b.t1, b.t2]).toEqual([a.t1, a.t2]);
    expect(b.basis.saturatedLeftOut).toBe(a.basis.saturatedLeftOut);
  });

  it('outlines listed twice count each pixel once (identity)', () => {
    const a = defaultThresholds(img, null, cells), b = defaultThresholds(img, null, [...cells, ...cells]);
    expect([b.t1, b.t2]).toEqual([a.t1, a.t2]);
    expect(b.basis.pixels).toBe(a.basis.pixels);
  });

  it('float data has no saturation level: nothing is left out', () => {
    const f = { ...img, ch1: Float32Array.from(img.ch1), ch2: Float32Array.from(img.ch2), saturationLevel: null };
    const d = defaultThresholds(f, null, cells);
    expect(d.basis.saturatedLeftOut).toBe(0);
    expect(d.basis.pixels).toBe(ref.cells_union.pixels + ref.cells_union.saturatedLeftOut);
  });

  it('the whole-field scatter with these defaults shows cell pixels above both thresholds, not 100 % "neither"', () => {
    const r = prepareRegion(img, null, 256, cells);
    expect([r.otsu.t1, r.otsu.t2]).toEqual(ref.cells_union.otsu);
    const q = scatter(r, r.otsu.t1!, r.otsu.t2!).quadrants;
    expect(q.both).toBeGreaterThan(0);
    expect(q.neither).toBeLessThan(r.n);
  });
});

describe('the union of the outlined cells', () => {
  it('one mask for all cells holds exactly the union of each cell\'s pixels (box, ellipse, polygon, trace, label)', () => {
    const W = 60, H = 40;
    const geoms: CellGeometry[] = [
      { kind: 'rect', x: 2.3, y: 1.7, width: 20.2, height: 10.9 },
      { kind: 'ellipse', cx: 18, cy: 12, rx: 9.5, ry: 6.2 },
      { kind: 'polygon', points: [[30, 2], [55, 8], [40, 30], [33, 25]] },
      { kind: 'freehand', points: [[5, 30], [12, 22], [20, 35], [8, 39]] },
      { kind: 'label', label: 4, rle: encodeRuns(Uint32Array.from([61 * 1, 61 * 1 + 1, 1500, 1501, 1502, 2399]), W * H) },
    ];
    const want = new Set<number>();
    for (const g of geoms) for (const i of cellIndices(g, W, H)) want.add(i);
    const mask = cellsMask(geoms, W, H);
    const got = new Set<number>();
    mask.forEach((v, i) => v && got.add(i));
    expect(got).toEqual(want);
    expect(want.size).toBeLessThan(geoms.reduce((a, g) => a + cellIndices(g, W, H).length, 0)); // the outlines overlap
  });
});

describe('saturated pixels on the scatter', () => {
  it('marks every saturated pixel, the ones beyond the axes on the edge', () => {
    const r = prepareRegion(img, null, 256, cells);
    const s = r.saturatedMarks;
    // the fixture: a 6 × 6 speck saturated in both channels, one pixel per channel inside a cell
    expect({ only1: s.only1, only2: s.only2, both: s.both }).toEqual({ only1: 1, only2: 1, both: 36 });
    expect(s.only1 + s.only2 + s.both).toBe(ref.field.saturatedLeftOut);
    // 38 of 9,216 pixels are above the 99.95th percentile, so the axes reach the level: none lies beyond
    expect(r.hist.rangeX[1]).toBe(img.saturationLevel);
    expect(s.beyondAxes).toBe(0);
    expect(s.marks[255 * 256 + 255]).toBe(1); // the speck: top-right corner
    let marked = 0;
    for (const m of s.marks) marked += m;
    expect(marked).toBeGreaterThanOrEqual(2);
    expect(marked).toBeLessThanOrEqual(3);
  });

  it('pixels beyond the axis ends are counted and drawn on the edge', () => {
    const x = new Uint16Array([100, 3]), y = new Uint16Array([3, 100]);
    const s = saturatedMarks(x, y, 2, 100, 10, [0, 20], [0, 20]);
    expect({ only1: s.only1, only2: s.only2, beyondAxes: s.beyondAxes }).toEqual({ only1: 1, only2: 1, beyondAxes: 2 });
    expect([s.marks[1 * 10 + 9], s.marks[9 * 10 + 1]]).toEqual([1, 1]);
  });

  it('a level inside the axis range marks the bin of the value itself; no level marks nothing', () => {
    const x = new Uint16Array([0, 5, 10, 10]), y = new Uint16Array([0, 10, 5, 10]);
    const s = saturatedMarks(x, y, 4, 10, 10, [0, 20], [0, 20]);
    expect({ only1: s.only1, only2: s.only2, both: s.both, beyondAxes: s.beyondAxes }).toEqual({ only1: 1, only2: 1, both: 1, beyondAxes: 0 });
    expect([s.marks[2 * 10 + 5], s.marks[5 * 10 + 2], s.marks[5 * 10 + 5]]).toEqual([1, 1, 1]);
    expect(s.marks.reduce((a, b) => a + b, 0)).toBe(3);
    expect(saturatedMarks(x, y, 4, null, 10, [0, 20], [0, 20]).marks.every((m) => m === 0)).toBe(true);
  });
});

describe('the sentence on screen', () => {
  it('states what the thresholds were computed over and how many saturated pixels were left out', () => {
    expect(describeBasis({ over: 'cells', cells: 3, pixels: 2150, saturatedLeftOut: 2 })).toBe('Thresholds by Otsu (1979) over the pixels of the 3 outlined cells; 2 saturated pixels left out.');
    expect(describeBasis({ over: 'cells', cells: 1, pixels: 10, saturatedLeftOut: 1 })).toBe('Thresholds by Otsu (1979) over the pixels of the outlined cell; 1 saturated pixel left out.');
    expect(describeBasis({ over: 'region', cells: 0, pixels: 10, saturatedLeftOut: 0 })).toBe("Thresholds by Otsu (1979) over this cell's pixels; no saturated pixels to leave out.");
    expect(describeBasis({ over: 'field', cells: 0, pixels: 9178, saturatedLeftOut: 1200 })).toBe('Thresholds by Otsu (1979) over the whole field (no cells outlined yet); 1,200 saturated pixels left out.');
  });
});
