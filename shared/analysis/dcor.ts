/**
 * Distance correlation of two univariate samples, exact, O(n log L).
 *
 * - dCor (V-statistic, reported not squared, in [0, 1]): Székely, Rizzo & Bakirov (2007), "Measuring and
 *   testing dependence by correlation of distances", Ann. Statist. 35:2769, doi:10.1214/009053607000000505.
 * - Fast exact algorithm: Huo & Székely (2016), "Fast computing for distance covariance", Technometrics
 *   58:435, doi:10.1080/00401706.2015.1054435; see also Chaudhuri & Hu (2019), Comput. Stat. Data Anal.
 *   135:15, doi:10.1016/j.csda.2019.01.016. With a_ij = |x_i − x_j|, b_ij = |y_i − y_j|, row sums a_i·,
 *   grand sum a··:  n²·dCov² = S1 − (2/n)·S2 + a··b··/n², S1 = Σ_ij a_ij b_ij, S2 = Σ_i a_i· b_i·.
 *   Row sums come from level counts (O(L)); Σ_ij a_ij² = 2n·Σ(x − x̄)²; the cross term S1 from one sweep in
 *   x order with a Fenwick tree over y levels carrying count, Σx, Σy, Σxy of the items seen so far
 *   (sweep.ts: cut into y slabs, each slab's tree cache-resident; the slabs may run on several threads).
 * - Bias-corrected dCor² R*_n (U-centred) and its t-test of independence: Székely & Rizzo (2013),
 *   "The distance correlation t-test of independence in high dimension", J. Multivariate Anal. 117:193,
 *   doi:10.1016/j.jmva.2013.02.012; inner product (Székely & Rizzo 2014, Ann. Statist. 42:2382,
 *   doi:10.1214/14-AOS1255): Ω = S1/(n(n−3)) − 2·S2/(n(n−2)(n−3)) + a··b··/(n(n−1)(n−2)(n−3)).
 *   ν = n(n−3)/2, T = √(ν−1)·R* / √(1−R*²), df = ν − 1, p = P(t_df > T) (one-sided, as in R energy's
 *   dcorT.test). The Student-t tail comes from @stdlib/stats-base-dists-t-cdf (pure JS, browser-safe;
 *   agrees with R's pt to ~1e-15 including df ~ 1e13; jStat's was off by ~1e-8 at df ~ 2e4).
 *
 * Numerics: values are shifted by their rounded mean (dCor is translation invariant), sums are compensated.
 *
 * Degenerate cases: n < 2 or a constant channel → dCor null; n < 4 (or a constant channel) → the
 * bias-corrected value, T, df and p null; so is a channel whose U-centred distance matrix is 0
 * (Ω(x, x) = 0, possible for n ≥ 4 without x constant, e.g. x = [3,2,1,2,2]). R*² = 1 → T null (infinite)
 * and p = 0 (R* = 1) or 1 (R* = −1).
 */
import tCdf from '@stdlib/stats-base-dists-t-cdf';
import { NeumaierSum, roundedMean } from './numeric';
import { centredRanks } from './spearman';
import { pairSweep, type PairSweep, type SweepLevels } from './sweep';
import { prepare, type LevelIndex, type Pairs, type PreparedPairs } from './pairs';

export interface DcorResult {
  /** dCor, V-statistic, not squared */
  dcor: number | null;
  /** R*_n, bias-corrected dCor² */
  bcdcorSq: number | null;
  tStat: number | null;
  df: number | null;
  pValue: number | null;
}

interface RowSums {
  /** centred level values */
  u: Float64Array;
  /** row sum a_i· for each level */
  row: Float64Array;
  /** a·· */
  total: number;
  /** Σ_i a_i·² */
  rowSq: number;
  /** Σ_ij a_ij² = 2n Σ(x − x̄)² */
  sq: number;
}

function rowSums(li: LevelIndex, n: number, integer: boolean): RowSums {
  const { L, values, counts } = li;
  const sumAll = new NeumaierSum();
  for (let k = 0; k < L; k++) sumAll.add(values[k] * counts[k]);
  const shift = roundedMean(sumAll.value(), n, integer);
  const u = new Float64Array(L);
  let tot = 0;
  let totC = 0;
  const s2 = new NeumaierSum();
  for (let k = 0; k < L; k++) {
    const v = values[k] - shift;
    u[k] = v;
    const w = v * counts[k];
    const t = tot + w;
    if (Math.abs(tot) >= Math.abs(w)) totC += tot - t + w; else totC += w - t + tot;
    tot = t;
    s2.add(w * v);
  }
  const sumU = tot + totC;
  const sxx = Math.max(0, s2.value() - (sumU * sumU) / n);
  // row sums: a_k = u_k·cBelow − sBelow + sAbove − u_k·cAbove
  const row = new Float64Array(L);
  let cBelow = 0;
  let sBelow = 0;
  let sBelowC = 0;
  const total = new NeumaierSum();
  const rowSq = new NeumaierSum();
  for (let k = 0; k < L; k++) {
    const c = counts[k];
    const sb = sBelow + sBelowC;
    const cAbove = n - cBelow - c;
    const sAbove = sumU - sb - u[k] * c;
    const a = u[k] * (cBelow - cAbove) - sb + sAbove;
    row[k] = a;
    total.add(a * c);
    rowSq.add(a * a * c);
    cBelow += c;
    const w = u[k] * c;
    const t = sBelow + w;
    if (Math.abs(sBelow) >= Math.abs(w)) sBelowC += sBelow - t + w; else sBelowC += w - t + sBelow;
    sBelow = t;
  }
  return { u, row, total: total.value(), rowSq: rowSq.value(), sq: 2 * n * sxx };
}

/**
 * The per-level inputs of the pair sweep (sweep.ts): centred values and row sums for dCor, centred ranks for
 * ρ. Null when dCor is undefined (n < 2 or a constant channel).
 */
export function sweepLevels(pairs: Pairs | PreparedPairs): SweepLevels | null {
  const p = prepare(pairs);
  const n = p.n;
  if (n < 2) return null;
  const lx = p.levelsX, ly = p.levelsY;
  if (lx.L < 2 || ly.L < 2) return null;
  const A = rowSums(lx, n, p.integer);
  const B = rowSums(ly, n, p.integer);
  return { ux: A.u, uy: B.u, ra: A.row, rb: B.row, dx: centredRanks(lx, n), dy: centredRanks(ly, n) };
}

/**
 * S1 = Σ_ij |x_i − x_j||y_i − y_j| and S2 = Σ_i a_i· b_i· by the sweep of sweep.ts (Huo & Székely 2016),
 * which also yields Kendall's C − D and ρ's rank products (cached on the prepared pairs for kendall.ts and
 * spearman.ts). A sweep already done (e.g. split over threads by the caller) is reused.
 */
function crossTerms(p: PreparedPairs): PairSweep {
  if (!p.sweep) p.useSweep(pairSweep(p, sweepLevels(p)!));
  return p.sweep!;
}

/** upper tail P(T_df > t), computed as the lower tail at −t (no cancellation in 1 − F) */
export function studentTUpper(t: number, df: number): number {
  return tCdf(-t, df);
}

/** dCor, bias-corrected dCor², and the t-test of independence, exact. */
export function distanceCorrelation(pairs: Pairs | PreparedPairs): DcorResult {
  const p = prepare(pairs);
  const n = p.n;
  const none: DcorResult = { dcor: null, bcdcorSq: null, tStat: null, df: null, pValue: null };
  if (n < 2) return none;
  const lx = p.levelsX, ly = p.levelsY;
  if (lx.L < 2 || ly.L < 2) return none;
  const A = rowSums(lx, n, p.integer);
  const B = rowSums(ly, n, p.integer);
  const { s1: S1, s2: S2 } = crossTerms(p);
  // V-statistics scaled by n²
  const vxy = S1 - (2 / n) * S2 + (A.total * B.total) / (n * n);
  const vxx = A.sq - (2 / n) * A.rowSq + (A.total * A.total) / (n * n);
  const vyy = B.sq - (2 / n) * B.rowSq + (B.total * B.total) / (n * n);
  let dcor: number | null = null;
  if (vxx > 0 && vyy > 0) {
    const d2 = vxy / Math.sqrt(vxx * vyy);
    dcor = d2 <= 0 ? 0 : d2 >= 1 ? 1 : Math.sqrt(d2);
  }
  if (n < 4) return { ...none, dcor };
  // U-statistics scaled by n(n−3)(n−1)(n−2): integer arithmetic for small integer data. Ω(x, x) can be 0
  // for a non-constant x (e.g. x = [3,2,1,2,2]: every U-centred distance is 0); values within rounding of
  // 0 relative to the largest term count as 0.
  const u = (s1: number, s2: number, a: number, b: number) => (n - 1) * (n - 2) * s1 - 2 * (n - 1) * s2 + a * b;
  const uxy = u(S1, S2, A.total, B.total);
  const uxx = u(A.sq, A.rowSq, A.total, A.total);
  const uyy = u(B.sq, B.rowSq, B.total, B.total);
  const tiny = 1e-13 * (n - 1) * (n - 2);
  if (!(uxx > tiny * A.sq && uyy > tiny * B.sq)) return { ...none, dcor };
  let R = uxy / Math.sqrt(uxx * uyy);
  R = R > 1 ? 1 : R < -1 ? -1 : R;
  const nu = (n * (n - 3)) / 2;
  const df = nu - 1;
  if (R * R >= 1) return { dcor, bcdcorSq: R, tStat: null, df, pValue: R > 0 ? 0 : 1 };
  const T = (Math.sqrt(nu - 1) * R) / Math.sqrt(1 - R * R);
  return { dcor, bcdcorSq: R, tStat: T, df, pValue: studentTUpper(T, df) };
}
