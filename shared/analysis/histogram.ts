/**
 * Histograms: the 2-D joint histogram behind the pixel scatter plot, and a 1-D histogram for the
 * distribution distances (distances.ts).
 *
 * Binning follows the common convention (as NumPy's histogram2d — common practice): `bins` equal-width
 * bins over [lo, hi]; every bin is half-open [e_k, e_k+1) except the last, which also holds hi; values
 * outside [lo, hi] are not counted (reported in `outside`). Default range: the data's [min, max].
 */
import type { PairArray } from './pairs';

export interface Histogram2D {
  binsX: number;
  binsY: number;
  rangeX: [number, number];
  rangeY: [number, number];
  /** counts[by * binsX + bx]; by = 0 is the lowest y bin */
  counts: Uint32Array;
  outside: number;
  max: number;
}

export interface Histogram1D {
  bins: number;
  range: [number, number];
  counts: Float64Array;
  outside: number;
}

function dataRange(v: ArrayLike<number>, n: number): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < n; i++) {
    const a = v[i];
    if (a < lo) lo = a;
    if (a > hi) hi = a;
  }
  return n === 0 ? [0, 1] : [lo, hi];
}

function checkBins(b: number, what: string): void {
  if (!(Number.isInteger(b) && b >= 1 && b <= 65536)) throw new RangeError(`${what} must be an integer in 1..65536, received ${b}`);
}

function binner(bins: number, lo: number, hi: number): (v: number) => number {
  if (!(hi > lo)) return (v) => (v === lo ? 0 : -1);
  const scale = bins / (hi - lo);
  return (v) => {
    if (!(v >= lo && v <= hi)) return -1;
    const b = Math.floor((v - lo) * scale);
    return b >= bins ? bins - 1 : b;
  };
}

export function histogram1d(v: PairArray | ArrayLike<number>, options: { bins?: number; range?: [number, number] } = {}, n = v.length): Histogram1D {
  const bins = options.bins ?? 256;
  checkBins(bins, 'bins');
  const range = options.range ?? dataRange(v, n);
  const f = binner(bins, range[0], range[1]);
  const counts = new Float64Array(bins);
  let outside = 0;
  for (let i = 0; i < n; i++) {
    const b = f(v[i]);
    if (b < 0) outside++;
    else counts[b]++;
  }
  return { bins, range, counts, outside };
}

export function jointHistogram(
  x: PairArray | ArrayLike<number>,
  y: PairArray | ArrayLike<number>,
  options: { binsX?: number; binsY?: number; rangeX?: [number, number]; rangeY?: [number, number] } = {},
  n = x.length,
): Histogram2D {
  const binsX = options.binsX ?? 256, binsY = options.binsY ?? 256;
  checkBins(binsX, 'binsX');
  checkBins(binsY, 'binsY');
  const rangeX = options.rangeX ?? dataRange(x, n);
  const rangeY = options.rangeY ?? dataRange(y, n);
  const fx = binner(binsX, rangeX[0], rangeX[1]);
  const fy = binner(binsY, rangeY[0], rangeY[1]);
  const counts = new Uint32Array(binsX * binsY);
  let outside = 0;
  for (let i = 0; i < n; i++) {
    const bx = fx(x[i]), by = fy(y[i]);
    if (bx < 0 || by < 0) outside++;
    else counts[by * binsX + bx]++;
  }
  let max = 0;
  for (let k = 0; k < counts.length; k++) if (counts[k] > max) max = counts[k];
  return { binsX, binsY, rangeX, rangeY, counts, outside, max };
}
