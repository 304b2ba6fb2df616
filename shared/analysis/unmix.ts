/**
 * Bleed-through correction by linear unmixing of two channels (Zimmermann T, Rietdorf J, Pepperkok R
 * 2003, "Spectral imaging and its applications in live cell microscopy", FEBS Lett. 546:87–92,
 * doi:10.1016/S0014-5793(03)00521-0).
 *
 * Model per pixel: observed o1 = t1 + a12·t2, o2 = a21·t1 + t2, with a21 the fraction of fluorophore 1's
 * signal seen in channel 2 and a12 that of fluorophore 2 in channel 1. The 2×2 system is solved exactly,
 * t1 = (o1 − a12·o2) / (1 − a12·a21), t2 = (o2 − a21·o1) / (1 − a12·a21); a negative result is set to 0
 * (no negative intensity). NaN stays NaN (not measured). Coefficients must lie in [0, 1).
 */
import type { ChannelArray } from './types';

/** Checks one bleed-through coefficient: a fraction in [0, 1). */
export function checkBleedCoefficient(v: number, name: string): void {
  if (!(Number.isFinite(v) && v >= 0 && v < 1)) throw new RangeError(`${name} must be a fraction in [0, 1), received ${v}`);
}

/** The unmixed channels (Float64) of observed channels o1, o2 with coefficients a21, a12. */
export function unmixChannels(o1: ChannelArray, o2: ChannelArray, a21: number, a12: number): { t1: Float64Array; t2: Float64Array } {
  checkBleedCoefficient(a21, 'a21');
  checkBleedCoefficient(a12, 'a12');
  if (o1.length !== o2.length) throw new RangeError(`channels differ in size: ${o1.length} vs ${o2.length} pixels`);
  const n = o1.length;
  const det = 1 - a12 * a21;
  const t1 = new Float64Array(n), t2 = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = o1[i], b = o2[i];
    const u = (a - a12 * b) / det, v = (b - a21 * a) / det;
    // NaN < 0 is false, so NaN stays NaN
    t1[i] = u < 0 ? 0 : u;
    t2[i] = v < 0 ? 0 : v;
  }
  return { t1, t2 };
}
