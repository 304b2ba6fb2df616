/**
 * Spot (punctum) detection in one channel within a region.
 *
 * 1. Filter: scale-normalised Laplacian of Gaussian at σ (gaussian.ts; Lindeberg 1998, Int. J. Comput. Vis.
 *    30:79–116, doi:10.1023/A:1008045108935), computed on the region's bounding box with the real image
 *    around it, after subtracting the region's lowest value (so a flat region gives exactly 0).
 * 2. Noise: σ̂ = 1.4826 · MAD of the response over the region's pixels (median absolute deviation from the
 *    median, exact, robust-scale.ts; the factor makes it consistent for Gaussian noise — Hampel 1974, "The
 *    influence curve and its role in robust estimation", J. Am. Stat. Assoc. 69:383–393,
 *    doi:10.1080/01621459.1974.10482962).
 * 3. Candidates: region pixels whose response is strictly greater than all 8 neighbours (3×3; neighbours
 *    outside the image do not exist, neighbours outside the region do count) and strictly greater than
 *    k · σ̂. With σ̂ = 0 (more than half the region has one response, e.g. a flat or all-saturated region)
 *    the noise scale is undefined and no spot is reported.
 * 4. Centre: Gaussian-mask centroid (Thompson, Larson & Webb 2002, "Precise nanometer localization analysis
 *    for individual fluorescent probes", Biophys. J. 82:2775–2783, doi:10.1016/S0006-3495(02)75618-X) in a
 *    window of half-width w = ⌈2σ⌉ around the peak pixel (clipped to the image): intensities minus the
 *    local background b (median of the window's outer ring of pixels) are weighted by a Gaussian of width σ
 *    centred at the current estimate, iterated from the peak pixel's centre until it moves < 1e−4 px
 *    (at most 50 steps). A candidate whose weighted sum is ≤ 0, or whose centre leaves the peak pixel's
 *    3×3 neighbourhood, is not a spot. Coordinates: x right, y down, origin the top-left corner of pixel
 *    (0, 0), so pixel (i, j) has its centre at (i + 0.5, j + 0.5).
 * 5. Minimum separation: candidates in decreasing response; one closer than `minSeparation` (centre to
 *    centre) to an already kept spot is dropped.
 * 6. Close neighbours: spots within reach of each other's window are refined again against the image minus
 *    their neighbours' fitted Gaussian models (see `deblend`); σ is taken as the spots' Gaussian width.
 * Per spot: centre, peak (the raw intensity of the peak pixel), integrated intensity (Σ(I − b) over the
 * window), and the filter response at the peak pixel.
 *
 * Degenerate cases: an empty region, or a region whose bounding box is narrower or shorter than the
 * window (2w + 1 pixels), gives null (nothing can be detected there).
 */
import { gaussianKernels, laplacianOfGaussian, type PixelBox } from './gaussian';
import { missingMask, nearMissing } from './missing';
import { PointGrid } from './pairing';
import { medianAndMad } from './robust-scale';
import type { ChannelArray } from './types';

export const SPOT_DEFAULTS = { sigma: 1.5, k: 5 } as const;
/** MAD → standard deviation for Gaussian noise, 1/Φ⁻¹(3/4) */
export const MAD_SCALE = 1.4826;

export interface SpotOptions {
  /** filter scale σ in pixels (default 1.5) */
  sigma?: number;
  /** keep maxima whose response exceeds k × the noise estimate (default 5) */
  k?: number;
  /** minimum centre-to-centre distance in pixels (default 2σ) */
  minSeparation?: number;
  /**
   * pixels without a value (non-finite): 'refuse' (default) throws at the first one the filter reads;
   * 'exclude' leaves out of the region every pixel within R + 1 of one (R = ⌈4σ⌉, the filter's reach, plus
   * the 3×3 maximum test), so no response, maximum or centroid used depends on a missing pixel
   */
  missing?: 'refuse' | 'exclude';
}

export interface Spot {
  x: number;
  y: number;
  peak: number;
  integrated: number;
  response: number;
}

interface Refined extends Spot {
  px: number;
  py: number;
  background: number;
  amplitude: number;
}

export interface SpotDetection {
  spots: Spot[];
  /** 1.4826 · MAD of the response over the region */
  noise: number;
  threshold: number;
  /** centroid window half-width w = ⌈2σ⌉ */
  window: number;
  regionPixels: number;
}

/** how far (Chebyshev, pixels) a searched pixel stays from a missing one: the filter's reach R = ⌈4σ⌉ plus 1 */
export function missingMargin(sigma: number): number {
  return gaussianKernels(sigma).radius + 1;
}

/** resolved, checked options */
export function spotOptions(o: SpotOptions = {}): { sigma: number; k: number; minSeparation: number } {
  const sigma = o.sigma ?? SPOT_DEFAULTS.sigma;
  if (!(Number.isFinite(sigma) && sigma > 0 && sigma <= 50)) throw new RangeError(`spot sigma must be a number of pixels in (0, 50], received ${o.sigma}`);
  const k = o.k ?? SPOT_DEFAULTS.k;
  if (!(Number.isFinite(k) && k > 0)) throw new RangeError(`spot k must be a positive number, received ${o.k}`);
  const minSeparation = o.minSeparation ?? 2 * sigma;
  if (!(Number.isFinite(minSeparation) && minSeparation >= 0)) throw new RangeError(`minimum separation must be a non-negative number of pixels, received ${o.minSeparation}`);
  return { sigma, k, minSeparation };
}

/** sorted linear indices of a region (null = the whole image), checked against the image size */
export function regionIndexList(region: Uint8Array | ArrayLike<number> | null, n: number): Uint32Array {
  if (region === null) {
    const all = new Uint32Array(n);
    for (let i = 0; i < n; i++) all[i] = i;
    return all;
  }
  if (region instanceof Uint8Array) {
    if (region.length !== n) throw new RangeError(`mask has ${region.length} pixels, the image ${n}`);
    let c = 0;
    for (let i = 0; i < n; i++) if (region[i]) c++;
    const out = new Uint32Array(c);
    c = 0;
    for (let i = 0; i < n; i++) if (region[i]) out[c++] = i;
    return out;
  }
  const out = new Uint32Array(region.length);
  for (let k = 0; k < region.length; k++) {
    const i = region[k];
    if (!(Number.isInteger(i) && i >= 0 && i < n)) throw new RangeError(`pixel index out of range: ${i} (image has ${n} pixels)`);
    out[k] = i;
  }
  let increasing = true;
  for (let k = 1; k < out.length && increasing; k++) if (!(out[k] > out[k - 1])) increasing = false;
  if (increasing) return out;
  out.sort();
  for (let k = 1; k < out.length; k++) if (out[k] === out[k - 1]) throw new RangeError(`pixel index listed twice: ${out[k]}`);
  return out;
}

/**
 * @param region mask (non-zero inside, full size), linear pixel indices, or null for the whole image
 * @returns null when the region is empty or its bounding box is smaller than the centroid window
 */
export function detectSpots(
  data: ChannelArray,
  width: number,
  height: number,
  region: Uint8Array | ArrayLike<number> | null,
  options: SpotOptions = {},
): SpotDetection | null {
  const { sigma, k, minSeparation } = spotOptions(options);
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0 && width * height === data.length))
    throw new RangeError(`image size ${width}×${height} does not match ${data.length} pixels`);
  const N = data.length;
  const listed = region === null ? null : regionIndexList(region, N);
  // the whole image (null; or a list of every pixel, as the list is sorted and without repeats) needs no
  // index list: the filter box is then the image itself, and its pixels are the region's in order
  let idx = listed !== null && listed.length === N ? null : listed;
  const w = Math.ceil(2 * sigma);
  const gaps = options.missing === 'exclude' ? missingMask([data], N) : null;
  if (gaps) {
    const near = nearMissing(gaps, width, height, missingMargin(sigma));
    const from = idx ?? regionIndexList(null, N);
    let c = 0;
    for (let t = 0; t < from.length; t++) if (!near[from[t]]) c++;
    const kept = new Uint32Array(c);
    c = 0;
    for (let t = 0; t < from.length; t++) if (!near[from[t]]) kept[c++] = from[t];
    idx = kept;
  }
  const n = idx === null ? N : idx.length;
  if (n === 0) return null;
  let bx0 = width, by0 = height, bx1 = -1, by1 = -1;
  let low = Infinity;
  if (idx === null) {
    bx0 = 0;
    by0 = 0;
    bx1 = width - 1;
    by1 = height - 1;
    low = lowestPixel(data);
  } else
    for (let t = 0; t < n; t++) {
      const i = idx[t];
      const x = i % width, y = (i - x) / width;
      if (x < bx0) bx0 = x;
      if (x > bx1) bx1 = x;
      if (y < by0) by0 = y;
      if (y > by1) by1 = y;
      const v = data[i];
      if (!Number.isFinite(v)) throw new RangeError(`spot detection needs finite pixels; pixel ${i} is ${v}`);
      if (v < low) low = v;
    }
  if (bx1 - bx0 + 1 < 2 * w + 1 || by1 - by0 + 1 < 2 * w + 1) return null;
  // response on the bounding box plus one pixel (the 3×3 neighbours), clipped to the image
  const box: PixelBox = { x0: Math.max(0, bx0 - 1), y0: Math.max(0, by0 - 1), x1: Math.min(width, bx1 + 2), y1: Math.min(height, by1 + 2) };
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0;
  const resp = laplacianOfGaussian(data, width, height, sigma, box, low, gaps ? 'zero' : 'refuse');
  const at = (i: number) => {
    const x = i % width, y = (i - x) / width;
    return (y - box.y0) * bw + (x - box.x0);
  };
  let vals: Float32Array;
  if (idx === null) vals = resp;
  else {
    vals = new Float32Array(n);
    for (let t = 0; t < n; t++) vals[t] = resp[at(idx[t])];
  }
  const noise = MAD_SCALE * medianAndMad(vals).mad;
  const threshold = k * noise;
  const result: SpotDetection = { spots: [], noise, threshold, window: w, regionPixels: n };
  if (!(noise > 0)) return result;

  // candidates: strict 3×3 maxima above the threshold (box coordinates bxi, byi; p = byi · bw + bxi)
  const isMax = (p: number, bxi: number, byi: number) => {
    const r = resp[p];
    for (let dy = -1; dy <= 1; dy++) {
      const yy = byi + dy;
      if (yy < 0 || yy >= bh) continue;
      for (let dx = -1; dx <= 1; dx++) {
        if (dx === 0 && dy === 0) continue;
        const xx = bxi + dx;
        if (xx < 0 || xx >= bw) continue;
        if (!(r > resp[yy * bw + xx])) return false;
      }
    }
    return true;
  };
  let cand: number[] = [];
  if (idx === null) cand = boxMaxima(resp, bw, bh, threshold, isMax);
  else
    for (let t = 0; t < n; t++) {
      const i = idx[t];
      const x = i % width, y = (i - x) / width;
      const bxi = x - box.x0, byi = y - box.y0;
      const p = byi * bw + bxi;
      if (resp[p] > threshold && isMax(p, bxi, byi)) cand.push(i);
    }
  const refined: Refined[] = [];
  const scratch = centroidScratch(w);
  for (const i of cand) {
    const s = refineSpot(data, width, height, i % width, Math.floor(i / width), sigma, w, null, scratch);
    if (s) {
      s.response = resp[at(i)];
      refined.push(s);
    }
  }
  refined.sort((a, b) => b.response - a.response || a.y - b.y || a.x - b.x);
  let kept: Refined[] = refined;
  if (minSeparation > 0 && refined.length > 1) {
    kept = [];
    const grid = new PointGrid(refined.map((s) => s.x), refined.map((s) => s.y), minSeparation);
    const keep = new Uint8Array(refined.length);
    for (let a = 0; a < refined.length; a++) {
      let clash = false;
      grid.within(refined[a].x, refined[a].y, minSeparation, (b, d) => {
        if (keep[b] && d < minSeparation) clash = true;
      });
      if (!clash) {
        keep[a] = 1;
        kept.push(refined[a]);
      }
    }
  }
  result.spots = deblend(data, width, height, kept, sigma, w);
  return result;
}

/** the lowest pixel of an image; a non-finite pixel of float data is refused, quoted (integer samples are always finite) */
function lowestPixel(data: ChannelArray): number {
  if (data instanceof Float32Array || data instanceof Float64Array) {
    let low = Infinity;
    for (let i = 0, n = data.length; i < n; i++) {
      const v = data[i];
      if (!Number.isFinite(v)) throw new RangeError(`spot detection needs finite pixels; pixel ${i} is ${v}`);
      if (v < low) low = v;
    }
    return low;
  }
  // integers kept as integers, the length read once (each halves the time of the scan)
  const n = data.length;
  let low = data[0];
  for (let i = 1; i < n; i++) {
    const v = data[i];
    low = v < low ? v : low;
  }
  return low;
}

/**
 * Box pixels p (row-major, ascending) whose response is above `threshold` (> 0) and strictly above each of
 * its 8 neighbours: most pixels fail the threshold, one integer compare of the Float32 bits (positive
 * Float32 values order as their bits, negative ones have the sign bit: r > threshold ⟺ bits(r) > tb); a
 * pixel off the box edge compares its 8 neighbours directly, one on the edge through `isMax` (neighbours
 * beyond the box do not exist).
 */
function boxMaxima(resp: Float32Array, bw: number, bh: number, threshold: number, isMax: (p: number, bxi: number, byi: number) => boolean): number[] {
  const cand: number[] = [];
  const bits = new Int32Array(resp.buffer, resp.byteOffset, resp.length);
  // the largest Float32 bits not above the threshold: fround rounds to the nearest, so a Float32 above
  // the threshold is above fround(threshold), or equal to it when that rounded up
  const t32 = new Float32Array([threshold]);
  const tb = new Int32Array(t32.buffer)[0] - (t32[0] > threshold ? 1 : 0);
  for (let byi = 0, p = 0; byi < bh; byi++) {
    const inner = byi > 0 && byi < bh - 1;
    for (let bxi = 0; bxi < bw; bxi++, p++) {
      if (bits[p] <= tb) continue;
      const r = resp[p];
      if (inner && bxi > 0 && bxi < bw - 1) {
        if (r > resp[p - bw - 1] && r > resp[p - bw] && r > resp[p - bw + 1] && r > resp[p - 1] && r > resp[p + 1] && r > resp[p + bw - 1] && r > resp[p + bw] && r > resp[p + bw + 1]) cand.push(p);
      } else if (isMax(p, bxi, byi)) cand.push(p);
    }
  }
  return cand;
}

/**
 * Spots whose windows reach each other's light are refined again, each against the image minus the
 * Gaussian models (amplitude A·exp(−r²/2σ²), σ taken as the spot's width) of its neighbours at their
 * previous estimates, for up to 20 rounds or until no centre moves by 1e−4 px. Without this a close
 * neighbour pulls the centroid towards itself (by 0.3–0.8 px for spots 5 px apart at σ 1.5).
 */
function deblend(data: ChannelArray, width: number, height: number, spots: Refined[], sigma: number, w: number): Spot[] {
  const reach = w * Math.SQRT2 + 4 * sigma;
  const scratch = centroidScratch(w);
  const grid = new PointGrid(spots.map((s) => s.x), spots.map((s) => s.y), reach);
  const near: number[][] = spots.map((s, a) => {
    const out: number[] = [];
    grid.within(s.x, s.y, reach, (b) => {
      if (b !== a) out.push(b);
    });
    return out;
  });
  // a spot with no light of its own once its neighbours' models are subtracted is dropped (null)
  let cur: (Refined | null)[] = spots;
  // changed[b]: spot b's model (centre, amplitude, or being dropped) changed in the last round. A spot none
  // of whose neighbours changed would be refined against the same models as in the last round, which gives
  // the same result: it keeps it (the first round refines every spot that has neighbours)
  let changed = new Uint8Array(spots.length).fill(1);
  if (near.some((l) => l.length > 0)) {
    for (let round = 0; round < 20; round++) {
      let moved = 0;
      const prev = cur, was = changed;
      changed = new Uint8Array(spots.length);
      cur = prev.map((s, a) => {
        if (s === null || near[a].length === 0) return s;
        if (round > 0 && !near[a].some((b) => was[b])) return s;
        const others = near[a].map((b) => prev[b]).filter((o): o is Refined => o !== null);
        const r = refineSpot(data, width, height, s.px, s.py, sigma, w, others, scratch);
        if (r === null) {
          moved = Infinity;
          changed[a] = 1;
          return null;
        }
        r.response = s.response;
        moved = Math.max(moved, Math.abs(r.x - s.x) + Math.abs(r.y - s.y));
        if (r.x !== s.x || r.y !== s.y || r.amplitude !== s.amplitude) changed[a] = 1;
        return r;
      });
      if (moved < 1e-4) break;
    }
  }
  return cur.filter((s): s is Refined => s !== null).map((s) => ({ x: s.x, y: s.y, peak: s.peak, integrated: s.integrated, response: s.response }));
}

/** working arrays of the centroid, sized for one window (2w + 1)², shared by the calls of one detection */
interface CentroidScratch {
  vals: Float64Array;
  ring: Float64Array;
  ex: Float64Array;
}
function centroidScratch(w: number): CentroidScratch {
  const side = 2 * w + 1;
  return { vals: new Float64Array(side * side), ring: new Float64Array(4 * side), ex: new Float64Array(side) };
}

/** ascending sort of a[0..m): insertion sort for the short rings of the usual windows, else the native sort */
function sortPrefix(a: Float64Array, m: number): void {
  if (m > 64) {
    a.subarray(0, m).sort();
    return;
  }
  for (let i = 1; i < m; i++) {
    const v = a[i];
    let j = i - 1;
    while (j >= 0 && a[j] > v) {
      a[j + 1] = a[j];
      j--;
    }
    a[j + 1] = v;
  }
}

/**
 * Gaussian-mask centroid around peak pixel (px, py), with the models of `others` subtracted; null when
 * there is no signal above background or the centre leaves the peak pixel's 3×3 neighbourhood.
 */
function refineSpot(data: ChannelArray, width: number, height: number, px: number, py: number, sigma: number, w: number, others: Refined[] | null, scratch: CentroidScratch): Refined | null {
  const x0 = Math.max(0, px - w), x1 = Math.min(width - 1, px + w);
  const y0 = Math.max(0, py - w), y1 = Math.min(height - 1, py + w);
  const inv = 1 / (2 * sigma * sigma);
  const ww = x1 - x0 + 1, wh = y1 - y0 + 1, nv = ww * wh;
  const { vals, ring, ex } = scratch;
  for (let y = y0, t = 0; y <= y1; y++) for (let x = x0, q = y * width + x0; x <= x1; x++, q++, t++) vals[t] = data[q];
  // neighbours' models, subtracted in turn; each Gaussian separable (one exp per window column and row)
  if (others)
    for (const o of others) {
      for (let x = x0; x <= x1; x++) ex[x - x0] = Math.exp(-((x + 0.5 - o.x) ** 2) * inv);
      for (let y = y0; y <= y1; y++) {
        const ey = o.amplitude * Math.exp(-((y + 0.5 - o.y) ** 2) * inv);
        for (let x = x0, t = (y - y0) * ww; x <= x1; x++, t++) vals[t] -= ex[x - x0] * ey;
      }
    }
  // local background: median of the window's outer ring (of the raw pixels when no neighbours are modelled)
  let m = 0;
  for (let x = 0; x < ww; x++) ring[m++] = vals[x];
  if (wh > 1) for (let x = 0, t = (wh - 1) * ww; x < ww; x++, t++) ring[m++] = vals[t];
  for (let y = 1; y < wh - 1; y++) {
    ring[m++] = vals[y * ww];
    if (ww > 1) ring[m++] = vals[y * ww + ww - 1];
  }
  // numeric order, as a comparator sort of the same finite values
  sortPrefix(ring, m);
  const b = m % 2 ? ring[(m - 1) / 2] : (ring[m / 2 - 1] + ring[m / 2]) / 2;
  let cx = px + 0.5, cy = py + 0.5;
  let integrated = 0;
  for (let t = 0; t < nv; t++) integrated += vals[t] - b;
  let amplitude = 0;
  // the Gaussian weight is separable, exp(−(dx² + dy²)/2σ²) = exp(−dx²/2σ²)·exp(−dy²/2σ²): one exponential
  // per window column and row instead of one per pixel
  for (let it = 0; it < 50; it++) {
    let s = 0, sx = 0, sy = 0, gg = 0;
    for (let x = x0; x <= x1; x++) ex[x - x0] = Math.exp(-(x + 0.5 - cx) * (x + 0.5 - cx) * inv);
    for (let y = y0, t = 0; y <= y1; y++) {
      const yc = y + 0.5, ey = Math.exp(-(yc - cy) * (yc - cy) * inv);
      for (let x = x0, e = 0; x <= x1; x++, e++, t++) {
        const xc = x + 0.5;
        const g = ex[e] * ey;
        const wgt = (vals[t] - b) * g;
        s += wgt;
        sx += wgt * xc;
        sy += wgt * yc;
        gg += g * g;
      }
    }
    if (!(s > 0)) return null;
    amplitude = s / gg;
    const nx = sx / s, ny = sy / s;
    const moved = Math.abs(nx - cx) + Math.abs(ny - cy);
    cx = nx;
    cy = ny;
    if (Math.abs(cx - (px + 0.5)) > 1.5 || Math.abs(cy - (py + 0.5)) > 1.5) return null;
    if (moved < 1e-4) break;
  }
  return { x: cx, y: cy, px, py, peak: data[py * width + px], integrated, response: 0, background: b, amplitude };
}
