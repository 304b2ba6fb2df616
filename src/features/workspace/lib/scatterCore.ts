/**
 * The pixel scatter's computation, shared by the Web Worker (scatter.worker.ts) and the tests: the 2-D joint
 * histogram of a region (shared/analysis/histogram.ts), exact quadrant shares for thresholds T1, T2
 * ("above" = strictly greater, as everywhere in Syntopy), and the live coefficient preview with the engine
 * (shared/analysis/index.ts measurePairs, the core of measureRegion). Regions come from cellIndices (the one rasterization rule).
 */
import { jointHistogram, type Histogram2D } from '@shared/analysis/histogram';
import { measurePairs, collectPairs, prepare, type PreparedPairs, type RegionResult } from '@shared/analysis/index';
import { defaultThresholds, saturatedMarks, type SaturatedMarks, type ThresholdBasis } from './scatterBasis';
import { cellIndices, cellVoxels, zRangeOf, type CellGeometry } from '@shared/schemas/cells';
import type { SampleArray } from '@shared/pixels/codec';

export interface ScatterInput {
  width: number;
  height: number;
  /** slices held (1: one slice or the projection; more: the whole volume, slice after slice, as runs measure it) */
  depth?: number;
  /**
   * true when the arrays hold only one region's voxels (a stack too large to hold whole, read slice by slice for
   * the selected cell: `regionStream`); every request then covers exactly those values
   */
  compact?: boolean;
  ch1: SampleArray;
  ch2: SampleArray;
  /** largest value the pixel type holds (2^bits − 1), null for float data: pixels at it count as saturated */
  saturationLevel?: number | null;
}

export interface Region {
  /** linear indices, or null for the whole field */
  indices: Uint32Array | null;
  n: number;
  x: Float64Array | Uint16Array;
  y: Float64Array | Uint16Array;
  max1: number;
  max2: number;
  /** default thresholds: Otsu over the pixels that describe the cells, saturated pixels left out (scatterBasis.ts) */
  otsu: { t1: number | null; t2: number | null };
  basis: ThresholdBasis;
  pairs: PreparedPairs;
  /** joint histogram, computed once per region (it does not depend on the thresholds) */
  hist: Histogram2D;
  /** fraction of the region's pixels at the saturation level, per channel (null for float data) */
  saturated: { ch1: number | null; ch2: number | null };
  /** where the saturated pixels fall on the histogram's grid */
  saturatedMarks: SaturatedMarks;
}

export interface ScatterResult {
  hist: Histogram2D;
  n: number;
  t1: number;
  t2: number;
  /** counts: both above, only ch1 above, only ch2 above, neither */
  quadrants: { both: number; only1: number; only2: number; neither: number };
  ms: number;
}

/**
 * Collects a region's values once (re-used while thresholds are dragged). `cells` are the field's outlined
 * cells: the whole field's default thresholds are computed over them (scatterBasis.ts).
 */
export function prepareRegion(img: ScatterInput, geometry: CellGeometry | null, bins = 256, cells: readonly CellGeometry[] = []): Region {
  const indices = img.compact ? null : regionIndices(img, geometry);
  const p = prepare(collectPairs(img.ch1, img.ch2, indices ? { kind: 'indices', indices } : null));
  let max1 = 0, max2 = 0, min1 = Infinity, min2 = Infinity, sat1 = 0, sat2 = 0;
  const L = img.saturationLevel ?? Infinity;
  for (let i = 0; i < p.n; i++) {
    const a = p.x[i], b = p.y[i];
    if (a > max1) max1 = a;
    if (b > max2) max2 = b;
    if (a < min1) min1 = a;
    if (b < min2) min2 = b;
    if (a >= L) sat1++;
    if (b >= L) sat2++;
  }
  const saturated = img.saturationLevel == null || p.n === 0 ? { ch1: null, ch2: null } : { ch1: sat1 / p.n, ch2: sat2 / p.n };
  const th = defaultThresholds(img, indices, img.compact ? [] : cells);
  if (img.compact) th.basis = { ...th.basis, over: 'region' };
  // axes from the region's minimum (0 when it holds zeros or negatives) to just above the 99.95th percentile,
  // so a few saturated or hot pixels don't squash the cloud into a corner; pixels beyond are counted in
  // hist.outside (the quadrant counts stay exact over all pixels)
  const top1 = axisTop(p.x, p.n, max1), top2 = axisTop(p.y, p.n, max2);
  const lo1 = p.n && min1 > 0 && min1 < top1 ? min1 : 0, lo2 = p.n && min2 > 0 && min2 < top2 ? min2 : 0;
  const hist = jointHistogram(p.x, p.y, { binsX: bins, binsY: bins, rangeX: [lo1, Math.max(top1, lo1 + 1)], rangeY: [lo2, Math.max(top2, lo2 + 1)] }, p.n);
  const marks = saturatedMarks(p.x, p.y, p.n, img.saturationLevel ?? null, bins, hist.rangeX, hist.rangeY);
  return { indices, n: p.n, x: p.x, y: p.y, max1, max2, otsu: { t1: th.t1, t2: th.t2 }, basis: th.basis, pairs: p, hist, saturated, saturatedMarks: marks };
}

/**
 * A whole volume put together from its slices as they arrive (in any order): slice z goes to voxels
 * z·width·height …, the layout runs measure (server/images/projection.ts concatSlices). `image()` is null until
 * every slice is in.
 */
export function volumeAssembly(width: number, height: number, depth: number, saturationLevel: number | null) {
  const plane = width * height;
  let ch1: SampleArray | null = null, ch2: SampleArray | null = null;
  const received = new Set<number>();
  const make = (a: SampleArray) => new (a.constructor as new (n: number) => SampleArray)(plane * depth);
  return {
    put(z: number, a: SampleArray, b: SampleArray) {
      if (!(Number.isInteger(z) && z >= 0 && z < depth)) throw new RangeError(`slice ${z} is not one of 0–${depth - 1}`);
      if (a.length !== plane || b.length !== plane) throw new RangeError(`slice ${z} has ${a.length} and ${b.length} samples, expected ${plane}`);
      (ch1 ??= make(a)).set(a, z * plane);
      (ch2 ??= make(b)).set(b, z * plane);
      received.add(z);
    },
    get received() {
      return received.size;
    },
    image(): ScatterInput | null {
      return received.size === depth && ch1 && ch2 ? { width, height, depth, ch1, ch2, saturationLevel } : null;
    },
  };
}

/**
 * One region's voxels of a stack too large to hold whole, gathered slice by slice as the slices arrive: only
 * the slices of the region's z range are needed (`slices`, 0-based inclusive), and of each only the region's
 * voxels there (`cellVoxels` on that slice: the same voxels runs measure) are kept. `image()` is a compact
 * input holding exactly those values once every needed slice is in; coefficients do not depend on the order
 * of the voxels. `maxBytes` bounds what is kept (a RangeError quoting the size beyond it).
 */
export function regionStream(width: number, height: number, depth: number, geometry: CellGeometry, saturationLevel: number | null, maxBytes = Infinity) {
  const [a, b] = zRangeOf(geometry, depth);
  const slices: [number, number] = [a - 1, Math.min(b, depth) - 1];
  const parts = new Map<number, [SampleArray, SampleArray]>();
  let bytes = 0;
  return {
    slices,
    put(z: number, ch1: SampleArray, ch2: SampleArray) {
      if (!(Number.isInteger(z) && z >= slices[0] && z <= slices[1])) throw new RangeError(`slice ${z} is not one of the region's slices ${slices[0]}–${slices[1]}`);
      const idx = cellVoxels(geometry, width, height, z, 1);
      const take = (src: SampleArray) => {
        const out = new (src.constructor as new (n: number) => SampleArray)(idx.length);
        for (let k = 0; k < idx.length; k++) out[k] = src[idx[k]];
        return out;
      };
      const part: [SampleArray, SampleArray] = [take(ch1), take(ch2)];
      bytes += part[0].byteLength + part[1].byteLength;
      if (bytes > maxBytes) throw new RangeError(`the cell's voxels take ${bytes} bytes by slice ${z + 1}, more than the ${maxBytes} the browser preview keeps; preview the slice shown instead`);
      parts.set(z, part);
    },
    get received() {
      return parts.size;
    },
    image(): ScatterInput | null {
      if (parts.size !== slices[1] - slices[0] + 1) return null;
      const ordered = [...parts.entries()].sort((x, y) => x[0] - y[0]).map(([, p]) => p);
      const n = ordered.reduce((m, p) => m + p[0].length, 0);
      const join = (c: 0 | 1) => {
        const out = new (ordered[0][c].constructor as new (n: number) => SampleArray)(n);
        let o = 0;
        for (const p of ordered) out.set(p[c], o), (o += p[c].length);
        return out;
      };
      return { width: Math.max(1, n), height: 1, depth: 1, compact: true, ch1: join(0), ch2: join(1), saturationLevel };
    },
  };
}

/**
 * A region's pixel (or voxel) indices: on one slice its outline's pixels; over a whole volume the voxels a run
 * measures (`cellVoxels`: a drawn outline on every slice of its z range, a 3-D label cell exactly its voxels);
 * null for the whole field.
 */
export function regionIndices(img: Pick<ScatterInput, 'width' | 'height' | 'depth'>, geometry: CellGeometry | null): Uint32Array | null {
  if (!geometry) return null;
  const depth = img.depth ?? 1;
  return depth > 1 ? cellVoxels(geometry, img.width, img.height, 0, depth) : cellIndices(geometry, img.width, img.height);
}

/** Upper axis end: the 99.95th percentile (from a 4096-bin count over [0, max]) rounded up to its bin edge. */
export function axisTop(v: ArrayLike<number>, n: number, max: number): number {
  if (!(max > 0)) return 1;
  const B = 4096;
  const c = new Uint32Array(B);
  const k = B / max;
  for (let i = 0; i < n; i++) {
    const b = Math.floor(v[i] * k);
    c[b >= B ? B - 1 : b < 0 ? 0 : b]++;
  }
  const want = Math.ceil(n * 0.9995);
  let acc = 0;
  for (let b = 0; b < B; b++) {
    acc += c[b];
    if (acc >= want) {
      const edge = ((b + 1) / B) * max;
      return Math.max(1, Math.min(max, max > 255 ? Math.ceil(edge) : edge));
    }
  }
  return max;
}

/** The region's histogram (bins × bins over [0, max] per channel) and exact quadrant counts for T1, T2. */
export function scatter(r: Region, t1: number, t2: number): ScatterResult {
  const t0 = performance.now();
  const hist = r.hist;
  let both = 0, only1 = 0, only2 = 0;
  const x = r.x, y = r.y;
  for (let i = 0; i < r.n; i++) {
    const a = x[i] > t1, b = y[i] > t2;
    if (a && b) both++;
    else if (a) only1++;
    else if (b) only2++;
  }
  return { hist, n: r.n, t1, t2, quadrants: { both, only1, only2, neither: r.n - both - only1 - only2 }, ms: performance.now() - t0 };
}

/** Live coefficients of the region with manual thresholds T1, T2 (no randomization: that is for runs). */
export function livePreview(r: Region, t1: number, t2: number): RegionResult {
  return measurePairs(r.pairs, { method: 'manual', ch1: t1, ch2: t2 }, { skipSlow: r.n > 2_000_000 });
}
