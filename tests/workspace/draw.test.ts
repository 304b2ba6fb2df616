/** Viewer and tool geometry (pure): drags to shapes, zoom about a point, fit, preview level, scale bar. */
import { describe, expect, it } from 'vitest';
import { boxFromDrag, ellipseFromDrag, polygonFromClicks, traceFromStroke, fitView, zoomAt, toImage, previewMax, scaleBar, boundsOf, pathOf } from '../../src/features/workspace/lib/draw';
import { axisTop } from '../../src/features/workspace/lib/scatterCore';

describe('tool shapes', () => {
  it('box and oval from a drag in any direction; a click without a drag makes nothing', () => {
    expect(boxFromDrag([10, 20], [4, 5])).toEqual({ kind: 'rect', x: 4, y: 5, width: 6, height: 15 });
    expect(ellipseFromDrag([0, 0], [10, 6])).toEqual({ kind: 'ellipse', cx: 5, cy: 3, rx: 5, ry: 3 });
    expect(boxFromDrag([3, 3], [3.2, 9])).toBeNull();
    expect(ellipseFromDrag([3, 3], [3, 3])).toBeNull();
  });
  it('polygon clicks drop repeats (double click) and a closing point equal to the first', () => {
    expect(polygonFromClicks([[0, 0], [5, 0], [5, 0], [5, 5], [0, 0]])).toEqual({ kind: 'polygon', points: [[0, 0], [5, 0], [5, 5]] });
    expect(polygonFromClicks([[0, 0], [5, 0], [5, 0]])).toBeNull();
  });
  it('freehand strokes are thinned and rounded to 1/100 px', () => {
    const g = traceFromStroke([[0, 0], [0.1, 0], [1.234567, 0], [1.3, 1.5], [0, 2]], 1)!;
    expect(g).toEqual({ kind: 'freehand', points: [[0, 0], [1.23, 0], [1.3, 1.5], [0, 2]] });
  });
  it('paths and bounds', () => {
    expect(pathOf({ kind: 'rect', x: 1, y: 2, width: 3, height: 4 })).toBe('M1 2H4V6H1Z');
    expect(boundsOf({ kind: 'label', label: 1, rle: [12, 3, 22, 2] }, 10)).toEqual({ x0: 2, y0: 1, x1: 5, y1: 3 });
  });
});

describe('viewer transform', () => {
  it('fit centres the image; zoom keeps the point under the cursor fixed', () => {
    const v = fitView(1000, 500, 532, 532, 16);
    expect(v.scale).toBeCloseTo(0.5);
    expect(v.ty).toBeCloseTo((532 - 250) / 2);
    const p = toImage(v, 200, 300);
    const z = zoomAt(v, 3, 200, 300);
    const q = toImage(z, 200, 300);
    expect(q[0]).toBeCloseTo(p[0], 9);
    expect(q[1]).toBeCloseTo(p[1], 9);
    expect(zoomAt(v, 1e9, 0, 0).scale).toBe(64);
  });
  it('preview level: power of two ≥ what is on screen, never above the field (4096 cap)', () => {
    expect(previewMax(512, 0.25)).toBe(256);
    expect(previewMax(512, 1)).toBe(512);
    expect(previewMax(512, 8)).toBe(512);
    expect(previewMax(8192, 0.1)).toBe(1024);
    expect(previewMax(8192, 2)).toBe(4096);
  });
  it('scale bar picks 1-2-5 lengths close to the target width', () => {
    const b = scaleBar(0.1, 1, 120); // 0.1 µm/px at 100 %: 120 px ≈ 12 µm → 10 µm
    expect(b.um).toBe(10);
    expect(b.px).toBeCloseTo(100);
  });
});

describe('scatter axes', () => {
  it('axis top sits just above the 99.95th percentile, ignoring a few hot pixels', () => {
    const v = new Uint16Array(100000).map((_, i) => i % 1000);
    v[0] = 65535;
    v[1] = 65535;
    const top = axisTop(v, v.length, 65535);
    expect(top).toBeGreaterThanOrEqual(999);
    expect(top).toBeLessThan(1100);
    expect(axisTop(new Uint16Array(10), 10, 0)).toBe(1);
  });
});
