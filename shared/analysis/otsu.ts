/**
 * Otsu's threshold (Otsu 1979, "A threshold selection method from gray-level histograms", IEEE Trans.
 * Syst. Man Cybern. 9:62, doi:10.1109/TSMC.1979.4310076): the level t maximising the between-class
 * variance w0·w1·(μ0 − μ1)² of the split {v ≤ t} | {v > t}; foreground is value > t.
 *
 * Integer data (0..65535): the full integer histogram from min to max, one bin per value, t an integer
 * (ties: the lowest maximising t). Float data: 4096 equal bins over [min, max] (decided here); t is the
 * upper edge of the last background bin.
 *
 * Degenerate cases: no values or a single distinct value → null.
 */
import type { PairArray } from './pairs';

export const OTSU_FLOAT_BINS = 4096;

export function otsuThreshold(v: PairArray | ArrayLike<number>, n = v.length): number | null {
  if (n === 0) return null;
  let min = Infinity, max = -Infinity;
  for (let i = 0; i < n; i++) {
    const a = v[i];
    if (a < min) min = a;
    if (a > max) max = a;
  }
  if (!(max > min)) return null;
  const integer = v instanceof Uint16Array || v instanceof Uint8Array;
  let bins: number;
  let hist: Float64Array;
  let width = 1;
  if (integer) {
    bins = max - min + 1;
    hist = new Float64Array(bins);
    for (let i = 0; i < n; i++) hist[v[i] - min]++;
  } else {
    bins = OTSU_FLOAT_BINS;
    width = (max - min) / bins;
    hist = new Float64Array(bins);
    for (let i = 0; i < n; i++) {
      let b = Math.floor((v[i] - min) / width);
      if (b >= bins) b = bins - 1;
      hist[b]++;
    }
  }
  // bin centres measured from min; the criterion is shift invariant
  let total = 0;
  for (let k = 0; k < bins; k++) total += hist[k] * k;
  let w0 = 0, s0 = 0, best = -1, bestK = -1;
  for (let k = 0; k < bins - 1; k++) {
    w0 += hist[k];
    s0 += hist[k] * k;
    const w1 = n - w0;
    if (w0 === 0 || w1 === 0) continue;
    const d = s0 / w0 - (total - s0) / w1;
    const sb = w0 * w1 * d * d;
    if (sb > best) {
      best = sb;
      bestK = k;
    }
  }
  if (bestK < 0) return null;
  return integer ? min + bestK : min + (bestK + 1) * width;
}
