/**
 * shapeIndices (one shape rasterized into a window over its bounds) gives exactly the pixels of the whole-image
 * rasterization `maskToIndices(rasterize(...))`, for seeded random polygons, rectangles and rotated ellipses:
 * inside, crossing every image edge, wholly outside, degenerate, with vertices on pixel centres and half-pixel
 * edges (where the crossing arithmetic is closest to the window's border).
 */
import { describe, expect, it } from 'vitest';
import { maskToIndices, rasterize, shapeIndices, type Shape } from '../../shared/analysis/index';
import { Xoshiro128 } from '../../shared/analysis/prng';

const W = 53, H = 41;
const same = (s: Shape, w = W, h = H) => expect(Array.from(shapeIndices(s, w, h)), JSON.stringify(s)).toEqual(Array.from(maskToIndices(rasterize(s, w, h))));

describe('shapeIndices', () => {
  it('equals the whole-image rasterization for random shapes', () => {
    const rng = new Xoshiro128(17);
    const u = (a: number, b: number) => a + (b - a) * rng.nextFloat();
    // coordinates on the half-pixel grid half of the time: edges through pixel centres and corners
    const c = (a: number, b: number) => (rng.nextFloat() < 0.5 ? Math.round(u(a, b) * 2) / 2 : u(a, b));
    let nonEmpty = 0;
    for (let k = 0; k < 600; k++) {
      const kind = k % 3;
      let s: Shape;
      if (kind === 0) {
        const n = 3 + Math.floor(u(0, 9));
        s = { kind: 'polygon', points: Array.from({ length: n }, () => [c(-15, W + 15), c(-15, H + 15)] as [number, number]) };
      } else if (kind === 1) s = { kind: 'rectangle', x: c(-10, W), y: c(-10, H), width: c(-3, 30), height: c(-3, 30) };
      else s = { kind: 'ellipse', cx: c(-10, W + 10), cy: c(-10, H + 10), rx: c(0, 25), ry: c(0, 25), angle: rng.nextFloat() < 0.5 ? 0 : u(-4, 4) };
      same(s);
      if (shapeIndices(s, W, H).length) nonEmpty++;
    }
    expect(nonEmpty).toBeGreaterThan(300);
  });

  it('handles degenerate and outside shapes, and a big image', () => {
    same({ kind: 'polygon', points: [[1, 1], [5, 5]] });
    same({ kind: 'polygon', points: [[2, 2], [2, 9], [2, 4]] });
    same({ kind: 'polygon', points: [[-30, -30], [-20, -30], [-20, -20]] });
    same({ kind: 'rectangle', x: W + 3, y: 2, width: 5, height: 5 });
    same({ kind: 'rectangle', x: 0, y: 0, width: W, height: H });
    same({ kind: 'ellipse', cx: 10, cy: 10, rx: 0, ry: 4 });
    same({ kind: 'ellipse', cx: -40, cy: 10, rx: 5, ry: 4 });
    same({ kind: 'ellipse', cx: 1010.5, cy: 900.25, rx: 70, ry: 90, angle: 0.3 }, 2048, 2048);
    expect(shapeIndices({ kind: 'ellipse', cx: 1010.5, cy: 900.25, rx: 70, ry: 90 }, 2048, 2048).length).toBeGreaterThan(19000);
  });

  it('refuses what rasterize refuses, quoting the value', () => {
    expect(() => shapeIndices({ kind: 'polygon', points: [[0, 0], [NaN, 1], [2, 2]] }, W, H)).toThrow(/received NaN/);
    expect(() => shapeIndices({ kind: 'ellipse', cx: 1, cy: 1, rx: Infinity, ry: 1 }, W, H)).toThrow(/received Infinity/);
    expect(() => shapeIndices({ kind: 'rectangle', x: 0, y: 0, width: 2, height: 2 }, 0, H)).toThrow(/received 0×41/);
  });
});
