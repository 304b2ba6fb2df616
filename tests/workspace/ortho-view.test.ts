/**
 * The orthogonal views' cell outlines and pictures (src/features/workspace/lib/orthoView.ts). What makes them
 * right: the section pixels of a cell are exactly the voxels runs measure (`cellVoxels` over every slice)
 * that lie on the plane's row or column, re-laid as row k = slice k; the traced path, filled by the even-odd
 * rule (shared/analysis/rasterize.ts fillRings), gives back exactly those pixels; the picture maps
 * intensities through the shown range as the server's preview does (green = channel 1, magenta = channel 2).
 */
import { describe, expect, it } from 'vitest';
import { cellVoxels, type CellGeometry } from '../../shared/schemas/cells';
import { fillRings, maskToIndices, type Point } from '../../shared/analysis/rasterize';
import { encodeRuns } from '../../shared/analysis/rle';
import { sectionIndices, sectionOutlines, sectionPath, sectionRgba, zScaleOf } from '../../src/features/workspace/lib/orthoView';

const W = 12, H = 9, Z = 6, P = W * H;

/** The definition: the cell's voxels (every slice measured) on row y (xz) or column x (yz), as k·across + u. */
function expected(g: CellGeometry, axis: 'xz' | 'yz', at: number): number[] {
  const out: number[] = [];
  for (const v of cellVoxels(g, W, H, 0, Z)) {
    const k = Math.floor(v / P), p = v % P, x = p % W, y = (p - x) / W;
    if (axis === 'xz' && y === at) out.push(k * W + x);
    if (axis === 'yz' && x === at) out.push(k * H + y);
  }
  return out.sort((a, b) => a - b);
}

/** Pixels inside an SVG path of "M…L…Z" rings, by the even-odd rule. */
function fillPath(d: string, across: number): number[] {
  const rings: Point[][] = d
    .split('M')
    .filter(Boolean)
    .map((r) => r.replace('Z', '').split('L').map((xy) => xy.split(' ').map(Number) as Point));
  const mask = new Uint8Array(across * Z);
  fillRings(mask, across, Z, rings);
  return Array.from(maskToIndices(mask));
}

/** A 3-D label over four slices whose footprint moves one pixel right per slice and skips its third slice. */
const blob = (): Uint32Array[] => [0, 1, 2, 3].map((k) => (k === 2 ? new Uint32Array(0) : Uint32Array.from([3 * W + 2 + k, 3 * W + 3 + k, 4 * W + 2 + k, 4 * W + 3 + k, 5 * W + 3 + k])));

const cells: [string, CellGeometry][] = [
  ['a box with a z range', { kind: 'rect', x: 1, y: 2, width: 5, height: 4, z: [2, 4] }],
  ['an ellipse on every slice', { kind: 'ellipse', cx: 7, cy: 4.5, rx: 3.2, ry: 2.6 }],
  ['a polygon with one slice', { kind: 'polygon', points: [[0, 0], [9, 1], [4, 7]], z: [5, 5] }],
  ['a 2-D label cell', { kind: 'label', label: 4, rle: encodeRuns(Uint32Array.from([3 * W + 4, 3 * W + 5, 3 * W + 9, 4 * W + 5]), P) }],
  ['a 3-D label cell', { kind: 'label3d', label: 7, z: [2, 5], slices: blob().map((a) => encodeRuns(a, P)) }],
];

describe('sectionIndices', () => {
  for (const [name, g] of cells) {
    it(`${name}: the voxels runs measure that lie on the plane, for every row and column`, () => {
      for (let y = 0; y < H; y++) expect(Array.from(sectionIndices(g, W, H, Z, 'xz', y)), `row ${y}`).toEqual(expected(g, 'xz', y));
      for (let x = 0; x < W; x++) expect(Array.from(sectionIndices(g, W, H, Z, 'yz', x)), `column ${x}`).toEqual(expected(g, 'yz', x));
    });
  }
  it('a 3-D label cell shows its skipped slice as a gap; a z range shows as its rows only', () => {
    const g = cells[4][1];
    const rows = new Set(Array.from(sectionIndices(g, W, H, Z, 'xz', 3)).map((i) => Math.floor(i / W)));
    expect([...rows].sort()).toEqual([1, 2, 4]);
    const box = new Set(Array.from(sectionIndices(cells[0][1], W, H, Z, 'yz', 2)).map((i) => Math.floor(i / H)));
    expect([...box].sort()).toEqual([1, 2, 3]);
  });
});

describe('sectionPath', () => {
  it('filled by the even-odd rule, the outline gives back exactly the section pixels', () => {
    for (const [name, g] of cells)
      for (const [axis, at] of [['xz', 3], ['xz', 4], ['yz', 3], ['yz', 5]] as const) {
        const idx = sectionIndices(g, W, H, Z, axis, at);
        const across = axis === 'xz' ? W : H;
        expect(fillPath(sectionPath(idx, across, Z), across), `${name} ${axis} ${at}`).toEqual(Array.from(idx));
      }
  });
  it('cells that miss the plane are left out', () => {
    const outlines = cells.map(([name, geometry]) => ({ key: name, geometry }));
    for (const y of [0, 3, 7, 8]) {
      const on = cells.filter(([, g]) => expected(g, 'xz', y).length > 0).map(([name]) => name);
      expect(sectionOutlines(outlines, W, H, Z, 'xz', y).map((o) => o.outline.key), `row ${y}`).toEqual(on);
    }
    expect(sectionOutlines(outlines, W, H, Z, 'xz', 3).length).toBe(5);
    expect(sectionOutlines(outlines, W, H, Z, 'xz', 8)).toEqual([]);
  });
});

describe('pictures and scale', () => {
  it('maps each channel through its shown range like the preview: green channel 1, magenta channel 2, rounded and clamped', () => {
    const ch1 = Uint16Array.from([0, 100, 160, 200, 400]);
    const ch2 = Float32Array.from([NaN, 10, 20, 30, 40]);
    const rgba = sectionRgba(ch1, ch2, 'composite', [100, 200], [10, 30]);
    const px = (i: number) => Array.from(rgba.subarray(4 * i, 4 * i + 4));
    expect(px(0)).toEqual([0, 0, 0, 255]);
    expect(px(1)).toEqual([0, 0, 0, 255]);
    // green ⌊(160 − 100) · 255 / 100 + 0.5⌋ = 153; magenta ⌊(20 − 10) · 255 / 20 + 0.5⌋ = 128
    expect(px(2)).toEqual([128, 153, 128, 255]);
    expect(px(3)).toEqual([255, 255, 255, 255]);
    expect(px(4)).toEqual([255, 255, 255, 255]);
    expect(Array.from(sectionRgba(ch1, ch2, 'ch1', [100, 200], [10, 30]).subarray(8, 12))).toEqual([153, 153, 153, 255]);
    expect(Array.from(sectionRgba(ch1, ch2, 'ch2', [100, 200], [10, 30]).subarray(8, 12))).toEqual([128, 128, 128, 255]);
  });
  it('one slice is z step ÷ pixel size pixels tall, unknown without both', () => {
    expect(zScaleOf(0.1, 0.35)).toBeCloseTo(3.5, 12);
    expect(zScaleOf(null, 0.35)).toBeNull();
    expect(zScaleOf(0.1, null)).toBeNull();
  });
});
