/**
 * Pearson's product-moment correlation r (Pearson 1895, Proc. R. Soc. Lond. 58:240,
 * doi:10.1098/rspl.1895.0041).
 *
 * Numerics: the rounded mean is subtracted first (an integer for integer data, so every product stays an
 * exact integer), then sums are accumulated compensated (Neumaier 1974, doi:10.1002/zamm.19740540106); for
 * integer data the per-block partial sums are exact (|dx·dy| ≤ 2^32, blocks of 2^20 items stay below 2^53)
 * and only the block totals are combined with compensation. Holds for 16 M pairs near 65535.
 *
 * Degenerate cases: n < 2 or a constant channel → null. Result clamped to [−1, 1].
 */
import { roundedMean } from './numeric';
import type { Pairs, PairArray } from './pairs';

export interface CenteredMoments {
  n: number;
  meanX: number;
  meanY: number;
  /** Σ(x − x̄)², Σ(y − ȳ)², Σ(x − x̄)(y − ȳ) */
  sxx: number;
  syy: number;
  sxy: number;
  /** true when x (resp. y) takes one value only */
  constX: boolean;
  constY: boolean;
}

/** integer data: items per exactly summed block (|dx·dy| ≤ 2^32, so a block's sums stay below 2^53) */
export const BLOCK = 1 << 20;

/** Exact-as-possible centred second moments of the first n pairs. */
export function centeredMoments(x: PairArray, y: PairArray, n: number, integer: boolean): CenteredMoments {
  if (n === 0) return { n, meanX: NaN, meanY: NaN, sxx: 0, syy: 0, sxy: 0, constX: true, constY: true };
  // first pass: sums (for the shift) and min/max (for constancy)
  let sx = 0, cx = 0, sy = 0, cy = 0;
  let x0 = x[0], y0 = y[0];
  let constX = true, constY = true;
  if (integer) {
    // integer data: plain sums are exact (n · 65535 < 2^53 for any typed-array length), so the
    // compensation below would add nothing; the result is bit for bit the same
    for (let i = 0; i < n; i++) {
      const a = x[i], b = y[i];
      if (a !== x0) constX = false;
      if (b !== y0) constY = false;
      sx += a;
      sy += b;
    }
  } else for (let i = 0; i < n; i++) {
    const a = x[i], b = y[i];
    if (a !== x0) constX = false;
    if (b !== y0) constY = false;
    let t = sx + a;
    if (Math.abs(sx) >= Math.abs(a)) cx += sx - t + a; else cx += a - t + sx;
    sx = t;
    t = sy + b;
    if (Math.abs(sy) >= Math.abs(b)) cy += sy - t + b; else cy += b - t + sy;
    sy = t;
  }
  const mx = roundedMean(sx + cx, n, integer);
  const my = roundedMean(sy + cy, n, integer);
  // second pass: shifted moments
  const acc = new Float64Array(10); // [s, c] for dx, dy, dxx, dyy, dxy
  const add = (k: number, v: number) => {
    const s = acc[k];
    const t = s + v;
    if (Math.abs(s) >= Math.abs(v)) acc[k + 1] += s - t + v; else acc[k + 1] += v - t + s;
    acc[k] = t;
  };
  if (integer) {
    for (let b0 = 0; b0 < n; b0 += BLOCK) {
      const e = Math.min(n, b0 + BLOCK);
      let pdx = 0, pdy = 0, pxx = 0, pyy = 0, pxy = 0;
      for (let i = b0; i < e; i++) {
        const dx = x[i] - mx, dy = y[i] - my;
        pdx += dx;
        pdy += dy;
        pxx += dx * dx;
        pyy += dy * dy;
        pxy += dx * dy;
      }
      add(0, pdx); add(2, pdy); add(4, pxx); add(6, pyy); add(8, pxy);
    }
  } else {
    let s0 = 0, c0 = 0, s1 = 0, c1 = 0, s2 = 0, c2 = 0, s3 = 0, c3 = 0, s4 = 0, c4 = 0;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - mx, dy = y[i] - my;
      const xx = dx * dx, yy = dy * dy, xy = dx * dy;
      let t = s0 + dx; if (Math.abs(s0) >= Math.abs(dx)) c0 += s0 - t + dx; else c0 += dx - t + s0; s0 = t;
      t = s1 + dy; if (Math.abs(s1) >= Math.abs(dy)) c1 += s1 - t + dy; else c1 += dy - t + s1; s1 = t;
      t = s2 + xx; if (s2 >= xx) c2 += s2 - t + xx; else c2 += xx - t + s2; s2 = t;
      t = s3 + yy; if (s3 >= yy) c3 += s3 - t + yy; else c3 += yy - t + s3; s3 = t;
      t = s4 + xy; if (Math.abs(s4) >= Math.abs(xy)) c4 += s4 - t + xy; else c4 += xy - t + s4; s4 = t;
    }
    acc[0] = s0; acc[1] = c0; acc[2] = s1; acc[3] = c1; acc[4] = s2; acc[5] = c2;
    acc[6] = s3; acc[7] = c3; acc[8] = s4; acc[9] = c4;
  }
  return momentsFromSums(n, mx, my, acc, constX, constY);
}

/**
 * Centred moments from the compensated sums `acc` = [s, c] pairs of Σdx, Σdy, Σdx², Σdy², Σdxdy about the
 * shift (mx, my) (also used by the fused pass of pixel-pass.ts).
 */
export function momentsFromSums(n: number, mx: number, my: number, acc: Float64Array, constX: boolean, constY: boolean): CenteredMoments {
  const dx = acc[0] + acc[1], dy = acc[2] + acc[3];
  const sxx = constX ? 0 : Math.max(0, acc[4] + acc[5] - (dx * dx) / n);
  const syy = constY ? 0 : Math.max(0, acc[6] + acc[7] - (dy * dy) / n);
  const sxy = constX || constY ? 0 : acc[8] + acc[9] - (dx * dy) / n;
  return { n, meanX: mx + dx / n, meanY: my + dy / n, sxx, syy, sxy, constX, constY };
}

/** r from centred moments; null when undefined. */
export function pearsonFromMoments(m: CenteredMoments): number | null {
  if (m.n < 2 || m.constX || m.constY || !(m.sxx > 0) || !(m.syy > 0)) return null;
  const r = m.sxy / Math.sqrt(m.sxx * m.syy);
  return r > 1 ? 1 : r < -1 ? -1 : r;
}

/** Pearson's r of the pairs; null for n < 2 or a constant channel. */
export function pearson(p: Pairs): number | null {
  return pearsonFromMoments(centeredMoments(p.x, p.y, p.n, p.integer));
}
