/**
 * The browser's composite (src/features/workspace/lib/composite.ts): channel 1 green, channel 2 magenta; with a
 * shift, channel 2 is resampled by the engine's `alignChannel` (the runs' bilinear alignment, checked against
 * SciPy's map_coordinates in tests/analysis/calibration-fixtures.test.ts), so a planted shift lines the two
 * up exactly, and pixels sampled outside the image are black. (our checks)
 */
import { describe, expect, it } from 'vitest';
import { displayRange, renderComposite } from '@/features/workspace/lib/composite';
import { Xoshiro128 } from '@shared/analysis/prng';

const W = 40, H = 30;
function planted(dx: number, dy: number) {
  const g = new Xoshiro128(3);
  const scene = Float64Array.from({ length: (W + 20) * (H + 20) }, () => Math.round(1000 * g.nextFloat()));
  const at = (x: number, y: number) => scene[(y + 10) * (W + 20) + x + 10];
  const ch1 = new Uint16Array(W * H), ch2 = new Uint16Array(W * H);
  // ch2(x + dx, y + dy) = ch1(x, y)
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) (ch1[y * W + x] = at(x, y)), (ch2[y * W + x] = at(x - dx, y - dy));
  return { width: W, height: H, ch1, ch2 };
}

describe('renderComposite', () => {
  it('aligned by the planted shift, magenta equals green inside and the pixels sampled outside are black', () => {
    const px = planted(3, -2);
    const ranges: [[number, number], [number, number]] = [[0, 1000], [0, 1000]];
    const { rgba, width, height } = renderComposite(px, { dx: 3, dy: -2 }, ranges);
    expect([width, height]).toEqual([W, H]);
    let inside = 0;
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) {
        const o = (y * W + x) * 4;
        const outside = x + 3 > W - 1 || y - 2 < 0;
        if (outside) expect([rgba[o], rgba[o + 1], rgba[o + 2], rgba[o + 3]]).toEqual([0, 0, 0, 255]);
        else {
          inside++;
          expect(rgba[o]).toBe(rgba[o + 1]);
          expect(rgba[o + 2]).toBe(rgba[o]);
        }
      }
    expect(inside).toBe((W - 3) * (H - 2));
    // as recorded they differ
    const raw = renderComposite(px, null, ranges).rgba;
    let differ = 0;
    for (let i = 0; i < W * H; i++) if (raw[i * 4] !== raw[i * 4 + 1]) differ++;
    expect(differ).toBeGreaterThan(W * H * 0.9);
  });

  it('display ranges are the 0.1 and 99.9 percentiles; a constant channel still gets a span', () => {
    const a = Uint16Array.from({ length: 1001 }, (_, i) => i);
    expect(displayRange(a)).toEqual([1, 999]);
    expect(displayRange(new Uint16Array(10).fill(7))).toEqual([7, 8]);
  });
});
