/**
 * Channel alignment: channel 2 resampled at (x + dx, y + dy) by bilinear interpolation, so that a channel
 * displaced by (dx, dy) (see phase-correlation.ts) lines up with channel 1.
 *
 * Pixel (i, j) holds its value at the integer position (i, j) (the convention of
 * `scipy.ndimage.map_coordinates(order=1)`); the value at (x, y) = (i + fx, j + fy), 0 ≤ fx, fy < 1, is
 * (1 − fx)(1 − fy)·v(i, j) + fx(1 − fy)·v(i + 1, j) + (1 − fx)fy·v(i, j + 1) + fx·fy·v(i + 1, j + 1)
 * (bilinear interpolation, e.g. Press et al. 2007, Numerical Recipes, 3rd ed., §3.6).
 * A pixel whose sample position falls outside [0, W − 1] × [0, H − 1] is not measured: its value is NaN,
 * which every measure of the engine leaves out (pairs.ts). NaN neighbours give NaN.
 * Stacks: every z slice is shifted in its plane by the same (dx, dy).
 */
import type { ChannelArray } from './types';

/** Checks a shift component: a finite number (pixels). */
export function checkShift(v: number, name: string): void {
  if (!Number.isFinite(v)) throw new RangeError(`${name} must be a finite number of pixels, received ${v}`);
}

/**
 * Per column (or row) i of n, sampled at i + d: the left neighbour i0 (−1 when i + d is outside [0, n − 1]),
 * the right one i1 (i0 itself when its weight is 0, so a sample on the last position reads nothing past it),
 * the weight f of the right one and g = 1 − f of the left one.
 */
export function bilinearTaps(d: number, n: number): { i0: Int32Array; i1: Int32Array; f: Float64Array; g: Float64Array } {
  const i0 = new Int32Array(n).fill(-1), i1 = new Int32Array(n).fill(-1), f = new Float64Array(n), g = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const x = i + d;
    if (!(x >= 0 && x <= n - 1)) continue;
    let k = Math.floor(x);
    let t = x - k;
    if (k === n - 1) {
      // the last position itself: the right neighbour is not needed (weight 0)
      k = n - 1;
      t = 0;
    }
    i0[i] = k;
    i1[i] = t === 0 ? k : k + 1;
    f[i] = t;
    g[i] = 1 - t;
  }
  return { i0, i1, f, g };
}

/**
 * Checks a channel and shift for alignment (quoting the value received) and returns the plane size:
 * finite shifts, positive whole dimensions, and width × height × slices values.
 */
export function checkAlignInput(ch: ArrayLike<number>, width: number, height: number, dx: number, dy: number, slices: number): number {
  checkShift(dx, 'dx');
  checkShift(dy, 'dy');
  if (!(Number.isInteger(width) && width >= 1 && Number.isInteger(height) && height >= 1 && Number.isInteger(slices) && slices >= 1))
    throw new RangeError(`image size must be positive whole numbers, received ${width}×${height}×${slices}`);
  const plane = width * height;
  if (ch.length !== plane * slices) throw new RangeError(`channel has ${ch.length} values, ${width}×${height}×${slices} needs ${plane * slices}`);
  return plane;
}

/**
 * Channel `ch` (width × height × slices, row-major, slice after slice) sampled at (x + dx, y + dy);
 * Float64, NaN where the position is outside the image.
 */
export function alignChannel(ch: ChannelArray, width: number, height: number, dx: number, dy: number, slices = 1): Float64Array {
  const plane = checkAlignInput(ch, width, height, dx, dy, slices);
  const out = new Float64Array(ch.length);
  const cx = bilinearTaps(dx, width), cy = bilinearTaps(dy, height);
  for (let z = 0; z < slices; z++) {
    const base = z * plane;
    for (let j = 0; j < height; j++) {
      const y0 = cy.i0[j];
      if (y0 < 0) {
        out.fill(NaN, base + j * width, base + (j + 1) * width);
        continue;
      }
      const fy = cy.f[j], wy0 = 1 - fy;
      const r0 = base + y0 * width, r1 = fy === 0 ? r0 : r0 + width;
      const o = base + j * width;
      for (let i = 0; i < width; i++) {
        const x0 = cx.i0[i];
        if (x0 < 0) {
          out[o + i] = NaN;
          continue;
        }
        const fx = cx.f[i], gx = cx.g[i], x1 = cx.i1[i];
        // SciPy's order of operations (value × y weight × x weight, summed row by row), so the results
        // are the same to the last bit and ties between pixels stay ties for the rank coefficients
        out[o + i] = ch[r0 + x0] * wy0 * gx + ch[r0 + x1] * wy0 * fx + ch[r1 + x0] * fy * gx + ch[r1 + x1] * fy * fx;
      }
    }
  }
  return out;
}

/**
 * The values `alignChannel(ch, width, height, dx, dy, slices)` has at the given pixel indices (the same
 * operations, to the last bit), without aligning the whole channel: e.g. a background region's pixels when
 * the aligned channel itself is never stored (a run's one-pass alignment and unmixing, align-unmix.ts).
 */
export function alignedAt(ch: ChannelArray, width: number, height: number, dx: number, dy: number, indices: ArrayLike<number>, slices = 1): Float64Array {
  const plane = checkAlignInput(ch, width, height, dx, dy, slices);
  const cx = bilinearTaps(dx, width), cy = bilinearTaps(dy, height);
  const out = new Float64Array(indices.length);
  for (let k = 0; k < indices.length; k++) {
    const p = indices[k];
    if (!(Number.isInteger(p) && p >= 0 && p < ch.length)) throw new RangeError(`pixel index ${p} is outside the ${ch.length} pixels`);
    const z = Math.floor(p / plane), j = Math.floor((p - z * plane) / width), i = p - z * plane - j * width;
    const x0 = cx.i0[i], y0 = cy.i0[j];
    if (x0 < 0 || y0 < 0) {
      out[k] = NaN;
      continue;
    }
    const fx = cx.f[i], gx = cx.g[i], x1 = cx.i1[i], fy = cy.f[j], wy0 = cy.g[j];
    const r0 = z * plane + y0 * width, r1 = z * plane + cy.i1[j] * width;
    out[k] = ch[r0 + x0] * wy0 * gx + ch[r0 + x1] * wy0 * fx + ch[r1 + x0] * fy * gx + ch[r1 + x1] * fy * fx;
  }
  return out;
}
