/**
 * The value axis of Compare's plot: the data (cells, intervals, means) padded by 5 % and rounded to nice
 * ticks, then kept inside the coefficient's natural range from the registry (`axis` in shared/coefficients.ts:
 * [−1, 1] for r, ρ and τ-b, [0, 1] for Manders' and overlap coefficients…), so padding and rounding never draw
 * a correlation beyond ±1. Coefficients without a natural range follow the data alone.
 */
import { scaleLinear } from 'd3';

export function plotDomain(values: readonly (number | null)[], axis: readonly [number, number] | null): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (v === null || !Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!Number.isFinite(lo)) [lo, hi] = axis ? [axis[0], axis[1]] : [0, 1];
  if (lo === hi) [lo, hi] = [lo - 0.5, hi + 0.5];
  const pad = (hi - lo) * 0.05;
  let [a, b] = scaleLinear()
    .domain([lo - pad, hi + pad])
    .nice()
    .domain() as [number, number];
  if (axis) {
    a = Math.max(a, axis[0]);
    b = Math.min(b, axis[1]);
    if (!(b > a)) [a, b] = [axis[0], axis[1]];
  }
  return [a, b];
}
