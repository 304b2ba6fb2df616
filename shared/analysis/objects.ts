/**
 * Object-based co-localization of one region: spots in each channel (spots.ts), nearest-neighbour pairing
 * (pairing.ts) and the Monte Carlo test against chance placement of the channel-2 spots (spot-test.ts).
 *
 * `measureObjects` returns exactly the keys of the object measures contract (`OBJECT_RESULT_KEYS`);
 * `analyzeObjects` also returns the full detections (peak, integrated intensity, noise) and, when asked,
 * the cross-type Ripley's K envelope.
 *
 * Degenerate cases (everything that cannot be computed is null, never NaN):
 *  - empty region, or a bounding box smaller than the centroid window (2⌈2σ⌉ + 1 px): all measures null,
 *    spot lists empty;
 *  - no spot in a channel (including a flat or all-saturated region, where the noise estimate is 0): that
 *    count is 0; the fractions, medians, p-value and chance fraction are null; mutualPairs is 0;
 *  - one spot in a channel: computed as for any count (a fraction is then 0 or 1; the Monte Carlo test is
 *    exact for any count, if coarse);
 *  - pixels without a value, with `missing: 'exclude'`: the region shrinks to the pixels searched (above);
 *    a region left empty or smaller than the window is the first case.
 */
import { pairSpots, checkPairDistance } from './pairing';
import { detectSpots, missingMargin, regionIndexList, type SpotDetection, type SpotOptions } from './spots';
import { missingMask, nearMissing } from './missing';
import { checkPlacements, spotPlacementTest, SPOT_TEST_DEFAULTS, type KEnvelope } from './spot-test';
import type { ChannelArray, ObjectMeasureKey } from './types';

export const OBJECT_DEFAULTS = { spotSigma: 1.5, spotK: 5, pairDistance: 2, placements: 999, seed: 1 } as const;

export interface ObjectOptions {
  spotSigma?: number;
  spotK?: number;
  /** minimum centre-to-centre distance of spots in one channel (default 2 × spotSigma) */
  minSeparation?: number;
  pairDistance?: number;
  placements?: number;
  seed?: number;
  /** radii for the cross-type Ripley's K envelope (analyzeObjects only; none by default) */
  kRadii?: number[];
  /**
   * pixels without a value in either channel (NaN, e.g. where an aligned channel fell outside): 'refuse'
   * (default) throws; 'exclude' searches, in both channels, only the region's pixels more than R + 1 away
   * from any of them (spots.ts `missingMargin`), and places the chance spots on those same pixels
   */
  missing?: 'refuse' | 'exclude';
}

export interface ObjectResult {
  count1: number | null;
  count2: number | null;
  paired1: number | null;
  paired2: number | null;
  mutualPairs: number | null;
  medianNearest1: number | null;
  medianNearest2: number | null;
  pValue: number | null;
  chanceFraction1: number | null;
  spots1: [number, number][];
  spots2: [number, number][];
}

export const OBJECT_RESULT_KEYS = [
  'count1', 'count2', 'paired1', 'paired2', 'mutualPairs', 'medianNearest1', 'medianNearest2', 'pValue', 'chanceFraction1', 'spots1', 'spots2',
] as const satisfies readonly (keyof ObjectResult)[];

/** The per-cell object measure (measurements column, registry key) → its key of the `analyze` contract. */
export const OBJECT_MEASURE_SOURCE = {
  spotCount1: 'count1',
  spotCount2: 'count2',
  spotPaired1: 'paired1',
  spotPaired2: 'paired2',
  spotMutualPairs: 'mutualPairs',
  spotMedianNearest1: 'medianNearest1',
  spotMedianNearest2: 'medianNearest2',
  spotPValue: 'pValue',
  spotChanceFraction1: 'chanceFraction1',
} as const satisfies Record<ObjectMeasureKey, Exclude<keyof ObjectResult, 'spots1' | 'spots2'>>;

/** The per-cell object measures of a result, under their registry keys. */
export function objectMeasures(r: ObjectResult): Record<ObjectMeasureKey, number | null> {
  const out = {} as Record<ObjectMeasureKey, number | null>;
  for (const k of Object.keys(OBJECT_MEASURE_SOURCE) as ObjectMeasureKey[]) out[k] = r[OBJECT_MEASURE_SOURCE[k]];
  return out;
}

export interface ObjectAnalysis {
  result: ObjectResult;
  detection1: SpotDetection | null;
  detection2: SpotDetection | null;
  envelope: KEnvelope | null;
}

function emptyResult(): ObjectResult {
  return { count1: null, count2: null, paired1: null, paired2: null, mutualPairs: null, medianNearest1: null, medianNearest2: null, pValue: null, chanceFraction1: null, spots1: [], spots2: [] };
}

export function analyzeObjects(
  ch1: ChannelArray,
  ch2: ChannelArray,
  width: number,
  height: number,
  region: Uint8Array | ArrayLike<number> | null,
  options: ObjectOptions = {},
): ObjectAnalysis {
  if (ch1.length !== ch2.length) throw new RangeError(`channels differ in size: ${ch1.length} vs ${ch2.length} pixels`);
  const d = options.pairDistance ?? OBJECT_DEFAULTS.pairDistance;
  checkPairDistance(d);
  const placements = options.placements ?? OBJECT_DEFAULTS.placements;
  checkPlacements(placements);
  const spotOpts: SpotOptions = { sigma: options.spotSigma ?? OBJECT_DEFAULTS.spotSigma, k: options.spotK ?? OBJECT_DEFAULTS.spotK, minSeparation: options.minSeparation, missing: options.missing };
  let indices = regionIndexList(region, ch1.length);
  let whole = region === null;
  // one searched region for both channels: away from the pixels either channel lacks
  const gaps = options.missing === 'exclude' ? missingMask([ch1, ch2], ch1.length) : null;
  if (gaps) {
    const near = nearMissing(gaps, width, height, missingMargin(spotOpts.sigma ?? OBJECT_DEFAULTS.spotSigma));
    indices = indices.filter((i) => !near[i]);
    whole = false;
  }
  // the whole image goes to detection as null: no second copy and check of the index list
  const det1 = detectSpots(ch1, width, height, whole ? null : indices, spotOpts);
  const det2 = detectSpots(ch2, width, height, whole ? null : indices, spotOpts);
  const result = emptyResult();
  if (det1 === null || det2 === null) return { result, detection1: det1, detection2: det2, envelope: null };
  const x1 = det1.spots.map((s) => s.x), y1 = det1.spots.map((s) => s.y);
  const x2 = det2.spots.map((s) => s.x), y2 = det2.spots.map((s) => s.y);
  const pr = pairSpots(x1, y1, x2, y2, d);
  const test = spotPlacementTest(x1, y1, x2, y2, indices, width, {
    pairDistance: d,
    placements,
    seed: options.seed ?? SPOT_TEST_DEFAULTS.seed,
    kRadii: options.kRadii,
  });
  result.count1 = pr.count1;
  result.count2 = pr.count2;
  result.paired1 = pr.paired1;
  result.paired2 = pr.paired2;
  result.mutualPairs = pr.mutualPairs;
  result.medianNearest1 = pr.medianNearest1;
  result.medianNearest2 = pr.medianNearest2;
  result.pValue = test.pValue;
  result.chanceFraction1 = test.chanceFraction1;
  result.spots1 = det1.spots.map((s) => [s.x, s.y]);
  result.spots2 = det2.spots.map((s) => [s.x, s.y]);
  return { result, detection1: det1, detection2: det2, envelope: test.envelope };
}

/**
 * Object measures of one region.
 * @param region mask (Uint8Array, non-zero inside, full size), linear pixel indices, or null (whole image)
 */
export function measureObjects(
  ch1: ChannelArray,
  ch2: ChannelArray,
  width: number,
  height: number,
  region: Uint8Array | ArrayLike<number> | null,
  options: ObjectOptions = {},
): ObjectResult {
  return analyzeObjects(ch1, ch2, width, height, region, { ...options, kRadii: undefined }).result;
}
