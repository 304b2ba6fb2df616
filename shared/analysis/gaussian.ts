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
 *
 * Memory and order: rows are mirrored and filtered one at a time into a ring of 2R + 1 rows that the column
 * pass reads while it is still in cache; several taps are added per sweep over a row, in the same order per
 * pixel as one tap at a time, so the values are those of the plain two-pass loops (Float32 rows, double sums).
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

/**
 * Rows of the box plus R pixels each side, mirrored at the image edges, minus `offset`, as Float32 — one
 * tile row at a time, so the filters keep only 2R + 1 filtered rows in memory instead of whole-box copies.
 * Integer samples are always finite; float samples are checked.
 */
class PaddedRows {
  readonly tw: number;
  readonly th: number;
  readonly buf: Float32Array;
  private readonly cols: Int32Array;
  private readonly i0: number;
  private readonly i1: number;
  private readonly float: boolean;
  constructor(private readonly data: ChannelArray, private readonly width: number, private readonly height: number, private readonly box: PixelBox, private readonly R: number, private readonly offset: number) {
    const bw = box.x1 - box.x0, bh = box.y1 - box.y0;
    this.tw = bw + 2 * R;
    this.th = bh + 2 * R;
    this.buf = new Float32Array(this.tw);
    this.cols = new Int32Array(this.tw);
    for (let i = 0; i < this.tw; i++) this.cols[i] = reflect(box.x0 - R + i, width);
    // tile columns i0 ≤ i < i1 are image columns box.x0 − R + i without mirroring
    this.i0 = Math.max(0, R - box.x0);
    this.i1 = Math.min(this.tw, width - box.x0 + R);
    this.float = data instanceof Float32Array || data instanceof Float64Array;
  }

  /** fill `buf` with tile row j */
  load(j: number): Float32Array {
    const { data, buf, cols, i0, i1, offset, tw } = this;
    const row = reflect(this.box.y0 - this.R + j, this.height) * this.width;
    if (this.float)
      for (let i = 0; i < tw; i++) {
        const v = data[row + cols[i]];
        if (!Number.isFinite(v)) throw new RangeError(`spot filtering needs finite pixels; pixel ${row + cols[i]} is ${v}`);
      }
    for (let i = 0; i < i0; i++) buf[i] = data[row + cols[i]] - offset;
    for (let i = i0, p = row + this.box.x0 - this.R + i0; i < i1; i++, p++) buf[i] = data[p] - offset;
    for (let i = i1; i < tw; i++) buf[i] = data[row + cols[i]] - offset;
    return buf;
  }
}

/**
 * −σ²∇²(G_σ ∗ (I − offset)) on `box`, returned row-major (box width × box height, Float32).
 * The row passes fill a ring of 2R + 1 rows, which the column passes read while it is still in cache.
 */
export function laplacianOfGaussian(data: ChannelArray, width: number, height: number, sigma: number, box: PixelBox, offset = 0): Float32Array {
  checkBox(width, height, data.length, box);
  const { radius: R, g, d2 } = gaussianKernels(sigma);
  const rows = new PaddedRows(data, width, height, box, R, offset);
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0, K = 2 * R + 1;
  // ring of row-filtered tile rows: tile row j in slot j mod K; G(x) ∗ I and G''(x) ∗ I
  const G = new Float32Array(K * bw);
  const D = new Float32Array(K * bw);
  const g0 = g[0], d0 = d2[0];
  const sg = new Float64Array(bw), sd = new Float64Array(bw);
  const rowPass = (j: number) => {
    const tile = rows.load(j);
    const q = (j % K) * bw;
    for (let i = 0; i < bw; i++) {
      sg[i] = g0 * tile[R + i];
      sd[i] = d0 * tile[R + i];
    }
    // taps k, k + 1, k + 2 per sweep: per pixel the same additions in the same order as one tap at a time
    let k = 1;
    for (; k + 2 <= R; k += 3) {
      const ga = g[k], gb = g[k + 1], gc = g[k + 2], ea = d2[k], eb = d2[k + 1], ec = d2[k + 2];
      for (let i = 0, l = R + i - k, h = R + i + k; i < bw; i++, l++, h++) {
        const sa = tile[l] + tile[h], sb = tile[l - 1] + tile[h + 1], sc = tile[l - 2] + tile[h + 2];
        sg[i] = sg[i] + ga * sa + gb * sb + gc * sc;
        sd[i] = sd[i] + ea * sa + eb * sb + ec * sc;
      }
    }
    for (; k <= R; k++) {
      const ga = g[k], ea = d2[k];
      for (let i = 0, l = R - k, h = R + k; i < bw; i++, l++, h++) {
        const sa = tile[l] + tile[h];
        sg[i] += ga * sa;
        sd[i] += ea * sa;
      }
    }
    for (let i = 0; i < bw; i++) {
      G[q + i] = sg[i];
      D[q + i] = sd[i];
    }
  };
  const out = new Float32Array(bw * bh);
  const scale = -sigma * sigma;
  const acc = new Float64Array(bw);
  const up = new Int32Array(R + 1), dn = new Int32Array(R + 1);
  for (let j = 0; j < 2 * R; j++) rowPass(j);
  // columns: G''(y)·[G(x) ∗ I] + G(y)·[G''(x) ∗ I]
  for (let y = 0; y < bh; y++) {
    rowPass(y + 2 * R);
    for (let k = 0; k <= R; k++) {
      up[k] = ((y + R - k) % K) * bw;
      dn[k] = ((y + R + k) % K) * bw;
    }
    const c = up[0], o = y * bw;
    for (let i = 0; i < bw; i++) acc[i] = d0 * G[c + i] + g0 * D[c + i];
    // three taps per sweep over the row (the same additions, in the same order, as one tap at a time)
    let k = 1;
    for (; k + 2 <= R; k += 3) {
      const u1 = up[k], v1 = dn[k], u2 = up[k + 1], v2 = dn[k + 1], u3 = up[k + 2], v3 = dn[k + 2];
      const e1 = d2[k], g1 = g[k], e2 = d2[k + 1], g2 = g[k + 1], e3 = d2[k + 2], g3 = g[k + 2];
      for (let i = 0; i < bw; i++)
        acc[i] = acc[i] + (e1 * (G[u1 + i] + G[v1 + i]) + g1 * (D[u1 + i] + D[v1 + i])) + (e2 * (G[u2 + i] + G[v2 + i]) + g2 * (D[u2 + i] + D[v2 + i])) + (e3 * (G[u3 + i] + G[v3 + i]) + g3 * (D[u3 + i] + D[v3 + i]));
    }
    for (; k <= R; k++) {
      const u = up[k], v = dn[k], dk = d2[k], gk = g[k];
      for (let i = 0; i < bw; i++) acc[i] += dk * (G[u + i] + G[v + i]) + gk * (D[u + i] + D[v + i]);
    }
    for (let i = 0; i < bw; i++) out[o + i] = scale * acc[i];
  }
  return out;
}

/** G_σ ∗ (I − offset) on `box` (two separable passes), row-major Float32. */
export function gaussianFilter(data: ChannelArray, width: number, height: number, sigma: number, box: PixelBox, offset = 0): Float32Array {
  checkBox(width, height, data.length, box);
  const { radius: R, g } = gaussianKernels(sigma);
  const rows = new PaddedRows(data, width, height, box, R, offset);
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0, K = 2 * R + 1;
  const G = new Float32Array(K * bw);
  const rowPass = (j: number) => {
    const tile = rows.load(j);
    const q = (j % K) * bw;
    for (let i = 0; i < bw; i++) {
      const c = R + i;
      let s = g[0] * tile[c];
      for (let k = 1; k <= R; k++) s += g[k] * (tile[c - k] + tile[c + k]);
      G[q + i] = s;
    }
  };
  const out = new Float32Array(bw * bh);
  const up = new Int32Array(R + 1), dn = new Int32Array(R + 1);
  for (let j = 0; j < 2 * R; j++) rowPass(j);
  for (let y = 0; y < bh; y++) {
    rowPass(y + 2 * R);
    for (let k = 0; k <= R; k++) {
      up[k] = ((y + R - k) % K) * bw;
      dn[k] = ((y + R + k) % K) * bw;
    }
    const c = up[0], o = y * bw;
    for (let i = 0; i < bw; i++) {
      let s = g[0] * G[c + i];
      for (let k = 1; k <= R; k++) s += g[k] * (G[up[k] + i] + G[dn[k] + i]);
      out[o + i] = s;
    }
  }
  return out;
}
