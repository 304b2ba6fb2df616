/**
 * Monte Carlo test of spot pairing against chance placement, conditioned on the spot counts (Besag &
 * Diggle 1977, "Simple Monte Carlo tests for spatial pattern", Appl. Stat. 26:327–333, doi:10.2307/2346974;
 * the add-one p-value of Davison & Hinkley 1997, "Bootstrap Methods and their Application", CUP, §4.2).
 *
 * The channel-1 spots stay where they are; the n₂ channel-2 spots are placed independently and uniformly at
 * random over the region: a region pixel is drawn uniformly (seeded xoshiro128**, prng.ts), then a
 * position uniformly inside that pixel (x + U, y + U, U ∈ [0, 1)) — so the null model is the uniform
 * distribution on the region's area, and the pixel grid leaves no trace in the distances. N placements.
 *
 * Statistic: the paired fraction of channel 1 (nearest channel-2 spot within d). Because it takes few
 * values, ties are broken by S = Σᵢ min(dᵢ, d) over channel-1 spots (dᵢ its nearest channel-2 distance):
 * of two placements with the same paired fraction, the one with the closer pairs is more extreme. With
 * the tie-break the statistic is continuous, so p is uniform under the null rather than conservative.
 * p = (1 + #{placements at least as extreme as observed}) / (N + 1); `chanceFraction1` is the mean paired
 * fraction over the placements (the expected fraction under chance).
 *
 * Optionally the cross-type Ripley's K (ripley.ts, no edge correction, A = the region's pixel count) of
 * every placement at the given radii: its pointwise 2.5 % and 97.5 % quantiles form the envelope that
 * carries the cell's own edge effect, and p per radius = (1 + #{K_random ≥ K_observed}) / (N + 1).
 *
 * Degenerate: no channel-1 or no channel-2 spot, or N = 0 → p and chance fraction null.
 */
import { PointGrid, checkPairDistance } from './pairing';
import { Xoshiro128 } from './prng';

export const SPOT_TEST_DEFAULTS = { placements: 999, seed: 1 } as const;

export interface SpotTestOptions {
  pairDistance: number;
  placements?: number;
  seed?: number;
  /** radii for the cross-type K envelope (none by default) */
  kRadii?: number[];
}

export interface KEnvelope {
  radii: number[];
  observed: number[];
  L: number[];
  mean: number[];
  lo: number[];
  hi: number[];
  pValue: number[];
}

export interface SpotTestResult {
  pValue: number | null;
  chanceFraction1: number | null;
  observedPaired1: number | null;
  placements: number;
  envelope: KEnvelope | null;
}

/**
 * The score of one placement from each channel-1 spot's nearest channel-2 distance (Infinity when none is
 * within reach): the paired count (≤ d) and the sum of the distances capped at d (the tie-break statistic).
 * Shared by the 2-D and 3-D tests.
 */
export function pairedScore(best: Float64Array, n1: number, d: number): [number, number] {
  let count = 0, s = 0;
  for (let i = 0; i < n1; i++) {
    if (best[i] <= d) {
      count++;
      s += best[i];
    } else s += d;
  }
  return [count, s];
}

export function checkPlacements(n: number): void {
  if (!(Number.isInteger(n) && n >= 0 && n <= 1_000_000)) throw new RangeError(`placements must be an integer in [0, 1000000], received ${n}`);
}

/**
 * @param x1,y1 channel-1 spot centres (fixed)
 * @param x2,y2 observed channel-2 spot centres (their count is kept in every placement)
 * @param region sorted linear pixel indices of the region (y·width + x)
 */
export function spotPlacementTest(
  x1: ArrayLike<number>,
  y1: ArrayLike<number>,
  x2: ArrayLike<number>,
  y2: ArrayLike<number>,
  region: ArrayLike<number>,
  width: number,
  options: SpotTestOptions,
): SpotTestResult {
  const d = options.pairDistance;
  checkPairDistance(d);
  const N = options.placements ?? SPOT_TEST_DEFAULTS.placements;
  checkPlacements(N);
  const seed = options.seed ?? SPOT_TEST_DEFAULTS.seed;
  if (!(Number.isInteger(seed) && seed >= 0 && seed <= 0xffffffff)) throw new RangeError(`seed must be an integer in [0, 2^32), received ${seed}`);
  if (!(Number.isInteger(width) && width > 0)) throw new RangeError(`image width must be a positive integer, received ${width}`);
  const radii = options.kRadii ?? [];
  for (const r of radii) if (!(Number.isFinite(r) && r > 0)) throw new RangeError(`Ripley radius must be a positive number of pixels, received ${r}`);
  const n1 = x1.length, n2 = x2.length, npix = region.length;
  const none: SpotTestResult = { pValue: null, chanceFraction1: null, observedPaired1: null, placements: 0, envelope: null };
  if (n1 === 0 || n2 === 0 || N === 0 || npix === 0) return none;

  const grid1 = new PointGrid(x1, y1, Math.max(d, 1e-6));
  const best = new Float64Array(n1);
  const rmaxK = radii.length ? Math.max(...radii) : 0;
  const reach = Math.max(d, rmaxK);
  const kCounts = new Float64Array(radii.length);
  /** paired count and tie-break S for channel-2 points (qx, qy); K pair counts into kCounts */
  const score = (qx: ArrayLike<number>, qy: ArrayLike<number>): [number, number] => {
    best.fill(Infinity);
    kCounts.fill(0);
    const m = radii.length;
    for (let j = 0; j < n2; j++)
      grid1.within(qx[j], qy[j], reach, (i, dist) => {
        if (dist < best[i]) best[i] = dist;
        for (let q = 0; q < m; q++) if (dist < radii[q]) kCounts[q]++;
      });
    return pairedScore(best, n1, d);
  };
  const [obsCount, obsS] = score(x2, y2);
  const kObs = Array.from(kCounts);
  const kRand = radii.map(() => new Float64Array(N));
  const rng = new Xoshiro128(seed);
  const rx = new Float64Array(n2), ry = new Float64Array(n2);
  let atLeast = 0, sumFrac = 0;
  for (let t = 0; t < N; t++) {
    for (let j = 0; j < n2; j++) {
      const p = region[rng.nextInt(npix)];
      const px = p % width;
      rx[j] = px + rng.nextFloat();
      ry[j] = (p - px) / width + rng.nextFloat();
    }
    const [c, s] = score(rx, ry);
    sumFrac += c / n1;
    if (c > obsCount || (c === obsCount && s <= obsS)) atLeast++;
    for (let q = 0; q < radii.length; q++) kRand[q][t] = kCounts[q];
  }
  const envelope = radii.length ? envelopeOf(radii, kObs, kRand, npix / (n1 * n2), (k) => Math.sqrt(k / Math.PI)) : null;
  return { pValue: (1 + atLeast) / (N + 1), chanceFraction1: sumFrac / N, observedPaired1: obsCount / n1, placements: N, envelope };
}

/**
 * The K envelope from the observed and the N placements' pair counts per radius (`kRand[q]` is sorted in
 * place): K = count × scale (the window's size over n₁n₂), the pointwise 2.5 % and 97.5 % order statistics,
 * the mean, the add-one p per radius and L = lOf(K). Shared by the 2-D and 3-D tests.
 */
export function envelopeOf(radii: number[], kObs: number[], kRand: Float64Array[], scale: number, lOf: (k: number) => number): KEnvelope {
  const N = kRand[0].length;
  const lo: number[] = [], hi: number[] = [], mean: number[] = [], pv: number[] = [];
  const qlo = Math.max(0, Math.ceil(0.025 * N) - 1), qhi = Math.min(N - 1, N - Math.ceil(0.025 * N));
  for (let q = 0; q < radii.length; q++) {
    const v = kRand[q].sort();
    let s = 0, ge = 0;
    for (let t = 0; t < N; t++) {
      s += v[t];
      if (v[t] >= kObs[q]) ge++;
    }
    lo.push(v[qlo] * scale);
    hi.push(v[qhi] * scale);
    mean.push((s / N) * scale);
    pv.push((1 + ge) / (N + 1));
  }
  const observed = kObs.map((c) => c * scale);
  return { radii: [...radii], observed, L: observed.map(lOf), mean, lo, hi, pValue: pv };
}
