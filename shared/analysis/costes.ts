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
 * O(n + K·log K) for K candidates. e_i is found with the very comparison
 * `y ≤ a·t + b` the definition uses, so the result equals the step-by-step scan exactly.
 *
 * Degenerate cases: fewer than 2 pixels, a constant channel, or a slope that is not positive → thresholds
 * null. No step meets the stopping rule → the lowest step, `converged: false`.
 */
import { roundedMean } from './numeric';
import { centeredMoments } from './pearson';
import { prepare, type Pairs, type PreparedPairs } from './pairs';
import type { CostesOptions, ThresholdInfo } from './types';

export function costesThresholds(p: Pairs | PreparedPairs, options: CostesOptions = {}): ThresholdInfo {
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
  const pp = prepare(p);
  const lx = pp.levelsX, ly = pp.levelsY;
  const min = lx.values[0], max = lx.values[lx.L - 1];
  let cand: Float64Array;
  if (p.integer) {
    cand = new Float64Array(max - min + 1);
    for (let k = 0; k < cand.length; k++) cand[k] = min + k;
  } else cand = lx.values;
  const K = cand.length;
  // entry step of each y level: smallest k with y ≤ a·cand[k] + b (monotone in k), K if none
  const eyLevel = new Int32Array(ly.L);
  for (let j = 0; j < ly.L; j++) {
    const v = ly.values[j];
    const tq = (v - b) / a;
    let lo = 0, hi = K;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (cand[mid] < tq) lo = mid + 1;
      else hi = mid;
    }
    let k = lo;
    while (k > 0 && v <= a * cand[k - 1] + b) k--;
    while (k < K && !(v <= a * cand[k] + b)) k++;
    eyLevel[j] = k;
  }
  // entry step of each x level
  const exLevel = new Int32Array(lx.L);
  for (let j = 0; j < lx.L; j++) exLevel[j] = p.integer ? lx.values[j] - min : j;
  const mx = roundedMean(m.meanX * n, n, p.integer);
  const my = roundedMean(m.meanY * n, n, p.integer);
  // per-step sums, interleaved (one cache line per step): count, Σdx, Σdy, Σdx², Σdy², Σdxy.
  // Visiting the pairs in x order keeps most updates on the same step (sequential memory access).
  const bk = new Float64Array(K * 8);
  const either = belowSet === 'either';
  const { start, yRank } = pp.sortedByX;
  const dyLevel = new Float64Array(ly.L);
  for (let j = 0; j < ly.L; j++) dyLevel[j] = ly.values[j] - my;
  for (let g = 0; g < lx.L; g++) {
    const ex = exLevel[g];
    const dx = lx.values[g] - mx;
    const dxx = dx * dx;
    for (let q = start[g], qe = start[g + 1]; q < qe; q++) {
      const r = yRank[q];
      const ey = eyLevel[r];
      const e = either ? (ex < ey ? ex : ey) : ex > ey ? ex : ey;
      if (e >= K) continue;
      const dy = dyLevel[r];
      const o = e << 3;
      bk[o]++;
      bk[o + 1] += dx;
      bk[o + 2] += dy;
      bk[o + 3] += dxx;
      bk[o + 4] += dy * dy;
      bk[o + 5] += dx * dy;
    }
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
    const o = k << 3;
    for (let j = 0; j < 6; j++) add(j, bk[o + j]);
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
