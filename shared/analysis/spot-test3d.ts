/**
 * Monte Carlo test of spot pairing against chance placement in a volume: spot-test.ts in 3D (Besag &
 * Diggle 1977, "Simple Monte Carlo tests for spatial pattern", Appl. Stat. 26:327–333, doi:10.2307/2346974;
 * add-one p-value, Davison & Hinkley 1997, "Bootstrap Methods and their Application", CUP, §4.2).
 *
 * The channel-1 spots stay; the n₂ channel-2 spots are placed independently and uniformly over the
 * region's volume: a region voxel drawn uniformly (seeded xoshiro128**, prng.ts), then a position uniform
 * inside it (x + U, y + U, z + U). Distances in pixel widths with z scaled by `zScale` (pairing3d.ts).
 * Statistic, tie-break (S = Σ min(dᵢ, d)), p-value and chance fraction as in 2D.
 *
 * Optionally, as in 2D, the cross-type Ripley's K in 3D (ripley3d.ts, no edge correction, V = the region's
 * voxel count × zScale, in pixel widths³) of every placement at the given radii (pixel widths): its pointwise
 * 2.5 % and 97.5 % quantiles form the envelope that carries the cell's own edge effect, p per radius =
 * (1 + #{K_random ≥ K_observed}) / (N + 1), and L = ∛(3K / 4π). Asking for it leaves the other results unchanged.
 * Degenerate: no spot in a channel, no voxel or N = 0 → p and chance fraction null.
 */
import { checkPairDistance } from './pairing';
import { checkZScale, PointGrid3 } from './pairing3d';
import { Xoshiro128 } from './prng';
import { checkRadii3, lFromK3 } from './ripley3d';
import { checkPlacements, envelopeOf, pairedScore, SPOT_TEST_DEFAULTS, type SpotTestResult } from './spot-test';

export interface Points3 {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** slices */
  z: ArrayLike<number>;
}

/**
 * @param region voxel indices (z·width·height + y·width + x)
 */
export function spotPlacementTest3D(p1: Points3, p2: Points3, region: ArrayLike<number>, width: number, height: number, zScale: number, options: { pairDistance: number; placements?: number; seed?: number; kRadii?: number[] }): SpotTestResult {
  const d = options.pairDistance;
  checkPairDistance(d);
  checkZScale(zScale);
  const N = options.placements ?? SPOT_TEST_DEFAULTS.placements;
  checkPlacements(N);
  const seed = options.seed ?? SPOT_TEST_DEFAULTS.seed;
  if (!(Number.isInteger(seed) && seed >= 0 && seed <= 0xffffffff)) throw new RangeError(`seed must be an integer in [0, 2^32), received ${seed}`);
  const radii = options.kRadii ?? [];
  if (radii.length) checkRadii3(radii);
  const n1 = p1.x.length, n2 = p2.x.length, nv = region.length, plane = width * height;
  const none: SpotTestResult = { pValue: null, chanceFraction1: null, observedPaired1: null, placements: 0, envelope: null };
  if (n1 === 0 || n2 === 0 || N === 0 || nv === 0) return none;
  const grid1 = new PointGrid3(p1.x, p1.y, Float64Array.from(p1.z, (z) => z * zScale), Math.max(d, 1e-6));
  const best = new Float64Array(n1);
  const m = radii.length;
  const reach = m ? Math.max(d, ...radii) : d;
  const kCounts = new Float64Array(m);
  /** paired count and tie-break S for channel-2 points (qx, qy, qz scaled); K pair counts into kCounts */
  const score = (qx: ArrayLike<number>, qy: ArrayLike<number>, qz: ArrayLike<number>): [number, number] => {
    best.fill(Infinity);
    kCounts.fill(0);
    for (let j = 0; j < n2; j++)
      grid1.within(qx[j], qy[j], qz[j], reach, (i, dist) => {
        if (dist < best[i]) best[i] = dist;
        for (let q = 0; q < m; q++) if (dist < radii[q]) kCounts[q]++;
      });
    return pairedScore(best, n1, d);
  };
  const [obsCount, obsS] = score(p2.x, p2.y, Float64Array.from(p2.z, (z) => z * zScale));
  const kObs = Array.from(kCounts);
  const kRand = radii.map(() => new Float64Array(N));
  const rng = new Xoshiro128(seed);
  const rx = new Float64Array(n2), ry = new Float64Array(n2), rz = new Float64Array(n2);
  let atLeast = 0, sumFrac = 0;
  for (let t = 0; t < N; t++) {
    for (let j = 0; j < n2; j++) {
      const v = region[rng.nextInt(nv)];
      const z = Math.floor(v / plane), r = v - z * plane, y = Math.floor(r / width);
      rx[j] = r - y * width + rng.nextFloat();
      ry[j] = y + rng.nextFloat();
      rz[j] = (z + rng.nextFloat()) * zScale;
    }
    const [c, s] = score(rx, ry, rz);
    sumFrac += c / n1;
    if (c > obsCount || (c === obsCount && s <= obsS)) atLeast++;
    for (let q = 0; q < m; q++) kRand[q][t] = kCounts[q];
  }
  const envelope = m ? envelopeOf(radii, kObs, kRand, (nv * zScale) / (n1 * n2), lFromK3) : null;
  return { pValue: (1 + atLeast) / (N + 1), chanceFraction1: sumFrac / N, observedPaired1: obsCount / n1, placements: N, envelope };
}
