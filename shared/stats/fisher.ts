/**
 * Fisher's z transformation of correlation coefficients, z = atanh(r) (Fisher 1915, Biometrika 10:507,
 * doi:10.1093/biomet/10.4.507; Fisher 1921, Metron 1:3). Correlation-type coefficients are averaged on the
 * z scale and transformed back, because r itself is bounded and skewed near ±1.
 *
 * |r| = 1 would give an infinite z: values are clamped to |r| ≤ 1 − 1e-7 first (common practice; the
 * clamp is stated in the comparison's notes).
 */
export const FISHER_CLAMP = 1 - 1e-7;

export function fisherZ(r: number): number {
  if (!(r >= -1 && r <= 1)) throw new RangeError(`a correlation coefficient must be in [−1, 1], received ${r}`);
  const c = Math.max(-FISHER_CLAMP, Math.min(FISHER_CLAMP, r));
  return Math.atanh(c);
}

export const fisherZInverse = (z: number) => Math.tanh(z);

/**
 * Mean of correlation coefficients through Fisher's z: tanh(Σ wᵢ atanh(rᵢ) / Σ wᵢ). Weights default to 1;
 * pass nᵢ − 3 (the inverse variance of z) to weight by sample size. Returns null for empty input.
 */
export function fisherZMean(rs: ArrayLike<number>, weights?: ArrayLike<number>): number | null {
  if (rs.length === 0) return null;
  if (weights && weights.length !== rs.length) throw new RangeError(`weights length ${weights.length} differs from ${rs.length} coefficients`);
  let s = 0;
  let w = 0;
  for (let i = 0; i < rs.length; i++) {
    const wi = weights ? weights[i] : 1;
    if (!(wi >= 0)) throw new RangeError(`weights must be ≥ 0, received ${wi}`);
    s += wi * fisherZ(rs[i]);
    w += wi;
  }
  return w > 0 ? Math.tanh(s / w) : null;
}
