/**
 * Alignment followed by bleed-through unmixing in one pass: the same values as
 * `unmixChannels(ch1, alignChannel(ch2, width, height, dx, dy, slices), a21, a12)`, bit for bit, without the
 * aligned channel 2 as an intermediate array (one pass over the pixels instead of two, one 8-byte-per-pixel
 * array less to allocate and fill).
 *
 * - Alignment: channel 2 sampled at (x + dx, y + dy) by bilinear interpolation, pixel (i, j) holding its
 *   value at the integer position (i, j) (Press WH, Teukolsky SA, Vetterling WT, Flannery BP 2007, Numerical
 *   Recipes, 3rd ed., §3.6; the convention of `scipy.ndimage.map_coordinates(order=1)`); positions outside
 *   [0, W − 1] × [0, H − 1] are not measured (NaN). See align.ts.
 * - Unmixing: o1 = t1 + a12·t2, o2 = a21·t1 + t2 solved per pixel, negative results set to 0 (Zimmermann T,
 *   Rietdorf J, Pepperkok R 2003, FEBS Lett. 546:87–92, doi:10.1016/S0014-5793(03)00521-0). See unmix.ts.
 *
 * The valid columns of a shifted row are one contiguous range (dx is the same for every column), so each
 * row is three plain loops: the NaN border on the left, the interpolated middle, the NaN border on the right.
 */
import { bilinearTaps, checkShift } from './align';
import type { ChannelArray } from './types';
import { checkBleedCoefficient } from './unmix';

/**
 * Channel 2 aligned by (dx, dy), then both channels unmixed with a21, a12 (Float64, NaN where channel 2's
 * sample position is outside the image). `ch1`, `ch2`: width × height × slices, row-major, slice after slice.
 */
export function alignAndUnmix(
  ch1: ChannelArray,
  ch2: ChannelArray,
  width: number,
  height: number,
  dx: number,
  dy: number,
  a21: number,
  a12: number,
  slices = 1,
): { t1: Float64Array; t2: Float64Array } {
  checkShift(dx, 'dx');
  checkShift(dy, 'dy');
  checkBleedCoefficient(a21, 'a21');
  checkBleedCoefficient(a12, 'a12');
  if (!(Number.isInteger(width) && width >= 1 && Number.isInteger(height) && height >= 1 && Number.isInteger(slices) && slices >= 1))
    throw new RangeError(`image size must be positive whole numbers, received ${width}×${height}×${slices}`);
  const plane = width * height;
  if (ch2.length !== plane * slices) throw new RangeError(`channel has ${ch2.length} values, ${width}×${height}×${slices} needs ${plane * slices}`);
  if (ch1.length !== ch2.length) throw new RangeError(`channels differ in size: ${ch1.length} vs ${ch2.length} pixels`);
  const det = 1 - a12 * a21;
  const t1 = new Float64Array(ch1.length), t2 = new Float64Array(ch1.length);
  const cx = bilinearTaps(dx, width), cy = bilinearTaps(dy, height);
  // the valid columns: i0 ≥ 0 exactly for i in [lo, hi)
  let lo = 0;
  while (lo < width && cx.i0[lo] < 0) lo++;
  let hi = lo;
  while (hi < width && cx.i0[hi] >= 0) hi++;
  const x0s = cx.i0, fxs = cx.f;
  for (let z = 0; z < slices; z++) {
    const base = z * plane;
    for (let j = 0; j < height; j++) {
      const o = base + j * width;
      const y0 = cy.i0[j];
      if (y0 < 0) {
        // not measured: t = (o1 − a·NaN) / det is NaN, NaN < 0 is false
        t1.fill(NaN, o, o + width);
        t2.fill(NaN, o, o + width);
        continue;
      }
      const fy = cy.f[j], wy0 = 1 - fy;
      const r0 = base + y0 * width, r1 = fy === 0 ? r0 : r0 + width;
      t1.fill(NaN, o, o + lo);
      t2.fill(NaN, o, o + lo);
      for (let i = lo; i < hi; i++) {
        const x0 = x0s[i];
        const fx = fxs[i];
        const x1 = fx === 0 ? x0 : x0 + 1;
        // the operations of alignChannel (SciPy's order) and then of unmixChannels
        const b = ch2[r0 + x0] * wy0 * (1 - fx) + ch2[r0 + x1] * wy0 * fx + ch2[r1 + x0] * fy * (1 - fx) + ch2[r1 + x1] * fy * fx;
        const a = ch1[o + i];
        const u = (a - a12 * b) / det, v = (b - a21 * a) / det;
        t1[o + i] = u < 0 ? 0 : u;
        t2[o + i] = v < 0 ? 0 : v;
      }
      t1.fill(NaN, o + hi, o + width);
      t2.fill(NaN, o + hi, o + width);
    }
  }
  return { t1, t2 };
}
