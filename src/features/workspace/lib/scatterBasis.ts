/**
 * What the Pixel scatter's default thresholds are computed over, and where its saturated pixels lie.
 *
 * Default thresholds are Otsu's (Otsu 1979, IEEE Trans. Syst. Man Cybern. 9:62, doi:10.1109/TSMC.1979.4310076;
 * shared/analysis/otsu.ts) over the pixels that describe the cells:
 *   - a selected cell: its own pixels;
 *   - the whole field with outlined cells: the pixels of the outlined cells (role "cell"; background regions
 *     are not cells), each pixel once where outlines overlap;
 *   - the whole field before any cell is outlined: every pixel of the field;
 * and in every case without the pixels at the saturation level in either channel. A small saturated speck
 * otherwise pulls Otsu's split up to the speck itself, so that every cell pixel reads "neither above"
 * (issue 19). Our choice (common practice: a clipped value says nothing of the true intensity).
 * Pixels with NaN in either channel carry no intensity and are dropped as everywhere (collectPairs).
 *
 * Pure functions on typed arrays; unit-tested in tests/workspace/scatter-basis.test.ts.
 */
import { collectPairs, computeThresholds, prepare } from '@shared/analysis/index';
import { cellsMask, cellVoxels, type CellGeometry } from '@shared/schemas/cells';
import { maskToIndices } from '@shared/analysis/rasterize';
import type { SampleArray } from '@shared/pixels/codec';
import { plural } from '@shared/format/plural';

export interface BasisImage {
  width: number;
  height: number;
  /** slices held (a whole volume: the cells' voxels as runs measure them); 1 when absent */
  depth?: number;
  ch1: SampleArray;
  ch2: SampleArray;
  /** largest value the pixel type holds (2^bits − 1), null for float data (nothing counts as saturated) */
  saturationLevel?: number | null;
}

export interface ThresholdBasis {
  /** 'region': the selected cell · 'cells': the outlined cells of the field · 'field': the whole field (no cells yet) */
  over: 'region' | 'cells' | 'field';
  /** outlined cells the pixels come from ('cells' only; else 0) */
  cells: number;
  /** pixels the thresholds were computed over (after leaving out saturated and NaN pixels) */
  pixels: number;
  /** pixels left out because either channel is at the saturation level */
  saturatedLeftOut: number;
}

export interface DefaultThresholds {
  t1: number | null;
  t2: number | null;
  basis: ThresholdBasis;
}

const isSaturated = (ch1: SampleArray, ch2: SampleArray, i: number, level: number) => ch1[i] >= level || ch2[i] >= level;

/**
 * Default (Otsu) thresholds of a region: `region` is the selected cell's pixel indices, or null for the whole
 * field; `cells` are the geometries of the field's outlined cells (used only for the whole field).
 */
export function defaultThresholds(img: BasisImage, region: Uint32Array | null, cells: readonly CellGeometry[]): DefaultThresholds {
  const { width, height, ch1, ch2 } = img;
  const depth = img.depth ?? 1;
  const level = img.saturationLevel ?? null;
  let candidates: Uint32Array | null = region;
  let over: ThresholdBasis['over'] = 'region';
  if (!region) {
    if (cells.length > 0) {
      over = 'cells';
      candidates = maskToIndices(depth > 1 ? cellsVoxelMask(cells, width, height, depth) : cellsMask(cells, width, height));
    } else over = 'field';
  }
  const total = candidates ? candidates.length : width * height * depth;
  const kept = new Uint32Array(total);
  let k = 0, saturatedLeftOut = 0;
  for (let j = 0; j < total; j++) {
    const i = candidates ? candidates[j] : j;
    if (level !== null && isSaturated(ch1, ch2, i, level)) saturatedLeftOut++;
    else kept[k++] = i;
  }
  const p = prepare(collectPairs(ch1, ch2, { kind: 'indices', indices: kept.subarray(0, k) }));
  const th = computeThresholds(p, { method: 'otsu' });
  return { t1: th.ch1, t2: th.ch2, basis: { over, cells: over === 'cells' ? cells.length : 0, pixels: p.n, saturatedLeftOut } };
}

/** Mask (1 = in at least one cell) of the union of the cells' voxels in a width × height × depth volume. */
export function cellsVoxelMask(geometries: readonly CellGeometry[], width: number, height: number, depth: number): Uint8Array {
  const mask = new Uint8Array(width * height * depth);
  for (const g of geometries) for (const v of cellVoxels(g, width, height, 0, depth)) mask[v] = 1;
  return mask;
}

export interface SaturatedMarks {
  /** bins × bins flags (row 0 = lowest channel-2 bin): 1 where at least one saturated pixel falls, clamped to the axes */
  marks: Uint8Array;
  /** saturated pixels of the region: only channel 1 at the level, only channel 2, both */
  only1: number;
  only2: number;
  both: number;
  /** of those, how many lie beyond the axis ends (drawn on the edge) */
  beyondAxes: number;
}

/**
 * Where the region's saturated pixels lie on the scatter's bins × bins grid over `rangeX` × `rangeY`
 * (the joint histogram's binning, shared/analysis/histogram.ts: equal bins, the top edge in the last bin).
 * A saturated pixel beyond an axis end is marked on that edge, so every saturated pixel is shown.
 */
export function saturatedMarks(x: ArrayLike<number>, y: ArrayLike<number>, n: number, level: number | null, bins: number, rangeX: [number, number], rangeY: [number, number]): SaturatedMarks {
  const marks = new Uint8Array(bins * bins);
  let only1 = 0, only2 = 0, both = 0, beyondAxes = 0;
  if (level === null) return { marks, only1, only2, both, beyondAxes };
  const bin = (v: number, [lo, hi]: [number, number]) => {
    const b = Math.floor(((v - lo) / (hi - lo)) * bins);
    return b < 0 ? 0 : b >= bins ? bins - 1 : b;
  };
  for (let i = 0; i < n; i++) {
    const a = x[i] >= level, b = y[i] >= level;
    if (!a && !b) continue;
    if (a && b) both++;
    else if (a) only1++;
    else only2++;
    if (x[i] > rangeX[1] || y[i] > rangeY[1]) beyondAxes++;
    marks[bin(y[i], rangeY) * bins + bin(x[i], rangeX)] = 1;
  }
  return { marks, only1, only2, both, beyondAxes };
}

/** The sentence under the scatter that says what the default thresholds were computed over. */
export function describeBasis(b: ThresholdBasis): string {
  const where = b.over === 'region' ? "this cell's pixels" : b.over === 'cells' ? `the pixels of ${b.cells === 1 ? 'the outlined cell' : `the ${plural(b.cells, 'outlined cell')}`}` : 'the whole field (no cells outlined yet)';
  const left = b.saturatedLeftOut === 0 ? 'no saturated pixels to leave out' : `${plural(b.saturatedLeftOut, 'saturated pixel')} left out`;
  return `Thresholds by Otsu (1979) over ${where}; ${left}.`;
}
