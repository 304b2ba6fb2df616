/**
 * Bleed-through coefficient from a single-label control: on a field labelled in channel 1 only, channel 2
 * sees a21·t1 plus its background, so a21 is the slope of channel 2 against channel 1 (a12 likewise from a
 * channel-2-only control, slope of channel 1 against channel 2). Correction: unmix.ts (Zimmermann,
 * Rietdorf & Pepperkok 2003, FEBS Lett. 546:87, doi:10.1016/S0014-5793(03)00521-0).
 *
 * Estimate: the ordinary least-squares slope with an intercept, Σ(x − x̄)(y − ȳ) / Σ(x − x̄)², over the
 * region's pixels (NaN pixels left out). The intercept absorbs a constant background in either channel,
 * so no background has to be known (common practice). Noise in the labelled channel biases the slope
 * towards 0 by the factor var(signal) / (var(signal) + var(noise)); on a control with a wide intensity
 * range (cells and background) this is well under 1 %. Moments come from `centeredMoments` (pearson.ts).
 *
 * Degenerate: fewer than 2 pixels or a constant labelled channel → null.
 */
import { collectPairs } from './pairs';
import { centeredMoments } from './pearson';
import type { ChannelArray, RegionSpec } from './types';

/** Slope of `seen` against `labelled` over `region` (null = whole image); null when undefined. */
export function bleedThroughSlope(labelled: ChannelArray, seen: ChannelArray, region: RegionSpec = null): number | null {
  const p = collectPairs(labelled, seen, region);
  const m = centeredMoments(p.x, p.y, p.n, p.integer);
  if (m.n < 2 || m.constX || !(m.sxx > 0)) return null;
  const s = m.sxy / m.sxx;
  return Object.is(s, -0) ? 0 : s;
}

/**
 * The slope over several single-label controls of the same label: the pooled within-control least-squares
 * slope Σ_c Sxy_c / Σ_c Sxx_c, each control centred on its own means (the fixed-effects slope of one
 * regression with an intercept per control, e.g. Draper & Smith 1998, Applied Regression Analysis, 3rd
 * ed., ch. 14). Each control may have its own constant background; with one control it is exactly
 * `bleedThroughSlope`. `n` counts the pixels that entered (NaN pixels left out).
 *
 * Degenerate: no control with at least 2 pixels and a varying labelled channel → slope null.
 */
export function pooledBleedThroughSlope(controls: { labelled: ChannelArray; seen: ChannelArray }[]): { slope: number | null; n: number } {
  let sxy = 0, sxx = 0, n = 0;
  for (const c of controls) {
    const p = collectPairs(c.labelled, c.seen, null);
    const m = centeredMoments(p.x, p.y, p.n, p.integer);
    if (m.n < 2 || m.constX) continue;
    sxy += m.sxy;
    sxx += m.sxx;
    n += m.n;
  }
  if (!(sxx > 0)) return { slope: null, n };
  const s = sxy / sxx;
  return { slope: Object.is(s, -0) ? 0 : s, n };
}
