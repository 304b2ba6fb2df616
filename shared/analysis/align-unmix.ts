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
 * Options: `background` [b1, b2] subtracts a constant background from each channel between the two steps
 * (after alignment, before unmixing; a value v becomes v − b when v > b, else 0, NaN staying NaN; a background
 * of 0 or null leaves the channel as it is), the order of a run (background subtraction, then bleed-through);
 * `out` receives t1 and t2 in caller-owned arrays (e.g. reused from field to field) instead of new ones.
 *
 * The valid columns of a shifted row are one contiguous range (dx is the same for every column), so each
 * row is three plain loops: the NaN border on the left, the interpolated middle, the NaN border on the right.
 * The per-column taps (neighbours and weights, bilinearTaps) are precomputed, so the middle has no floor and
 * no branch per pixel; they stay per column (i + dx rounds differently for each i, and SciPy's weights are
 * those of each rounded position).
 */
import { bilinearTaps, checkAlignInput } from './align';
import type { ChannelArray } from './types';
import { checkBleedCoefficient } from './unmix';

export interface AlignUnmixOptions {
  /** constant backgrounds [channel 1, channel 2] subtracted after alignment, before unmixing (module comment) */
  background?: readonly [number | null, number | null];
  /** arrays of ch1.length values to write t1 and t2 into (two separate arrays, neither one of the inputs) */
  out?: { t1: Float64Array; t2: Float64Array };
}

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
  options: AlignUnmixOptions = {},
): { t1: Float64Array; t2: Float64Array } {
  const plane = checkAlignInput(ch2, width, height, dx, dy, slices);
  checkBleedCoefficient(a21, 'a21');
  checkBleedCoefficient(a12, 'a12');
  if (ch1.length !== ch2.length) throw new RangeError(`channels differ in size: ${ch1.length} vs ${ch2.length} pixels`);
  const [b1, b2] = options.background ?? [null, null];
  for (const [name, b] of [['channel 1', b1], ['channel 2', b2]] as const)
    if (b !== null && !Number.isFinite(b)) throw new RangeError(`the ${name} background must be a finite number, received ${b}`);
  const sub1 = b1 !== null && b1 !== 0, sub2 = b2 !== null && b2 !== 0;
  const bg1 = b1 ?? 0, bg2 = b2 ?? 0;
  const out = options.out;
  if (out) {
    if (out.t1.length !== ch1.length || out.t2.length !== ch1.length)
      throw new RangeError(`output arrays must have ${ch1.length} values, received ${out.t1.length} and ${out.t2.length}`);
    if (out.t1 === out.t2 || (out.t1 as ChannelArray) === ch1 || (out.t1 as ChannelArray) === ch2 || (out.t2 as ChannelArray) === ch1 || (out.t2 as ChannelArray) === ch2)
      throw new RangeError('output arrays must be two separate arrays, neither one of the input channels');
  }
  const det = 1 - a12 * a21;
  const t1 = out ? out.t1 : new Float64Array(ch1.length), t2 = out ? out.t2 : new Float64Array(ch1.length);
  const cx = bilinearTaps(dx, width), cy = bilinearTaps(dy, height);
  // the valid columns: i0 ≥ 0 exactly for i in [lo, hi)
  let lo = 0;
  while (lo < width && cx.i0[lo] < 0) lo++;
  let hi = lo;
  while (hi < width && cx.i0[hi] >= 0) hi++;
  const x0s = cx.i0, x1s = cx.i1, fxs = cx.f, gxs = cx.g;
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
      const fy = cy.f[j], wy0 = cy.g[j];
      // the two source rows (the same one when the lower row has weight 0)
      const r0 = base + y0 * width, r1 = base + cy.i1[j] * width;
      t1.fill(NaN, o, o + lo);
      t2.fill(NaN, o, o + lo);
      for (let i = lo; i < hi; i++) {
        const x0 = x0s[i], x1 = x1s[i], fx = fxs[i], gx = gxs[i];
        // the operations of alignChannel (SciPy's order), of a run's background subtraction, then of unmixChannels
        let b = ch2[r0 + x0] * wy0 * gx + ch2[r0 + x1] * wy0 * fx + ch2[r1 + x0] * fy * gx + ch2[r1 + x1] * fy * fx;
        let a = ch1[o + i];
        if (sub1) a = a > bg1 ? a - bg1 : a === a ? 0 : NaN;
        if (sub2) b = b > bg2 ? b - bg2 : b === b ? 0 : NaN;
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
