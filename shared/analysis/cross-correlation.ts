/**
 * Van Steensel's cross-correlation function: Pearson's r between channel 1 and channel 2 as channel 2 is
 * shifted by δ = −N … N pixels along x, and separately along y (van Steensel B, van Binnendijk EP,
 * Hornsby CD, van der Voort HTM, Krozowski ZS, de Kloet ER, van Driel R 1996, "Partial colocalization of
 * glucocorticoid and mineralocorticoid receptors in discrete compartments in nuclei of rat hippocampus
 * neurons", J. Cell Sci. 109:787–792, doi:10.1242/jcs.109.4.787). A diagnostic curve: co-localized
 * channels peak at δ = 0, a chromatic shift moves the peak, excluded channels dip there.
 *
 * Shift convention as in phase-correlation.ts: at δ along x the pairs are (ch1(x, y), ch2(x + δ, y)), so a
 * channel 2 displaced by dx peaks at δ ≈ dx. Over the region's pixels (the whole plane when null) whose
 * shifted position lies inside the image; NaN pixels left out. r is Pearson's r of `centeredMoments`
 * (pearson.ts); null where it is undefined (fewer than 2 pixels, a constant channel).
 *
 * `through` (whole pixels, default (0, 0)) holds the other axis at a fixed shift: the x curve is then
 * r(δ, through.dy) and the y curve r(through.dx, δ). Van Steensel's curves are the default; a diagonal
 * chromatic shift flattens both of them, so a diagnostic drawn through the measured shift's nearest whole
 * pixel shows each axis's peak (decided 2026-12-03).
 */
import { centeredMoments, pearsonFromMoments } from './pearson';
import type { ChannelArray } from './types';

export interface CrossCorrelationCurves {
  /** the shifts δ, −N … N */
  shifts: number[];
  /** r at each shift of channel 2 along x */
  x: (number | null)[];
  /** r at each shift along y */
  y: (number | null)[];
}

/** The two curves within ±maxShift px over `region` (plane pixel indices y·width + x; null = every pixel). */
export function crossCorrelationCurves(
  ch1: ChannelArray,
  ch2: ChannelArray,
  width: number,
  height: number,
  maxShift: number,
  region: Uint32Array | null = null,
  through: { dx: number; dy: number } = { dx: 0, dy: 0 },
): CrossCorrelationCurves {
  if (!(Number.isInteger(through.dx) && Number.isInteger(through.dy) && Math.abs(through.dx) <= 1000 && Math.abs(through.dy) <= 1000))
    throw new RangeError(`the curves' fixed shift must be whole pixels within ±1000, received (${through.dx}, ${through.dy})`);
  if (!(Number.isInteger(maxShift) && maxShift >= 0 && maxShift <= 1000)) throw new RangeError(`maximum shift must be a whole number of pixels from 0 to 1000, received ${maxShift}`);
  const plane = width * height;
  if (ch1.length !== plane || ch2.length !== plane) throw new RangeError(`channels must have ${width}×${height} = ${plane} pixels, received ${ch1.length} and ${ch2.length}`);
  const n = region === null ? plane : region.length;
  if (region !== null)
    for (let k = 0; k < n; k++) if (!(region[k] < plane)) throw new RangeError(`pixel index out of range: ${region[k]} (image has ${plane} pixels)`);
  const bx = new Float64Array(n), by = new Float64Array(n);
  const r = (ddx: number, ddy: number): number | null => {
    let m = 0;
    for (let k = 0; k < n; k++) {
      const i = region === null ? k : region[k];
      const x = i % width, y = (i - x) / width;
      const xs = x + ddx, ys = y + ddy;
      if (xs < 0 || xs >= width || ys < 0 || ys >= height) continue;
      const a = ch1[i], b = ch2[ys * width + xs];
      if (Number.isNaN(a) || Number.isNaN(b)) continue;
      bx[m] = a;
      by[m] = b;
      m++;
    }
    return pearsonFromMoments(centeredMoments(bx, by, m, false));
  };
  const shifts: number[] = [], cx: (number | null)[] = [], cy: (number | null)[] = [];
  for (let d = -maxShift; d <= maxShift; d++) {
    shifts.push(d);
    cx.push(r(d, through.dy));
    cy.push(r(through.dx, d));
  }
  return { shifts, x: cx, y: cy };
}
