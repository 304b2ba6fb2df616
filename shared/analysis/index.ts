/**
 * The analysis engine: exact co-localization coefficients of a region of two channels in one call.
 * Pure TypeScript on typed arrays (no DOM, no Node APIs), used by the server runs, the `analyze` command
 * and the browser preview alike. Definitions: PRODUCT.md "The computation"; each module cites its paper.
 */
import { collectPairs, prepare, type Pairs, type PreparedPairs } from './pairs';
import { centeredMoments, pearsonFromMoments } from './pearson';
import { spearman } from './spearman';
import { kendallTauB } from './kendall';
import { distanceCorrelation } from './dcor';
import { manders } from './manders';
import { overlapCoefficients } from './overlap';
import { icq } from './icq';
import { pixelPass } from './pixel-pass';
import { otsuThreshold } from './otsu';
import { costesThresholds } from './costes';
import { randomizationTest } from './randomization';
import { mic } from './mic';
import type { ChannelArray, MeasureOptions, RegionResult, RegionSpec, ThresholdInfo, ThresholdOptions } from './types';

export * from './types';
export { collectPairs, pairsFromArrays, prepare, levelIndex, levelOrder, PreparedPairs } from './pairs';
export type { Pairs, LevelIndex } from './pairs';
export { pearson, centeredMoments } from './pearson';
export { spearman } from './spearman';
export { kendallTauB, kendallS } from './kendall';
export { distanceCorrelation, studentTUpper, type DcorResult } from './dcor';
export { manders } from './manders';
export { overlapCoefficients } from './overlap';
export { icq } from './icq';
export { otsuThreshold } from './otsu';
export { costesThresholds } from './costes';
export { randomizationTest, RANDOMIZATION_DEFAULTS } from './randomization';
export { mic, micOptions, equipartition, MIC_DEFAULTS, type MicOptions, type MicResult } from './mic';
export { jointHistogram, histogram1d } from './histogram';
export { chiSquaredDistance, earthMoversDistance1d } from './distances';
export { quadraticChiDistance, triangleSimilarity } from './quadratic-chi';
export { rasterize, fillPolygon, fillEllipse, maskToIndices, shapeIndices, type Shape, type Point } from './rasterize';
export { labelRegions, type LabelRegion } from './labels';
export { extrudeIndices } from './volume';
export { pixelPass, type PixelPassResult } from './pixel-pass';
export { planSweep, slabPartial, mergeSweep, pairSweep, slabCuts, SLAB_LEVELS, SLAB_MIN_PAIRS, type SweepPlan, type SweepInput, type SlabPartial, type PairSweep, type SweepLevels, type SlabOptions } from './sweep';
export { sweepLevels } from './dcor';
export { NeumaierSum, neumaierSum, FenwickCount, Fenwick4 } from './numeric';
export { Xoshiro128 } from './prng';

/**
 * Version of the numbers this engine produces; stored with every measurement. Bump it whenever a
 * coefficient, threshold or default changes its value for some input.
 */
export const ENGINE_VERSION = 'syntopy-analysis/1.0.4';

/** A region as accepted by measureRegion: a mask (Uint8Array, full size), pixel indices, a spec, or null. */
export type RegionInput = Uint8Array | Uint32Array | Int32Array | number[] | RegionSpec;

export function toRegionSpec(region: RegionInput): RegionSpec {
  if (region === null) return null;
  if (region instanceof Uint8Array) return { kind: 'mask', mask: region };
  if (region instanceof Uint32Array || region instanceof Int32Array || Array.isArray(region)) return { kind: 'indices', indices: region };
  return region;
}

function isInfo(t: ThresholdOptions | ThresholdInfo): t is ThresholdInfo {
  return 'ch1' in t && 'ch2' in t;
}

/**
 * Thresholds over the given pairs: 'none' → 0, 0; 'manual' → t1, t2; 'otsu' per channel; 'costes' jointly.
 * Throws a RangeError for a malformed option (quoting it).
 */
export function computeThresholds(p: Pairs, t: ThresholdOptions = { method: 'none' }): ThresholdInfo {
  switch (t.method) {
    case 'none':
      return { method: 'none', ch1: 0, ch2: 0 };
    case 'manual':
      if (!Number.isFinite(t.t1) || !Number.isFinite(t.t2))
        throw new RangeError(`manual thresholds need finite t1 and t2, received ${String(t.t1)} and ${String(t.t2)}`);
      return { method: 'manual', ch1: t.t1!, ch2: t.t2! };
    case 'otsu':
      return { method: 'otsu', ch1: otsuThreshold(p.x, p.n), ch2: otsuThreshold(p.y, p.n) };
    case 'costes':
      return costesThresholds(p, t.costes);
    default:
      throw new RangeError(`unknown threshold method: ${String((t as { method: unknown }).method)}`);
  }
}

/** All coefficients of already-collected pairs (no randomization: it needs the image geometry). */
export function measurePairs(pairs: Pairs | PreparedPairs, thresholds: ThresholdInfo, options: Pick<MeasureOptions, 'skipSlow' | 'mic'> = {}): RegionResult {
  const p = prepare(pairs);
  const n = p.n;
  const d = options.skipSlow ? null : distanceCorrelation(p);
  // integer data: one pass for r, overlap, Manders and ICQ (pixel-pass.ts); float data: one pass each
  const fused = pixelPass(p, thresholds.ch1, thresholds.ch2);
  const m = fused?.moments ?? centeredMoments(p.x, p.y, n, p.integer);
  const md = fused?.manders ?? manders(p, thresholds.ch1, thresholds.ch2);
  const ov = fused?.overlap ?? overlapCoefficients(p);
  const mi = options.mic ? mic(p, options.mic) : null;
  return {
    pixels: n,
    pearson: pearsonFromMoments(m),
    spearman: spearman(p),
    kendallTauB: options.skipSlow ? null : kendallTauB(p),
    distanceCorrelation: d?.dcor ?? null,
    dcorBiasCorrectedSq: d?.bcdcorSq ?? null,
    dcorTStat: d?.tStat ?? null,
    dcorDf: d?.df ?? null,
    dcorPValue: d?.pValue ?? null,
    mandersM1: md.m1,
    mandersM2: md.m2,
    overlap: ov.overlap,
    k1: ov.k1,
    k2: ov.k2,
    icq: fused ? fused.icq : icq(p),
    micE: mi?.micE ?? null,
    ticE: mi?.ticE ?? null,
    thresholds,
    randomizationP: null,
    randomizationFractionBelow: null,
    randomizationCount: 0,
  };
}

/**
 * The full coefficient set of one region in one call.
 * @param ch1 channel 1, row-major (8/16-bit integer or 32-bit float; any typed array)
 * @param ch2 channel 2, same size
 * @param region mask (Uint8Array, non-zero inside), linear pixel indices, or null for the whole image
 * @param options thresholds (computed over this region's pixels unless given as ThresholdInfo), the
 *   randomization test (needs `width`), `skipSlow`, `mic` (MICe/TICe parameters; omitted = not computed)
 */
export function measureRegion(ch1: ChannelArray, ch2: ChannelArray, region: RegionInput, options: MeasureOptions = {}): RegionResult {
  const spec = toRegionSpec(region);
  const pairs = options.pairs ?? prepare(collectPairs(ch1, ch2, spec));
  const t = options.threshold ?? { method: 'none' as const };
  const thresholds = isInfo(t) ? t : computeThresholds(pairs, t);
  const result = measurePairs(pairs, thresholds, options);
  const rz = options.randomization;
  if (rz && (rz.count ?? 200) > 0) {
    const width = options.width;
    if (width === undefined) throw new RangeError('the randomization test needs the image width');
    const height = options.height ?? ch1.length / (width * (rz.depth ?? 1));
    let indices: ArrayLike<number> | null = null;
    if (spec?.kind === 'indices') indices = spec.indices;
    else if (spec?.kind === 'mask') {
      const mk = spec.mask;
      const out: number[] = [];
      for (let i = 0; i < mk.length; i++) if (mk[i]) out.push(i);
      indices = out;
    }
    const r = randomizationTest(ch1, ch2, width, height, indices, rz);
    result.randomizationP = r.randomizationP;
    result.randomizationFractionBelow = r.randomizationFractionBelow;
    result.randomizationCount = r.randomizationCount;
  }
  return result;
}
export { laplacianOfGaussian, gaussianFilter, gaussianKernels, type PixelBox } from './gaussian';
export { detectSpots, spotOptions, SPOT_DEFAULTS, type Spot, type SpotDetection, type SpotOptions } from './spots';
export { PointGrid, pairSpots, nearestNeighbours, type PairingResult, type NearestResult } from './pairing';
export { spotPlacementTest, SPOT_TEST_DEFAULTS, type SpotTestResult, type KEnvelope } from './spot-test';
export { crossK, type CrossK, type KCorrection, type KWindow } from './ripley';
export { measureObjects, analyzeObjects, objectMeasures, OBJECT_DEFAULTS, OBJECT_RESULT_KEYS, OBJECT_MEASURE_SOURCE, type ObjectResult, type ObjectOptions, type ObjectAnalysis } from './objects';
export { nextPowerOfTwo, realFft2dPair, inverseRealFft2d } from './fft';
export { measureShift, tukeyWindow, SHIFT_TAPER, type ShiftResult, type ShiftOptions } from './phase-correlation';
export { crossCorrelationCurves, type CrossCorrelationCurves } from './cross-correlation';
export { alignChannel, alignedAt } from './align';
export { laplacianOfGaussian3D, type VoxelBox } from './gaussian3d';
export { detectSpots3D, spot3Options, type Spot3, type Spot3Detection, type Spot3Options } from './spots3d';
export { PointGrid3, pairSpots3D } from './pairing3d';
export { spotPlacementTest3D } from './spot-test3d';
export { crossK3D, lFromK3, type KWindow3 } from './ripley3d';
export { analyzeObjects3D, measureObjects3D, type Object3Result, type Object3Options, type Object3Analysis } from './objects3d';
export { medianAndMad } from './robust-scale';
export { selectRank } from './select';
export { bleedThroughSlope, pooledBleedThroughSlope } from './bleed';
export { unmixChannels, checkBleedCoefficient } from './unmix';
export { alignAndUnmix, type AlignUnmixOptions } from './align-unmix';
