/**
 * Tail probabilities of the reference distributions, all delegated to the maintained jStat package
 * (https://github.com/jstat/jstat, MIT; regularized incomplete beta and gamma functions after Press et al.,
 * Numerical Recipes). No hand-written tables. Upper tails are written through the incomplete beta function
 * directly (not 1 − cdf) so that small p-values keep their relative precision.
 */
import jStat from 'jstat'; // types: ./jstat.d.ts

const clamp01 = (p: number) => (p < 0 ? 0 : p > 1 ? 1 : p);

/** Two-sided p-value of Student's t with `df` degrees of freedom: P(|T| ≥ |t|) = I_{df/(df+t²)}(df/2, 1/2). */
export function studentTTwoSided(t: number, df: number): number {
  if (!Number.isFinite(t)) return Number.isNaN(t) ? NaN : 0;
  if (!(df > 0)) throw new RangeError(`degrees of freedom must be positive, received ${df}`);
  return clamp01(jStat.ibeta(df / (df + t * t), df / 2, 0.5));
}

/** Quantile of Student's t (for t-based confidence intervals). */
export function studentTQuantile(p: number, df: number): number {
  return jStat.studentt.inv(p, df);
}

/** Upper tail of the F distribution: P(F ≥ f) = I_{d2/(d2+d1 f)}(d2/2, d1/2). */
export function fUpperTail(f: number, d1: number, d2: number): number {
  if (!(d1 > 0 && d2 > 0)) throw new RangeError(`F degrees of freedom must be positive, received ${d1}, ${d2}`);
  if (f === Infinity) return 0;
  if (!(f > 0)) return 1;
  return clamp01(jStat.ibeta(d2 / (d2 + d1 * f), d2 / 2, d1 / 2));
}

/** Upper tail of the chi-squared distribution with k degrees of freedom: 1 − P(k/2, x/2). */
export function chiSquaredUpperTail(x: number, k: number): number {
  if (!(k > 0)) throw new RangeError(`chi-squared degrees of freedom must be positive, received ${k}`);
  if (x === Infinity) return 0;
  if (!(x > 0)) return 1;
  return clamp01(1 - jStat.lowRegGamma(k / 2, x / 2));
}

/** Upper tail of the standard normal distribution, P(Z ≥ z). */
export function normalUpperTail(z: number): number {
  return clamp01(jStat.normal.cdf(-z, 0, 1));
}
