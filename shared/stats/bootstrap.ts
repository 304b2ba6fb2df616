/**
 * Hierarchical (two-stage) bootstrap for replicate-aware confidence intervals.
 *
 * Each resample draws, independently per condition, coverslips with replacement (as many as the condition
 * has), then cells with replacement within each drawn coverslip (as many as that coverslip has); the
 * condition statistic is the mean of the coverslip means. Percentile intervals (Efron & Tibshirani 1993,
 * An Introduction to the Bootstrap, ch. 13). The design follows Saravanan, Berman & Sober (2020), "Application
 * of the hierarchical bootstrap to multi-level data in neuroscience", Neurons Behav. Data Anal. Theory 3(5),
 * PMC7906290, and the replicate-first view of Lord et al. (2020) J. Cell Biol. 219:e202001064,
 * doi:10.1083/jcb.202001064. Seeded with xoshiro128** (shared/analysis/prng.ts), so a result can be repeated.
 *
 * `transform: 'fisher_z'` averages correlation coefficients on Fisher's z scale (./fisher.ts) and reports
 * estimates and intervals back on the r scale.
 *
 * `normalAbove: k` draws the cell-level resample of a coverslip with more than k cells from the limit of its
 * distribution instead of drawing its cells one by one (the cost of a resample then no longer grows with the
 * cells): the mean of n cells drawn with replacement is asymptotically normal with the coverslip's mean and
 * variance σ̂²/n, σ̂² = Σ(x − x̄)²/n (Bickel & Freedman 1981, Ann. Statist. 9:1196, doi:10.1214/aos/1176345637),
 * and its one-term Edgeworth expansion (Singh 1981, Ann. Statist. 9:1187, doi:10.1214/aos/1176345636) is matched
 * by the Cornish–Fisher transform Z + γ̂(Z² − 1)/(6√n) of a standard normal Z (Cornish & Fisher 1938, Rev. Inst.
 * Int. Stat. 5:307, doi:10.2307/1400905), γ̂ the cells' skewness, so the draw is right to O(1/n) in
 * distribution. Z is Box–Muller (Box & Muller 1958, Ann. Math. Stat. 29:610) from two draws of the same
 * generator. Coverslips at or below k cells are resampled cell by cell, exactly as without the option.
 */
import { Xoshiro128 } from '../analysis/prng';
import { quantileSorted } from './descriptive';
import { fisherZ } from './fisher';

/** One condition: a list of coverslips, each a list of cell values. */
export type Hierarchy = ArrayLike<number>[];

export interface HierarchicalBootstrapOptions {
  resamples?: number;
  seed?: number;
  /** two-sided confidence level, default 0.95 */
  confidence?: number;
  transform?: 'identity' | 'fisher_z';
  /** coverslips with more cells than this draw their cell-level resample from its normal limit (above) */
  normalAbove?: number;
  /** the values are already on the transform's scale (z = fisherZ(r), computed by the caller, who needs them
   * too): they are used as given (not copied), and estimates and intervals still come back on the r scale. The
   * same numbers as passing the untransformed values. */
  transformed?: boolean;
}

export interface Interval {
  estimate: number | null;
  lower: number | null;
  upper: number | null;
}

export interface HierarchicalBootstrapResult {
  resamples: number;
  seed: number;
  confidence: number;
  transform: 'identity' | 'fisher_z';
  /** per condition: mean of coverslip means with its interval */
  conditions: Interval[];
  /** every pair i < j: estimate of condition j minus condition i */
  differences: (Interval & { a: number; b: number })[];
  /** the `normalAbove` used (null: every coverslip resampled cell by cell) */
  normalAbove: number | null;
  /** coverslips whose cell-level resample was drawn from its normal limit */
  normalCoverslips: number;
}

export const DEFAULT_RESAMPLES = 2000;

export function hierarchicalBootstrap(conditions: Hierarchy[], opts: HierarchicalBootstrapOptions = {}): HierarchicalBootstrapResult {
  const B = opts.resamples ?? DEFAULT_RESAMPLES;
  const seed = opts.seed ?? 1;
  const conf = opts.confidence ?? 0.95;
  const transform = opts.transform ?? 'identity';
  if (!(Number.isInteger(B) && B >= 10 && B <= 1_000_000)) throw new RangeError(`resamples must be an integer in [10, 1e6], received ${B}`);
  if (!(conf > 0 && conf < 1)) throw new RangeError(`confidence must be in (0, 1), received ${conf}`);
  const normalAbove = opts.normalAbove ?? Infinity;
  if (!(normalAbove >= 1)) throw new RangeError(`normalAbove must be at least 1, received ${opts.normalAbove}`);
  const fwd = transform === 'fisher_z' && !opts.transformed ? fisherZ : (v: number) => v;
  const back = transform === 'fisher_z' ? Math.tanh : (v: number) => v;

  // transformed, non-empty coverslips per condition
  const data: Float64Array[][] = conditions.map((cond, ci) =>
    cond
      .map((cs, si) => {
        if (opts.transformed && cs instanceof Float64Array) {
          for (let i = 0; i < cs.length; i++) if (!Number.isFinite(cs[i])) throw new RangeError(`condition ${ci + 1}, coverslip ${si + 1}: value ${cs[i]} at index ${i} is not finite`);
          return cs;
        }
        const out = new Float64Array(cs.length);
        for (let i = 0; i < cs.length; i++) {
          const v = cs[i];
          if (!Number.isFinite(v)) throw new RangeError(`condition ${ci + 1}, coverslip ${si + 1}: value ${v} at index ${i} is not finite`);
          out[i] = fwd(v);
        }
        return out;
      })
      .filter((cs) => cs.length > 0),
  );
  const observed = data.map((cond) => (cond.length ? back(meanOfMeans(cond)) : null));
  // per coverslip above normalAbove: [mean, σ̂/√n, γ̂/(6√n)] of its normal limit; null for the others
  const limits = data.map((cond) => cond.map((cs) => (cs.length > normalAbove ? normalLimit(cs) : null)));
  const normalCoverslips = limits.reduce((s, c) => s + c.filter((l) => l !== null).length, 0);

  const rng = new Xoshiro128(seed);
  const k = data.length;
  const boot: Float64Array[] = data.map(() => new Float64Array(B));
  for (let b = 0; b < B; b++) {
    for (let c = 0; c < k; c++) {
      const cond = data[c];
      const m = cond.length;
      if (m === 0) continue;
      let sum = 0;
      const lim = limits[c];
      for (let s = 0; s < m; s++) {
        const pick = rng.nextInt(m);
        const cs = cond[pick];
        const n = cs.length;
        const l = lim[pick];
        if (l) {
          const u1 = (rng.nextUint32() + 1) / 4294967296;
          const z = Math.sqrt(-2 * Math.log(u1)) * Math.cos((2 * Math.PI * rng.nextUint32()) / 4294967296);
          sum += l[0] + l[1] * (z + l[2] * (z * z - 1));
          continue;
        }
        let t = 0;
        // multiply-shift index (Lemire 2019, ACM Trans. Model. Comput. Simul. 29:3, doi:10.1145/3230636) without
        // its rejection step: bias below n / 2^32, negligible for cell counts
        for (let i = 0; i < n; i++) t += cs[Math.floor((rng.nextUint32() * n) / 4294967296)];
        sum += t / n;
      }
      boot[c][b] = back(sum / m);
    }
  }
  const lo = (1 - conf) / 2;
  const hi = 1 - lo;
  const interval = (est: number | null, arr: Float64Array | null): Interval => {
    if (est === null || !arr) return { estimate: null, lower: null, upper: null };
    const s = Float64Array.from(arr).sort();
    return { estimate: est, lower: quantileSorted(s, lo), upper: quantileSorted(s, hi) };
  };
  const condIntervals = data.map((cond, c) => interval(observed[c], cond.length ? boot[c] : null));
  const differences: HierarchicalBootstrapResult['differences'] = [];
  for (let a = 0; a < k; a++) {
    for (let b = a + 1; b < k; b++) {
      const ea = observed[a];
      const eb = observed[b];
      if (ea === null || eb === null) {
        differences.push({ a, b, estimate: null, lower: null, upper: null });
        continue;
      }
      const d = new Float64Array(B);
      for (let i = 0; i < B; i++) d[i] = boot[b][i] - boot[a][i];
      differences.push({ a, b, ...interval(eb - ea, d) });
    }
  }
  return { resamples: B, seed, confidence: conf, transform, conditions: condIntervals, differences, normalAbove: Number.isFinite(normalAbove) ? normalAbove : null, normalCoverslips };
}

/** [x̄, σ̂/√n, γ̂/(6√n)] of a coverslip's cells (population moments; γ̂ = 0 when σ̂ = 0). */
function normalLimit(cs: Float64Array): [number, number, number] {
  const n = cs.length;
  let t = 0;
  for (let i = 0; i < n; i++) t += cs[i];
  const m = t / n;
  let m2 = 0, m3 = 0;
  for (let i = 0; i < n; i++) {
    const d = cs[i] - m;
    m2 += d * d;
    m3 += d * d * d;
  }
  m2 /= n;
  m3 /= n;
  const sd = Math.sqrt(m2);
  return [m, sd / Math.sqrt(n), sd > 0 ? m3 / (sd * sd * sd) / (6 * Math.sqrt(n)) : 0];
}

function meanOfMeans(cond: Float64Array[]): number {
  let s = 0;
  for (const cs of cond) {
    let t = 0;
    for (let i = 0; i < cs.length; i++) t += cs[i];
    s += t / cs.length;
  }
  return s / cond.length;
}
