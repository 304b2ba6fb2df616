/**
 * Descriptive summaries (mean, sample standard deviation, median, quartiles). Empty input gives `null`
 * fields, never NaN (RULES.md). Quantiles are Hyndman & Fan (1996) type 7 (linear interpolation between
 * order statistics; Am. Stat. 50:361, doi:10.1080/00031305.1996.10473566), the default of R and NumPy.
 */
import { neumaierSum } from '../analysis/numeric';
import { selectRank } from '../analysis/select';

export interface Summary {
  n: number;
  mean: number | null;
  sd: number | null;
  sem: number | null;
  median: number | null;
  q1: number | null;
  q3: number | null;
  min: number | null;
  max: number | null;
}

/** Arithmetic mean (compensated summation); NaN on empty input — callers map to null. */
export function mean(x: ArrayLike<number>): number {
  if (x.length === 0) return NaN;
  return neumaierSum(x) / x.length;
}

/** Sample variance with denominator n − 1 (two-pass); NaN when n < 2. */
export function variance(x: ArrayLike<number>): number {
  const n = x.length;
  if (n < 2) return NaN;
  const m = mean(x);
  let s = 0;
  let c = 0;
  for (let i = 0; i < n; i++) {
    const d = x[i] - m;
    s += d * d;
    c += d;
  }
  return (s - (c * c) / n) / (n - 1);
}

export const sd = (x: ArrayLike<number>) => Math.sqrt(variance(x));

/** Type-7 quantile of already sorted values. */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  if (!(p >= 0 && p <= 1)) throw new RangeError(`quantile probability must be in [0, 1], received ${p}`);
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/**
 * Median (type 7, as quantileSorted(sorted, 0.5)) by selection instead of a full sort: the two middle order
 * statistics found with Hoare's FIND (Hoare 1961, Commun. ACM 4:321, doi:10.1145/366622.366647), expected
 * linear time. The same value as sorting; input with NaN takes the sorting path (NaN sorts last).
 */
export function median(x: ArrayLike<number>): number {
  const a = Float64Array.from(x);
  const n = a.length;
  if (n === 0) return NaN;
  for (let i = 0; i < n; i++) if (Number.isNaN(a[i])) return quantileSorted(a.sort(), 0.5);
  const h = (n - 1) * 0.5;
  const lo = Math.floor(h);
  selectRank(a, lo);
  if (h === lo) return a[lo];
  // the next order statistic is the smallest value right of lo after the partition
  let next = a[lo + 1];
  for (let i = lo + 2; i < n; i++) if (a[i] < next) next = a[i];
  return a[lo] + (h - lo) * (next - a[lo]);
}


const nn = (v: number) => (Number.isFinite(v) ? v : null);

/** Summary of finite values (non-finite entries are rejected: the caller decides what to drop). */
export function summarize(values: ArrayLike<number>): Summary {
  const x = Float64Array.from(values);
  for (let i = 0; i < x.length; i++) if (!Number.isFinite(x[i])) throw new RangeError(`summarize needs finite values, received ${x[i]} at index ${i}`);
  x.sort();
  const n = x.length;
  const s = sd(x);
  return {
    n,
    mean: nn(mean(x)),
    sd: nn(s),
    sem: nn(s / Math.sqrt(n)),
    median: nn(quantileSorted(x, 0.5)),
    q1: nn(quantileSorted(x, 0.25)),
    q3: nn(quantileSorted(x, 0.75)),
    min: n ? x[0] : null,
    max: n ? x[n - 1] : null,
  };
}
