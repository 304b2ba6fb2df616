/**
 * One pass over the pairs of integer data for every coefficient that sums over the items themselves:
 * the centred moments of Pearson's r (pearson.ts), Σx², Σy², Σxy of the overlap coefficients (overlap.ts),
 * the four sums of Manders' M1/M2 (manders.ts) and the sign count of Li's ICQ (icq.ts). Each module's own
 * function reads the pairs once more for its sums; this pass reads them once for all, with the same
 * arithmetic (the same shift, the same exact blocks of BLOCK items, the same compensated totals), so the
 * values are bit for bit those of the separate functions. The shift and constancy come from the level
 * counts (exact integer sums), which the rank-based coefficients need anyway.
 *
 * Float data (Float64 storage) is not handled here: null, and the separate functions apply.
 */
import { BLOCK, momentsFromSums, type CenteredMoments } from './pearson';
import { overlapFromSums, type OverlapResult } from './overlap';
import { mandersFromSums, type MandersResult } from './manders';
import { roundedMean } from './numeric';
import type { LevelIndex, PreparedPairs } from './pairs';

export interface PixelPassResult {
  moments: CenteredMoments;
  overlap: OverlapResult;
  manders: MandersResult;
  icq: number | null;
}

function addTo(acc: Float64Array, i: number, v: number): void {
  const s = acc[i];
  const t = s + v;
  if (Math.abs(s) >= Math.abs(v)) acc[i + 1] += s - t + v;
  else acc[i + 1] += v - t + s;
  acc[i] = t;
}

function exactSum(li: LevelIndex): number {
  let s = 0;
  for (let k = 0; k < li.L; k++) s += li.values[k] * li.counts[k];
  return s;
}

/** floor(s / n) for integers s ≥ 0, n > 0 below 2^53, checked exactly */
function floorDiv(s: number, n: number): number {
  let k = Math.floor(s / n);
  while (k * n > s) k--;
  while ((k + 1) * n <= s) k++;
  return k;
}

/** The fused pass for integer pairs with thresholds t1, t2 (Manders); null for float data or no pairs. */
export function pixelPass(p: PreparedPairs, t1: number | null, t2: number | null): PixelPassResult | null {
  const n = p.n;
  if (!p.integer || n === 0 || !(p.x instanceof Uint16Array) || !(p.y instanceof Uint16Array)) return null;
  const x = p.x, y = p.y;
  const lx = p.levelsX, ly = p.levelsY;
  const sx = exactSum(lx), sy = exactSum(ly);
  const mx = roundedMean(sx, n, true), my = roundedMean(sy, n, true);
  const constX = lx.L === 1, constY = ly.L === 1;
  // ICQ: (x·n − Σx)(y·n − Σy) > 0, i.e. x, y both at or above hi, or both at or below lo (integers)
  const icqDefined = n >= 2 && !constX && !constY;
  const fx = floorDiv(sx, n), fy = floorDiv(sy, n);
  const hiX = fx + 1, hiY = fy + 1;
  const loX = fx * n === sx ? fx - 1 : fx, loY = fy * n === sy ? fy - 1 : fy;
  const manders = t1 !== null && t2 !== null && Number.isFinite(t1) && Number.isFinite(t2);
  const T1 = manders ? t1 : Infinity, T2 = manders ? t2 : Infinity;
  // exact integer block sums (a block of BLOCK items stays below 2^53), totals exact in BigInt
  let Sx2 = 0n, Sy2 = 0n, Sxy = 0n;
  const md = new Float64Array(8); // Manders num1, den1, num2, den2
  let pos = 0;
  for (let b0 = 0; b0 < n; b0 += BLOCK) {
    const e = Math.min(n, b0 + BLOCK);
    let rxx = 0, ryy = 0, rxy = 0;
    let n1 = 0, d1 = 0, n2 = 0, d2 = 0;
    for (let i = b0; i < e; i++) {
      const a = x[i], b = y[i];
      rxx += a * a;
      ryy += b * b;
      rxy += a * b;
      const ia = a > T1, ib = b > T2;
      d1 += ia ? a : 0;
      d2 += ib ? b : 0;
      if (ia && ib) {
        n1 += a;
        n2 += b;
      }
      pos += (+(a >= hiX) & +(b >= hiY)) | (+(a <= loX) & +(b <= loY));
    }
    Sx2 += BigInt(rxx);
    Sy2 += BigInt(ryy);
    Sxy += BigInt(rxy);
    addTo(md, 0, n1);
    addTo(md, 2, d1);
    addTo(md, 4, n2);
    addTo(md, 6, d2);
  }
  // the centred sums about the integer shift, exactly: Σ(x − mx)(y − my) = Σxy − my·Σx − mx·Σy + n·mx·my
  // (each rounded once, as the compensated sums of exact blocks in pearson.ts are)
  const N = BigInt(n), X = BigInt(sx), Y = BigInt(sy), MX = BigInt(mx), MY = BigInt(my);
  const dX = X - N * MX, dY = Y - N * MY;
  const acc = Float64Array.of(
    Number(dX), 0,
    Number(dY), 0,
    Number(Sx2 - 2n * MX * X + N * MX * MX), 0,
    Number(Sy2 - 2n * MY * Y + N * MY * MY), 0,
    Number(Sxy - MY * X - MX * Y + N * MX * MY), 0,
  );
  const raw = Float64Array.of(Number(Sx2), 0, Number(Sy2), 0, Number(Sxy), 0);
  return {
    moments: momentsFromSums(n, mx, my, acc, constX, constY),
    overlap: overlapFromSums(raw[0] + raw[1], raw[2] + raw[3], raw[4] + raw[5]),
    manders: manders ? mandersFromSums(md[0] + md[1], md[2] + md[3], md[4] + md[5], md[6] + md[7]) : { m1: null, m2: null },
    icq: icqDefined ? pos / n - 0.5 : null,
  };
}
