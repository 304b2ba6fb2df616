/**
 * Hypothesis tests on replicate-level (coverslip-level) summaries. Distributions come from jStat
 * (./distributions.ts). Each function checks its inputs (finite numbers, group sizes) and returns `p: null`
 * with a `note` in degenerate cases (e.g. zero variance everywhere) instead of NaN.
 *
 * References: Welch (1947) Biometrika 34:28–35, doi:10.1093/biomet/34.1-2.28; Mann & Whitney (1947)
 * Ann. Math. Stat. 18:50–60, doi:10.1214/aoms/1177730491; Kruskal & Wallis (1952) J. Am. Stat. Assoc.
 * 47:583–621, doi:10.1080/01621459.1952.10483441; Fisher (1925) Statistical Methods for Research Workers
 * (one-way analysis of variance). The conventions (continuity correction, exact/asymptotic choice) follow
 * SciPy 1.10 `scipy.stats` so that tests/fixtures/stats/generate.py can serve as the reference.
 */
import { chiSquaredUpperTail, fUpperTail, normalUpperTail, studentTTwoSided } from './distributions';
import { mean, variance } from './descriptive';
import { averageRanks } from './ranks';

export interface TestResult {
  test: 'welch_t' | 'mann_whitney_u' | 'one_way_anova' | 'kruskal_wallis';
  statistic: number | null;
  /** degrees of freedom: [df] for t and χ², [df1, df2] for F; [] when none */
  df: number[];
  p: number | null;
  /** how the p-value was obtained or why it is missing */
  note: string;
}

const fin = (v: number) => (Number.isFinite(v) ? v : null);

function checkSample(x: ArrayLike<number>, name: string) {
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i])) throw new RangeError(`${name} must hold finite numbers, received ${x[i]} at index ${i}`);
  }
}

/**
 * Welch's unequal-variance t-test (two-sided), Welch (1947). t = (x̄ − ȳ)/√(s²x/nx + s²y/ny), degrees of
 * freedom by the Welch–Satterthwaite formula. Needs at least 2 values per group.
 */
export function welchT(x: ArrayLike<number>, y: ArrayLike<number>): TestResult {
  checkSample(x, 'first sample');
  checkSample(y, 'second sample');
  const nx = x.length;
  const ny = y.length;
  if (nx < 2 || ny < 2) return { test: 'welch_t', statistic: null, df: [], p: null, note: `needs at least 2 values per group (received ${nx} and ${ny})` };
  const vx = variance(x) / nx;
  const vy = variance(y) / ny;
  const se2 = vx + vy;
  const d = mean(x) - mean(y);
  if (!(se2 > 0)) return { test: 'welch_t', statistic: null, df: [], p: null, note: 'both groups have zero variance' };
  const t = d / Math.sqrt(se2);
  const df = (se2 * se2) / ((vx * vx) / (nx - 1) + (vy * vy) / (ny - 1));
  return { test: 'welch_t', statistic: t, df: [df], p: studentTTwoSided(t, df), note: 'two-sided, Welch–Satterthwaite degrees of freedom' };
}

/**
 * Number of arrangements of the Mann–Whitney U statistic for sample sizes m and n, i.e. the coefficients of
 * the Gaussian binomial coefficient [m+n choose m]_q (Mann & Whitney 1947 recurrence, computed through
 * [N choose k]_q = [N−1 choose k−1]_q + q^k [N−1 choose k]_q with additions only). Returned normalized as
 * probabilities P(U = u), u = 0..mn.
 */
export function mannWhitneyExactPmf(m: number, n: number): Float64Array {
  if (m > n) [m, n] = [n, m];
  // P[k] holds the coefficients of [N choose k]_q for the current N, k = 0..m
  let P: Float64Array[] = [Float64Array.of(1)];
  for (let N = 1; N <= m + n; N++) {
    const kmax = Math.min(N, m);
    const next: Float64Array[] = new Array(kmax + 1);
    for (let k = 0; k <= kmax; k++) {
      const deg = k * (N - k);
      const out = new Float64Array(deg + 1);
      const a = k >= 1 ? P[k - 1] : undefined; // [N−1 choose k−1]
      const b = k <= N - 1 && k < P.length ? P[k] : undefined; // [N−1 choose k], shifted by k
      if (a) for (let i = 0; i < a.length; i++) out[i] += a[i];
      if (b) for (let i = 0; i < b.length; i++) out[i + k] += b[i];
      next[k] = out;
    }
    P = next;
  }
  const counts = P[m];
  let total = 0;
  for (let i = 0; i < counts.length; i++) total += counts[i];
  return counts.map((c) => c / total);
}

export interface MannWhitneyOptions {
  /** 'auto' (default): exact when either sample has ≤ 8 values and there are no ties, as SciPy does */
  method?: 'auto' | 'exact' | 'asymptotic';
  /** continuity correction of the normal approximation (default true, as SciPy) */
  continuity?: boolean;
}

/**
 * Mann–Whitney U test, two-sided (Mann & Whitney 1947). The statistic is U of the first sample,
 * U₁ = R₁ − n₁(n₁+1)/2. Normal approximation with the tie-corrected variance
 * n₁n₂/12 · ((n+1) − Σ(t³−t)/(n(n−1))) and a continuity correction; exact null distribution for small
 * samples without ties. The two-sided p is 2·P(U ≥ max(U₁, U₂)), capped at 1.
 */
export function mannWhitneyU(x: ArrayLike<number>, y: ArrayLike<number>, opts: MannWhitneyOptions = {}): TestResult {
  checkSample(x, 'first sample');
  checkSample(y, 'second sample');
  const n1 = x.length;
  const n2 = y.length;
  if (n1 < 1 || n2 < 1) return { test: 'mann_whitney_u', statistic: null, df: [], p: null, note: `needs at least 1 value per group (received ${n1} and ${n2})` };
  const pooled = new Float64Array(n1 + n2);
  pooled.set(Array.from(x), 0);
  pooled.set(Array.from(y), n1);
  const { ranks, tieTerm, hasTies } = averageRanks(pooled);
  let r1 = 0;
  for (let i = 0; i < n1; i++) r1 += ranks[i];
  const u1 = r1 - (n1 * (n1 + 1)) / 2;
  const u2 = n1 * n2 - u1;
  const u = Math.max(u1, u2);
  const method = opts.method ?? 'auto';
  const exact = method === 'exact' || (method === 'auto' && !(n1 > 8 && n2 > 8) && !hasTies);
  if (exact) {
    if (hasTies) throw new RangeError('the exact Mann–Whitney distribution assumes no ties; the samples contain ties');
    const pmf = mannWhitneyExactPmf(n1, n2);
    // P(U ≥ u) = P(U ≤ mn − u) by symmetry; sum the smaller side
    let sf = 0;
    const kmax = n1 * n2 - Math.round(u);
    for (let k = 0; k <= kmax; k++) sf += pmf[k];
    return { test: 'mann_whitney_u', statistic: u1, df: [], p: Math.min(1, 2 * sf), note: 'two-sided, exact null distribution (no ties)' };
  }
  const n = n1 + n2;
  const s = Math.sqrt(((n1 * n2) / 12) * (n + 1 - tieTerm / (n * (n - 1))));
  if (!(s > 0)) return { test: 'mann_whitney_u', statistic: u1, df: [], p: null, note: 'all values are tied' };
  const cc = opts.continuity === false ? 0 : 0.5;
  const z = (u - (n1 * n2) / 2 - cc) / s;
  return {
    test: 'mann_whitney_u',
    statistic: u1,
    df: [],
    p: Math.min(1, 2 * normalUpperTail(z)),
    note: `two-sided, normal approximation with tie correction${cc ? ' and continuity correction' : ''}`,
  };
}

/** One-way analysis of variance F test (Fisher 1925) across k ≥ 2 groups. */
export function oneWayAnova(groups: ArrayLike<number>[]): TestResult {
  groups.forEach((g, i) => checkSample(g, `group ${i + 1}`));
  const k = groups.length;
  const N = groups.reduce((s, g) => s + g.length, 0);
  if (k < 2 || groups.some((g) => g.length < 1) || N - k < 1) {
    return { test: 'one_way_anova', statistic: null, df: [], p: null, note: `needs ≥ 2 non-empty groups and more values than groups (received sizes ${groups.map((g) => g.length).join(', ')})` };
  }
  const means = groups.map((g) => mean(g));
  let grand = 0;
  groups.forEach((g, i) => (grand += means[i] * g.length));
  grand /= N;
  let ssb = 0;
  let ssw = 0;
  groups.forEach((g, i) => {
    ssb += g.length * (means[i] - grand) ** 2;
    for (let j = 0; j < g.length; j++) ssw += (g[j] - means[i]) ** 2;
  });
  const df1 = k - 1;
  const df2 = N - k;
  if (!(ssw > 0)) return { test: 'one_way_anova', statistic: null, df: [df1, df2], p: null, note: 'no variation within groups' };
  const F = ssb / df1 / (ssw / df2);
  return { test: 'one_way_anova', statistic: F, df: [df1, df2], p: fUpperTail(F, df1, df2), note: 'F test, equal variances assumed' };
}

/**
 * Kruskal–Wallis H test (Kruskal & Wallis 1952) with the tie correction H / (1 − Σ(t³−t)/(N³−N)),
 * χ² approximation with k − 1 degrees of freedom.
 */
export function kruskalWallis(groups: ArrayLike<number>[]): TestResult {
  groups.forEach((g, i) => checkSample(g, `group ${i + 1}`));
  const k = groups.length;
  const N = groups.reduce((s, g) => s + g.length, 0);
  if (k < 2 || groups.some((g) => g.length < 1)) {
    return { test: 'kruskal_wallis', statistic: null, df: [], p: null, note: `needs ≥ 2 non-empty groups (received sizes ${groups.map((g) => g.length).join(', ')})` };
  }
  const pooled = new Float64Array(N);
  let o = 0;
  for (const g of groups) for (let j = 0; j < g.length; j++) pooled[o++] = g[j];
  const { ranks, tieTerm } = averageRanks(pooled);
  let h = 0;
  o = 0;
  for (const g of groups) {
    let r = 0;
    for (let j = 0; j < g.length; j++) r += ranks[o++];
    h += (r * r) / g.length;
  }
  h = (12 / (N * (N + 1))) * h - 3 * (N + 1);
  const c = 1 - tieTerm / (N * N * N - N);
  if (!(c > 0)) return { test: 'kruskal_wallis', statistic: null, df: [k - 1], p: null, note: 'all values are tied' };
  h /= c;
  return { test: 'kruskal_wallis', statistic: fin(h), df: [k - 1], p: chiSquaredUpperTail(h, k - 1), note: 'χ² approximation with tie correction' };
}
