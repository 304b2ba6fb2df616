/**
 * Manders' split coefficients (Manders, Verbeek & Aten 1993, "Measurement of co-localization of objects in
 * dual-colour confocal images", J. Microsc. 169:375, doi:10.1111/j.1365-2818.1993.tb03313.x), with
 * thresholds as in Costes et al. (2004), Biophys. J. 86:3993, doi:10.1529/biophysj.103.038422:
 *   M1 = Σ x_i [x_i > T1 and y_i > T2] / Σ x_i [x_i > T1],   M2 = Σ y_i [x_i > T1 and y_i > T2] / Σ y_i [y_i > T2].
 * "Above" is strictly greater. Raw intensities (no shift); compensated sums.
 *
 * Degenerate cases: a denominator of 0 (no pixel above threshold, or all of them zero) → null; a null
 * threshold (e.g. Costes undefined) → null.
 */
import { NeumaierSum } from './numeric';
import type { Pairs } from './pairs';

export interface MandersResult {
  m1: number | null;
  m2: number | null;
}

export function manders(p: Pairs, t1: number | null, t2: number | null): MandersResult {
  if (t1 === null || t2 === null || !Number.isFinite(t1) || !Number.isFinite(t2)) return { m1: null, m2: null };
  const { x, y, n } = p;
  const num1 = new NeumaierSum(), den1 = new NeumaierSum(), num2 = new NeumaierSum(), den2 = new NeumaierSum();
  // integer data: block sums of at most 2^20 values ≤ 65535 are exact; float data: compensated per block of 1
  const block = p.integer ? 1 << 20 : 1;
  for (let b0 = 0; b0 < n; b0 += block) {
    const e = Math.min(n, b0 + block);
    let n1 = 0, d1 = 0, n2 = 0, d2 = 0;
    for (let i = b0; i < e; i++) {
      const a = x[i], b = y[i];
      const ax = a > t1, by = b > t2;
      if (ax) {
        d1 += a;
        if (by) {
          n1 += a;
          n2 += b;
        }
      }
      if (by) d2 += b;
    }
    num1.add(n1); den1.add(d1); num2.add(n2); den2.add(d2);
  }
  return mandersFromSums(num1.value(), den1.value(), num2.value(), den2.value());
}

/** M1, M2 from their sums (also used by the fused pass of pixel-pass.ts). */
export function mandersFromSums(num1: number, d1: number, num2: number, d2: number): MandersResult {
  return { m1: d1 !== 0 ? num1 / d1 : null, m2: d2 !== 0 ? num2 / d2 : null };
}
