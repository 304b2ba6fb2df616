/**
 * Manders' overlap coefficient and the split overlap coefficients k1, k2 (Manders, Verbeek & Aten 1993,
 * J. Microsc. 169:375, doi:10.1111/j.1365-2818.1993.tb03313.x), over all pixels of the region:
 *   overlap = Σxy / √(Σx² Σy²),  k1 = Σxy / Σx²,  k2 = Σxy / Σy².
 * Raw intensities (these are not translation invariant). Integer data: products are exact and summed in
 * exact blocks, then compensated; float data: compensated per item.
 *
 * Degenerate cases: n = 0 or Σx² = 0 (resp. Σy² = 0) → null for the coefficients that divide by it.
 */
import type { Pairs } from './pairs';

export interface OverlapResult {
  overlap: number | null;
  k1: number | null;
  k2: number | null;
}

const BLOCK = 1 << 20;

export function overlapCoefficients(p: Pairs): OverlapResult {
  const { x, y, n } = p;
  const acc = new Float64Array(6);
  const add = (k: number, v: number) => {
    const s = acc[k];
    const t = s + v;
    if (Math.abs(s) >= Math.abs(v)) acc[k + 1] += s - t + v; else acc[k + 1] += v - t + s;
    acc[k] = t;
  };
  if (p.integer) {
    for (let b0 = 0; b0 < n; b0 += BLOCK) {
      const e = Math.min(n, b0 + BLOCK);
      let sxx = 0, syy = 0, sxy = 0;
      for (let i = b0; i < e; i++) {
        const a = x[i], b = y[i];
        sxx += a * a;
        syy += b * b;
        sxy += a * b;
      }
      add(0, sxx); add(2, syy); add(4, sxy);
    }
  } else {
    for (let i = 0; i < n; i++) {
      const a = x[i], b = y[i];
      add(0, a * a); add(2, b * b); add(4, a * b);
    }
  }
  return overlapFromSums(acc[0] + acc[1], acc[2] + acc[3], acc[4] + acc[5]);
}

/** The coefficients from Σx², Σy², Σxy (also used by the fused pass of pixel-pass.ts). */
export function overlapFromSums(sxx: number, syy: number, sxy: number): OverlapResult {
  return {
    overlap: sxx > 0 && syy > 0 ? sxy / Math.sqrt(sxx * syy) : null,
    k1: sxx > 0 ? sxy / sxx : null,
    k2: syy > 0 ? sxy / syy : null,
  };
}
