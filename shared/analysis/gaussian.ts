/**
 * Separable Gaussian and Laplacian-of-Gaussian filtering on a rectangular box of an image.
 *
 * The scale-normalised Laplacian of Gaussian, −σ²∇²(G_σ ∗ I), responds most strongly to a bright blob of
 * matching size (Lindeberg 1998, "Feature detection with automatic scale selection", Int. J. Comput. Vis.
 * 30:79–116, doi:10.1023/A:1008045108935; the operator after Marr & Hildreth 1980, "Theory of edge
 * detection", Proc. R. Soc. Lond. B 207:187–217, doi:10.1098/rspb.1980.0020). The sign is flipped so a
 * bright spot gives a positive response.
 *
 * Separability: ∇²G(x, y) = G''(x)G(y) + G(x)G''(y), so the response takes four 1-D passes (rows with G and
 * G'', then columns with G'' and G), each O(n · taps) — O(n) per pass for a fixed σ.
 *
 * Kernels: G is the sampled Gaussian on k = −R..R, R = ⌈truncate · σ⌉ (truncate 4, as SciPy's ndimage),
 * normalised to sum 1; G'' is the sampled second derivative (k²/σ⁴ − 1/σ²)·G(k) minus G(k)·ΣG'', so that it
 * sums to zero (a constant or a linear ramp gives no response). Pixels beyond the image edge are the
 * half-sample mirror image (… c b a | a b c …), as SciPy's `mode='reflect'`; inside the image the filter
 * reads real pixels around the box, so the response on a box equals the response on the whole image.
 * The input is shifted by `offset` (subtracted before filtering) so that a flat input gives exactly 0.
 * Every input pixel read must be finite; otherwise a RangeError quotes the pixel.
 */
import type { ChannelArray } from './types';

export const GAUSSIAN_TRUNCATE = 4;

/** A box of pixels: columns x0 ≤ x < x1, rows y0 ≤ y < y1. */
export interface PixelBox {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export interface GaussianKernels {
  radius: number;
  /** G(k), k = 0..R (symmetric) */
  g: Float64Array;
  /** zero-sum G''(k), k = 0..R (symmetric) */
  d2: Float64Array;
}

export function gaussianKernels(sigma: number, truncate = GAUSSIAN_TRUNCATE): GaussianKernels {
  if (!(Number.isFinite(sigma) && sigma > 0)) throw new RangeError(`Gaussian sigma must be a positive number of pixels, received ${sigma}`);
  if (!(Number.isFinite(truncate) && truncate > 0)) throw new RangeError(`Gaussian truncation must be positive, received ${truncate}`);
  const R = Math.max(1, Math.ceil(truncate * sigma));
  const g = new Float64Array(R + 1);
  const d2 = new Float64Array(R + 1);
  let sg = 0;
  for (let k = 0; k <= R; k++) {
    g[k] = Math.exp((-k * k) / (2 * sigma * sigma));
    sg += k === 0 ? g[k] : 2 * g[k];
  }
  let sd = 0;
  for (let k = 0; k <= R; k++) {
    g[k] /= sg;
    d2[k] = ((k * k) / sigma ** 4 - 1 / sigma ** 2) * g[k];
    sd += k === 0 ? d2[k] : 2 * d2[k];
  }
  for (let k = 0; k <= R; k++) d2[k] -= g[k] * sd;
  return { radius: R, g, d2 };
}

function reflect(i: number, n: number): number {
  const p = 2 * n;
  let j = i % p;
  if (j < 0) j += p;
  return j < n ? j : p - 1 - j;
}

function checkBox(width: number, height: number, length: number, box: PixelBox) {
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0 && width * height === length))
    throw new RangeError(`image size ${width}×${height} does not match ${length} pixels`);
  const { x0, y0, x1, y1 } = box;
  if (!(Number.isInteger(x0) && Number.isInteger(y0) && Number.isInteger(x1) && Number.isInteger(y1) && 0 <= x0 && x0 < x1 && x1 <= width && 0 <= y0 && y0 < y1 && y1 <= height))
    throw new RangeError(`filter box ${JSON.stringify(box)} is not inside the ${width}×${height} image`);
}

/** The box plus R pixels each side, mirrored at the image edges, minus `offset`, as Float32. */
function paddedTile(data: ChannelArray, width: number, height: number, box: PixelBox, R: number, offset: number) {
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0;
  const tw = bw + 2 * R, th = bh + 2 * R;
  const tile = new Float32Array(tw * th);
  const cols = new Int32Array(tw);
  for (let i = 0; i < tw; i++) cols[i] = reflect(box.x0 - R + i, width);
  for (let j = 0; j < th; j++) {
    const row = reflect(box.y0 - R + j, height) * width;
    const o = j * tw;
    for (let i = 0; i < tw; i++) {
      const v = data[row + cols[i]];
      if (!Number.isFinite(v)) throw new RangeError(`spot filtering needs finite pixels; pixel ${row + cols[i]} is ${v}`);
      tile[o + i] = v - offset;
    }
  }
  return { tile, tw, th, bw, bh };
}

/**
 * −σ²∇²(G_σ ∗ (I − offset)) on `box`, returned row-major (box width × box height, Float32).
 */
export function laplacianOfGaussian(data: ChannelArray, width: number, height: number, sigma: number, box: PixelBox, offset = 0): Float32Array {
  checkBox(width, height, data.length, box);
  const { radius: R, g, d2 } = gaussianKernels(sigma);
  const { tile, tw, th, bw, bh } = paddedTile(data, width, height, box, R, offset);
  // rows: smooth (G) and second derivative (G'') of every tile row, over the box's columns
  const G = new Float32Array(bw * th);
  const D = new Float32Array(bw * th);
  const g0 = g[0], d0 = d2[0];
  for (let j = 0; j < th; j++) {
    const o = j * tw + R, q = j * bw;
    for (let i = 0; i < bw; i++) {
      const c = o + i;
      let sg = g0 * tile[c], sd = d0 * tile[c];
      for (let k = 1; k <= R; k++) {
        const s = tile[c - k] + tile[c + k];
        sg += g[k] * s;
        sd += d2[k] * s;
      }
      G[q + i] = sg;
      D[q + i] = sd;
    }
  }
  // columns: G''(y)·[G(x) ∗ I] + G(y)·[G''(x) ∗ I]
  const out = new Float32Array(bw * bh);
  const scale = -sigma * sigma;
  const acc = new Float64Array(bw);
  for (let y = 0; y < bh; y++) {
    const c = (y + R) * bw;
    for (let i = 0; i < bw; i++) acc[i] = d0 * G[c + i] + g0 * D[c + i];
    for (let k = 1; k <= R; k++) {
      const up = c - k * bw, dn = c + k * bw, dk = d2[k], gk = g[k];
      for (let i = 0; i < bw; i++) acc[i] += dk * (G[up + i] + G[dn + i]) + gk * (D[up + i] + D[dn + i]);
    }
    const o = y * bw;
    for (let i = 0; i < bw; i++) out[o + i] = scale * acc[i];
  }
  return out;
}

/** G_σ ∗ (I − offset) on `box` (two separable passes), row-major Float32. */
export function gaussianFilter(data: ChannelArray, width: number, height: number, sigma: number, box: PixelBox, offset = 0): Float32Array {
  checkBox(width, height, data.length, box);
  const { radius: R, g } = gaussianKernels(sigma);
  const { tile, tw, th, bw, bh } = paddedTile(data, width, height, box, R, offset);
  const G = new Float32Array(bw * th);
  for (let j = 0; j < th; j++) {
    const o = j * tw + R, q = j * bw;
    for (let i = 0; i < bw; i++) {
      const c = o + i;
      let s = g[0] * tile[c];
      for (let k = 1; k <= R; k++) s += g[k] * (tile[c - k] + tile[c + k]);
      G[q + i] = s;
    }
  }
  const out = new Float32Array(bw * bh);
  for (let y = 0; y < bh; y++) {
    const c = (y + R) * bw, o = y * bw;
    for (let i = 0; i < bw; i++) {
      let s = g[0] * G[c + i];
      for (let k = 1; k <= R; k++) s += g[k] * (G[c - k * bw + i] + G[c + k * bw + i]);
      out[o + i] = s;
    }
  }
  return out;
}
