/**
 * Object-based co-localization of one region of a volume (anisotropic voxels): spots per channel in 3D
 * (spots3d.ts), nearest-neighbour pairing with z scaled to pixel widths (pairing3d.ts) and the Monte Carlo
 * placement test over the region's volume (spot-test3d.ts). The result has the keys of the 2D contract
 * (`OBJECT_RESULT_KEYS`), with spot centres [x, y, z] (z in slices, origin the corner of voxel (0, 0, 0));
 * distances (`medianNearest*`, the pair distance) are in pixel widths. Degenerate cases as objects.ts.
 * `analyzeObjects3D` also returns the full detections and, when asked (`kRadii`, pixel widths), the envelope of
 * the cross-type Ripley's K in 3D (spot-test3d.ts, ripley3d.ts), as `analyzeObjects` does in 2D.
 */
import { missingMask, nearMissing } from './missing';
import { OBJECT_DEFAULTS, type ObjectResult } from './objects';
import { checkPairDistance } from './pairing';
import { pairSpots3D } from './pairing3d';
import { checkPlacements, SPOT_TEST_DEFAULTS, type KEnvelope } from './spot-test';
import { spotPlacementTest3D } from './spot-test3d';
import { detectSpots3D, missingMargins3D, spot3Options, type Spot3Detection, type Spot3Options } from './spots3d';
import { regionIndexList } from './spots';
import type { ChannelArray } from './types';

export interface Object3Options {
  spotSigma?: number;
  /** slice spacing in pixel widths (z step / pixel size) */
  zScale: number;
  /** axial spot scale in slices (default spotSigma / zScale) */
  spotSigmaZ?: number;
  spotK?: number;
  minSeparation?: number;
  pairDistance?: number;
  placements?: number;
  seed?: number;
  missing?: 'refuse' | 'exclude';
  /** radii in pixel widths for the cross-type Ripley's K envelope in 3D (analyzeObjects3D only; none by default) */
  kRadii?: number[];
}

export type Object3Result = Omit<ObjectResult, 'spots1' | 'spots2'> & { spots1: [number, number, number][]; spots2: [number, number, number][] };

export interface Object3Analysis {
  result: Object3Result;
  detection1: Spot3Detection | null;
  detection2: Spot3Detection | null;
  envelope: KEnvelope | null;
}

export function analyzeObjects3D(ch1: ChannelArray, ch2: ChannelArray, width: number, height: number, depth: number, region: Uint8Array | ArrayLike<number> | null, options: Object3Options): Object3Analysis {
  if (ch1.length !== ch2.length) throw new RangeError(`channels differ in size: ${ch1.length} vs ${ch2.length} voxels`);
  const d = options.pairDistance ?? OBJECT_DEFAULTS.pairDistance;
  checkPairDistance(d);
  const placements = options.placements ?? OBJECT_DEFAULTS.placements;
  checkPlacements(placements);
  const spotOpts: Spot3Options = { sigma: options.spotSigma ?? OBJECT_DEFAULTS.spotSigma, zScale: options.zScale, sigmaZ: options.spotSigmaZ, k: options.spotK ?? OBJECT_DEFAULTS.spotK, minSeparation: options.minSeparation, missing: options.missing };
  const { sigma, sigmaZ, zScale } = spot3Options(spotOpts);
  let indices = regionIndexList(region, ch1.length);
  const gaps = options.missing === 'exclude' ? missingMask([ch1, ch2], ch1.length) : null;
  if (gaps) {
    const [m, mz] = missingMargins3D(sigma, sigmaZ);
    const near = nearMissing(gaps, width, height, m, depth, mz);
    indices = indices.filter((i) => !near[i]);
  }
  const det1 = detectSpots3D(ch1, width, height, depth, indices, spotOpts);
  const det2 = detectSpots3D(ch2, width, height, depth, indices, spotOpts);
  const result: Object3Result = { count1: null, count2: null, paired1: null, paired2: null, mutualPairs: null, medianNearest1: null, medianNearest2: null, pValue: null, chanceFraction1: null, spots1: [], spots2: [] };
  if (det1 === null || det2 === null) return { result, detection1: det1, detection2: det2, envelope: null };
  const c = (det: Spot3Detection) => ({ x: det.spots.map((s) => s.x), y: det.spots.map((s) => s.y), z: det.spots.map((s) => s.z) });
  const p1 = c(det1), p2 = c(det2);
  const pr = pairSpots3D(p1.x, p1.y, p1.z, p2.x, p2.y, p2.z, zScale, d);
  const test = spotPlacementTest3D(p1, p2, indices, width, height, zScale, { pairDistance: d, placements, seed: options.seed ?? SPOT_TEST_DEFAULTS.seed, kRadii: options.kRadii });
  Object.assign(result, {
    count1: pr.count1,
    count2: pr.count2,
    paired1: pr.paired1,
    paired2: pr.paired2,
    mutualPairs: pr.mutualPairs,
    medianNearest1: pr.medianNearest1,
    medianNearest2: pr.medianNearest2,
    pValue: test.pValue,
    chanceFraction1: test.chanceFraction1,
  });
  result.spots1 = det1.spots.map((s) => [s.x, s.y, s.z]);
  result.spots2 = det2.spots.map((s) => [s.x, s.y, s.z]);
  return { result, detection1: det1, detection2: det2, envelope: test.envelope };
}

/** Object measures of one region of a volume (keys of `OBJECT_RESULT_KEYS`, spots as [x, y, z]). */
export function measureObjects3D(ch1: ChannelArray, ch2: ChannelArray, width: number, height: number, depth: number, region: Uint8Array | ArrayLike<number> | null, options: Object3Options): Object3Result {
  return analyzeObjects3D(ch1, ch2, width, height, depth, region, { ...options, kRadii: undefined }).result;
}
