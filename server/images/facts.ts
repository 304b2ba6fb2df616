/**
 * Per-channel facts of a field: min, max, mean and saturation, computed over every z slice. NaN pixels (float
 * data) carry no intensity (PRODUCT.md): they are left out of every fact, fractions included (their
 * denominator is the number of pixels with a value).
 */
import type { ChannelFacts } from '../db/schema.js';
import type { PixelArray } from './decode.js';

/**
 * Saturation is reported two ways (PRODUCT.md "Cautions"):
 *  - `saturatedFraction`: fraction of pixels at the largest value the pixel type can hold (255, 65535,
 *    4294967295); 0 for float data, which has no such ceiling;
 *  - `plateauFraction`: fraction of pixels at the largest OBSERVED value, reported only when that value
 *    forms a plateau, i.e. at least max(3, 0.01 % of pixels) sit exactly on it — the signature of a
 *    detector or an export that clipped below full scale (e.g. a 12-bit camera in a 16-bit file).
 *    Threshold choice: common practice (no published source); null when there is no plateau.
 */
export function channelFacts(slices: PixelArray[], maxValue: number | null): ChannelFacts {
  if (slices.length && slices.every((a) => a instanceof Uint16Array) ) return histFacts(slices as Uint16Array[], 65536, maxValue);
  if (slices.length && slices.every((a) => a instanceof Uint8Array)) return histFacts(slices as Uint8Array[], 256, maxValue);
  return genericFacts(slices, maxValue);
}

/** Whether any pixel of the channel has a value (integer data always; float data unless every pixel is NaN). */
export function hasValue(slices: PixelArray[]): boolean {
  for (const a of slices) for (let i = 0; i < a.length; i++) if (a[i] === a[i]) return true;
  return false;
}

/** Histograms of 8/16-bit planes, kept while the plane lives (facts and preview percentiles share one pass). */
const hists = new WeakMap<Uint8Array | Uint16Array, Uint32Array>();
export function histogramOf(a: Uint8Array | Uint16Array): Uint32Array {
  let h = hists.get(a);
  if (!h) {
    h = new Uint32Array(a instanceof Uint8Array ? 256 : 65536);
    for (let i = 0; i < a.length; i++) h[a[i]]++;
    hists.set(a, h);
  }
  return h;
}

/** 8/16-bit: one pass into a histogram, everything else read from it. */
function histFacts(slices: (Uint8Array | Uint16Array)[], bins: number, maxValue: number | null): ChannelFacts {
  const hist = new Float64Array(bins);
  let n = 0;
  for (const a of slices) {
    n += a.length;
    const h = histogramOf(a);
    for (let v = 0; v < bins; v++) hist[v] += h[v];
  }
  if (n === 0) return { min: 0, max: 0, mean: 0, saturatedFraction: 0, plateauFraction: null };
  let min = 0;
  while (hist[min] === 0) min++;
  let max = bins - 1;
  while (hist[max] === 0) max--;
  let sum = 0;
  for (let v = min; v <= max; v++) sum += v * hist[v];
  const atMax = hist[max];
  return {
    min,
    max,
    mean: sum / n,
    saturatedFraction: maxValue === null ? 0 : (hist[maxValue] ?? 0) / n,
    plateauFraction: atMax >= Math.max(3, n * 1e-4) ? atMax / n : null,
  };
}

function genericFacts(slices: PixelArray[], maxValue: number | null): ChannelFacts {
  let n = 0;
  let min = Infinity;
  let max = -Infinity;
  let sum = 0;
  for (const a of slices) {
    let s = 0;
    for (let i = 0; i < a.length; i++) {
      const v = a[i];
      if (v !== v) continue; // NaN
      n++;
      if (v < min) min = v;
      if (v > max) max = v;
      s += v;
    }
    sum += s;
  }
  if (n === 0) return { min: 0, max: 0, mean: 0, saturatedFraction: 0, plateauFraction: null };
  let atMax = 0;
  let atCeil = 0;
  for (const a of slices) {
    for (let i = 0; i < a.length; i++) {
      const v = a[i];
      if (v === max) atMax++;
      if (maxValue !== null && v === maxValue) atCeil++;
    }
  }
  const plateau = atMax >= Math.max(3, n * 1e-4);
  return {
    min: Number.isFinite(min) ? min : 0,
    max: Number.isFinite(max) ? max : 0,
    mean: sum / n,
    saturatedFraction: maxValue === null ? 0 : atCeil / n,
    plateauFraction: plateau ? atMax / n : null,
  };
}
