/**
 * Costes automatic thresholds (Costes et al. 2004, "Automatic and quantitative measurement of
 * protein-protein colocalization in live cells", Biophys. J. 86:3993, doi:10.1529/biophysj.103.038422).
 *
 * 1. Fit a line y = a·x + b through the pairs: orthogonal regression (total least squares, equal error
 *    variances; Deming 1943) by default, or ordinary least squares of y on x.
 * 2. Step T1 down from the largest x, with T2 = a·T1 + b; the candidates are every integer from max x down
 *    to min x for integer data, every distinct x value for float data.
 * 3. At each step compute Pearson's r of the "below-threshold" pixels — x ≤ T1 or y ≤ T2 (default,
 *    `belowSet: 'either'`), or x ≤ T1 and y ≤ T2 (`'both'`) — and stop at the first (highest) step where
 *    r ≤ `stopAt` (default 0). Steps where r is undefined (fewer than 2 pixels, or a constant channel) do
 *    not stop the walk.
 *
 * One bucketed sweep instead of a scan of all pixels per step: because a > 0 the below set only shrinks as
 * T1 falls, so each pixel has an entry step e_i (the lowest candidate at which it is below threshold); the
 * sums (count, Σx, Σy, Σx², Σy², Σxy of shifted values) are bucketed by e_i and accumulated from the bottom:
 * O(n + K) for K candidates (O(n log K) for float data). e_i is found with the very comparison
 * `y ≤ a·t + b` the definition uses, so the result equals the step-by-step scan exactly.
 *
 * Degenerate cases: fewer than 2 pixels, a constant channel, or a slope that is not positive → thresholds
 * null. No step meets the stopping rule → the lowest step, `converged: false`.
 */
import { roundedMean } from './numeric';
import { centeredMoments } from './pearson';
import type { Pairs } from './pairs';
import type { CostesOptions, ThresholdInfo } from './types';

export function costesThresholds(p: Pairs, options: CostesOptions = {}): ThresholdInfo {
  const regression = options.regression ?? 'orthogonal';
  const belowSet = options.belowSet ?? 'either';
  const stopAt = options.stopAt ?? 0;
  if (regression !== 'orthogonal' && regression !== 'ols') throw new RangeError(`unknown Costes regression: ${String(regression)}`);
  if (belowSet !== 'either' && belowSet !== 'both') throw new RangeError(`unknown Costes below-threshold set: ${String(belowSet)}`);
  const fail: ThresholdInfo = { method: 'costes', ch1: null, ch2: null };
  const { x, y, n } = p;
  if (n < 2) return fail;
  const m = centeredMoments(x, y, n, p.integer);
  if (m.constX || m.constY || !(m.sxx > 0) || !(m.syy > 0)) return fail;
  let a: number;
  if (regression === 'ols') a = m.sxy / m.sxx;
  else {
    if (m.sxy === 0) return fail;
    const d = m.syy - m.sxx;
    a = (d + Math.sqrt(d * d + 4 * m.sxy * m.sxy)) / (2 * m.sxy);
  }
  if (!(a > 0) || !Number.isFinite(a)) return fail;
  const b = m.meanY - a * m.meanX;

  // candidates, ascending
  let min = Infinity, max = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = x[i];
    if (v < min) min = v;
    if (v > max) max = v;
  }
  let cand: Float64Array;
  if (p.integer) {
    cand = new Float64Array(max - min + 1);
    for (let k = 0; k < cand.length; k++) cand[k] = min + k;
  } else {
    const s = Float64Array.prototype.slice.call(x, 0, n).sort();
    let L = 0;
    for (let i = 0; i < n; i++) if (i === 0 || s[i] !== s[i - 1]) s[L++] = s[i];
    cand = s.slice(0, L);
  }
  const K = cand.length;
  const firstAtLeast = (t: number): number => {
    // smallest k with cand[k] >= t (K if none)
    let lo = 0, hi = K;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (cand[mid] < t) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
  // smallest k with y ≤ a·cand[k] + b (monotone in k), K if none
  const yEntry = (v: number): number => {
    let k = firstAtLeast((v - b) / a);
    while (k > 0 && v <= a * cand[k - 1] + b) k--;
    while (k < K && !(v <= a * cand[k] + b)) k++;
    return k;
  };
  const mx = roundedMean(m.meanX * n, n, p.integer);
  const my = roundedMean(m.meanY * n, n, p.integer);
  const bc = new Float64Array(K), bx = new Float64Array(K), by = new Float64Array(K);
  const bxx = new Float64Array(K), byy = new Float64Array(K), bxy = new Float64Array(K);
  for (let i = 0; i < n; i++) {
    const xv = x[i], yv = y[i];
    const ex = p.integer ? xv - min : firstAtLeast(xv);
    const ey = yEntry(yv);
    const e = belowSet === 'either' ? (ex < ey ? ex : ey) : ex > ey ? ex : ey;
    if (e >= K) continue;
    const dx = xv - mx, dy = yv - my;
    bc[e]++;
    bx[e] += dx;
    by[e] += dy;
    bxx[e] += dx * dx;
    byy[e] += dy * dy;
    bxy[e] += dx * dy;
  }
  // r at each step from prefix sums (compensated)
  const r = new Float64Array(K).fill(NaN);
  const s = new Float64Array(6), c = new Float64Array(6);
  const add = (j: number, v: number) => {
    const t = s[j] + v;
    if (Math.abs(s[j]) >= Math.abs(v)) c[j] += s[j] - t + v; else c[j] += v - t + s[j];
    s[j] = t;
  };
  for (let k = 0; k < K; k++) {
    add(0, bc[k]); add(1, bx[k]); add(2, by[k]); add(3, bxx[k]); add(4, byy[k]); add(5, bxy[k]);
    const N = s[0] + c[0];
    if (N < 2) continue;
    const sx = s[1] + c[1], sy = s[2] + c[2];
    const vxx = s[3] + c[3] - (sx * sx) / N;
    const vyy = s[4] + c[4] - (sy * sy) / N;
    if (!(vxx > 0 && vyy > 0)) continue;
    r[k] = (s[5] + c[5] - (sx * sy) / N) / Math.sqrt(vxx * vyy);
  }
  for (let k = K - 1; k >= 0; k--) {
    if (r[k] <= stopAt) {
      return {
        method: 'costes',
        ch1: cand[k],
        ch2: a * cand[k] + b,
        costes: { slope: a, intercept: b, regression, belowSet, rBelow: r[k], converged: true },
      };
    }
  }
  return {
    method: 'costes',
    ch1: cand[0],
    ch2: a * cand[0] + b,
    costes: { slope: a, intercept: b, regression, belowSet, rBelow: Number.isNaN(r[0]) ? null : r[0], converged: false },
  };
}
