/**
 * Shapes shared by the analysis engine, the server runs, the `analyze` command and the browser preview.
 * Every coefficient is `number | null`: `null` where the value is undefined (never NaN in JSON).
 */

/** One channel of an image, row-major, width × height samples. */
import type { PreparedPairs } from './pairs';

export type ChannelArray =
  | Uint8Array
  | Uint8ClampedArray
  | Uint16Array
  | Uint32Array
  | Int8Array
  | Int16Array
  | Int32Array
  | Float32Array
  | Float64Array;

/** A region: a full-size mask (non-zero = inside) or a list of linear pixel indices (y * width + x). */
export type RegionSpec =
  | { kind: 'mask'; mask: Uint8Array }
  | { kind: 'indices'; indices: Uint32Array | Int32Array | number[] }
  | null;

export type ThresholdMethod = 'none' | 'manual' | 'otsu' | 'costes';
export type CostesRegression = 'orthogonal' | 'ols';
/** which pixels count as "below threshold" while stepping: x ≤ T1 or y ≤ T2 (default), or both */
export type CostesBelowSet = 'either' | 'both';

export interface CostesOptions {
  /** regression line the thresholds walk down: orthogonal (total least squares, default) or OLS of y on x */
  regression?: CostesRegression;
  /** below-threshold set: 'either' = x ≤ T1 or y ≤ T2 (default), 'both' = x ≤ T1 and y ≤ T2 */
  belowSet?: CostesBelowSet;
  /** stop at the first (highest) T1 where Pearson's r of the below-threshold pixels is ≤ this (default 0) */
  stopAt?: number;
}

export interface ThresholdOptions {
  method: ThresholdMethod;
  /** manual thresholds (method 'manual'); "above" means strictly greater */
  t1?: number;
  t2?: number;
  costes?: CostesOptions;
}

export interface CostesDetail {
  slope: number;
  intercept: number;
  regression: CostesRegression;
  belowSet: CostesBelowSet;
  /** Pearson's r of the below-threshold pixels at the chosen thresholds (null if undefined there) */
  rBelow: number | null;
  /** false when no step met the stopping rule (thresholds are then the lowest step) */
  converged: boolean;
}

export interface ThresholdInfo {
  method: ThresholdMethod;
  /** T1, T2: pixels strictly above count as foreground. null when the method is undefined on the data. */
  ch1: number | null;
  ch2: number | null;
  costes?: CostesDetail;
}

export interface RandomizationOptions {
  /** number of scrambles (default 200; 0 disables the test) */
  count?: number;
  /** square block edge in pixels, about the point-spread-function width (default 3) */
  blockSize?: number;
  /** seed of the xoshiro128** generator (default 1) */
  seed?: number;
  /** slices in ch1/ch2 (a volume of width × height × depth, slice after slice; default 1) */
  depth?: number;
  /** block extent in z, in slices, about the point-spread function's axial width (default 1) */
  blockDepth?: number;
}

export interface MeasureOptions {
  /** image width in pixels (needed for the randomization test; otherwise optional) */
  width?: number;
  height?: number;
  /** thresholds for Manders' M1/M2 (default method 'none': T1 = T2 = 0) */
  threshold?: ThresholdOptions | ThresholdInfo;
  /** Costes randomization test; omitted or count 0 = not run (result fields are null) */
  randomization?: RandomizationOptions;
  /** skip the O(n log L) coefficients (τ-b, dCor) e.g. for a quick preview */
  skipSlow?: boolean;
  /** compute MICe and TICe with these parameters (omitted = not computed, both null) */
  mic?: { alpha?: number; c?: number };
  /**
   * measureRegion: the region's pairs already collected (`prepare(collectPairs(ch1, ch2, region))`), e.g.
   * with the pair sweep done over threads by the caller; used instead of collecting them again
   */
  pairs?: PreparedPairs;
}

export interface RandomizationResult {
  /** (1 + #{r_rand ≥ r_obs}) / (N + 1) */
  randomizationP: number | null;
  /** #{r_rand < r_obs} / N */
  randomizationFractionBelow: number | null;
  /** N, the number of scrambles actually made (0 when not run) */
  randomizationCount: number;
}

/** Per-region result; keys are a contract with the server runs and the `analyze` command. */
export interface RegionResult extends RandomizationResult {
  pixels: number;
  pearson: number | null;
  spearman: number | null;
  kendallTauB: number | null;
  /** dCor (V-statistic), not squared, in [0, 1] */
  distanceCorrelation: number | null;
  /** bias-corrected dCor² R*_n (Székely & Rizzo 2013), in [−1, 1] */
  dcorBiasCorrectedSq: number | null;
  dcorTStat: number | null;
  dcorDf: number | null;
  dcorPValue: number | null;
  mandersM1: number | null;
  mandersM2: number | null;
  overlap: number | null;
  k1: number | null;
  k2: number | null;
  icq: number | null;
  /** MICe (Reshef et al. 2016), in [0, 1]; null unless asked for (`mic` option) */
  micE: number | null;
  /** TICe (Reshef et al. 2016): the sum of the equicharacteristic matrix; null unless asked for */
  ticE: number | null;
  thresholds: ThresholdInfo;
}

/**
 * The numeric per-region result keys (every one `number | null`, `pixels` a count), in display order. The
 * coefficient registry (shared/coefficients.ts) has exactly one entry per key of `MEASURE_KEYS`.
 */
export const REGION_RESULT_KEYS = [
  'pixels',
  'pearson',
  'spearman',
  'kendallTauB',
  'distanceCorrelation',
  'dcorBiasCorrectedSq',
  'dcorTStat',
  'dcorDf',
  'dcorPValue',
  'mandersM1',
  'mandersM2',
  'overlap',
  'k1',
  'k2',
  'icq',
] as const;

/** The numeric results of the randomization test that are stored per cell (the count is provenance). */
export const RANDOMIZATION_RESULT_KEYS = ['randomizationP', 'randomizationFractionBelow'] as const;

/** MICe and TICe: computed only when asked for (`mic` option; recipe choice 'mic', `analyze --mic`). */
export const MIC_RESULT_KEYS = ['micE', 'ticE'] as const;


/**
 * The per-cell object measures (objects.ts `measureObjects`, stored by runs when the recipe's objects section
 * is on), named for the measurements table; `OBJECT_MEASURE_SOURCE` (objects.ts) maps each to its key of the
 * `analyze` contract (`OBJECT_RESULT_KEYS`).
 */
export const OBJECT_MEASURE_KEYS = [
  'spotCount1',
  'spotCount2',
  'spotPaired1',
  'spotPaired2',
  'spotMutualPairs',
  'spotMedianNearest1',
  'spotMedianNearest2',
  'spotPValue',
  'spotChanceFraction1',
] as const;
export type ObjectMeasureKey = (typeof OBJECT_MEASURE_KEYS)[number];


/** Every numeric per-cell measure the engine reports: the region coefficients, MICe/TICe, the randomization test, then the object measures. */
export const MEASURE_KEYS = [...REGION_RESULT_KEYS, ...MIC_RESULT_KEYS, ...RANDOMIZATION_RESULT_KEYS, ...OBJECT_MEASURE_KEYS] as const;
export type MeasureKey = (typeof MEASURE_KEYS)[number];
