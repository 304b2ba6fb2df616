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
 * Every input pixel read must be finite; otherwise a RangeError quotes the pixel — unless `missing` is
 * 'zero': a non-finite pixel is then read as `offset` (0 after the shift), and the caller keeps to the
 * outputs whose neighbourhood holds no such pixel (missing.ts; spot detection does).
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
 * Rows of a strip of the box plus R pixels each side, mirrored at the image edges, minus `offset`, as
 * Float32 — one tile row at a time, so the filters keep only 2R + 1 filtered rows in memory instead of
 * whole-box copies. The row sits at `pad − R` in a buffer of `pad` slots each side (pad ≥ R); the slots
 * beyond R stay 0 (read by the fused passes with a zero coefficient only). Integer samples are always
 * finite; float samples are checked.
 */
class PaddedRows {
  readonly buf: Float32Array;
  private readonly tw: number;
  private readonly cols: Int32Array;
  private readonly i0: number;
  private readonly i1: number;
  private readonly at: number;
  private readonly float: boolean;
  /** columns sx0 ≤ x < sx1 of the image (a strip of the box), rows of the box from y0 */
  constructor(private readonly data: ChannelArray, private readonly width: number, private readonly height: number, private readonly y0: number, private readonly sx0: number, sx1: number, private readonly R: number, pad: number, private readonly offset: number, private readonly zeroMissing = false) {
    this.tw = sx1 - sx0 + 2 * R;
    this.at = pad - R;
    this.buf = new Float32Array(sx1 - sx0 + 2 * pad);
    this.cols = new Int32Array(this.tw);
    for (let i = 0; i < this.tw; i++) this.cols[i] = reflect(sx0 - R + i, width);
    // tile columns i0 ≤ i < i1 are image columns sx0 − R + i without mirroring
    this.i0 = Math.max(0, R - sx0);
    this.i1 = Math.min(this.tw, width - sx0 + R);
    this.float = data instanceof Float32Array || data instanceof Float64Array;
  }

  /** fill `buf` with tile row j (image row y0 − R + j, mirrored) */
  load(j: number): Float32Array {
    const { data, buf, cols, i0, i1, offset, tw, at } = this;
    const row = reflect(this.y0 - this.R + j, this.height) * this.width;
    if (this.float && !this.zeroMissing)
      for (let i = 0; i < tw; i++) {
        const v = data[row + cols[i]];
        if (!Number.isFinite(v)) throw new RangeError(`spot filtering needs finite pixels; pixel ${row + cols[i]} is ${v}`);
      }
    for (let i = 0; i < i0; i++) buf[at + i] = data[row + cols[i]] - offset;
    for (let i = i0, p = row + this.sx0 - this.R + i0; i < i1; i++, p++) buf[at + i] = data[p] - offset;
    for (let i = i1; i < tw; i++) buf[at + i] = data[row + cols[i]] - offset;
    if (this.float && this.zeroMissing)
      for (let i = 0; i < tw; i++) if (!Number.isFinite(data[row + cols[i]])) buf[at + i] = 0;
    return buf;
  }
}

/**
 * Columns per strip: the ring of 2(2R + 1) filtered Float32 rows of a strip stays within the first-level
 * cache (26 rows × 256 × 4 bytes = 26 kB at σ 1.5), which makes the column pass about twice as fast as
 * over whole 2048-pixel rows. Each output pixel gets the same sums in the same order either way.
 */
export const FILTER_STRIP = 256;
/**
 * Radii up to this (σ ≤ 1.5 at truncate 4) take the fused passes: all taps of a pixel in one expression,
 * the kernels padded with zero taps to this radius (x + 0·y = x, so the sums are those of the unpadded
 * kernels), instead of a sweep over the row per three taps with a Float64 accumulator row in between.
 */
export const FUSED_RADIUS = 6;

/**
 * G ∗ row and G'' ∗ row of one tile row (its centre pixel i at `pad + i`) into ring rows G, D at q;
 * taps k, k + 1, k + 2 per sweep, per pixel the same additions in the same order as one tap at a time.
 */
function rowPassLoG(tile: Float32Array, pad: number, G: Float32Array, D: Float32Array, q: number, w: number, R: number, g: Float64Array, d2: Float64Array, sg: Float64Array, sd: Float64Array): void {
  const g0 = g[0], d0 = d2[0];
  for (let i = 0; i < w; i++) {
    sg[i] = g0 * tile[pad + i];
    sd[i] = d0 * tile[pad + i];
  }
  let k = 1;
  for (; k + 2 <= R; k += 3) {
    const ga = g[k], gb = g[k + 1], gc = g[k + 2], ea = d2[k], eb = d2[k + 1], ec = d2[k + 2];
    for (let i = 0, l = pad + i - k, h = pad + i + k; i < w; i++, l++, h++) {
      const sa = tile[l] + tile[h], sb = tile[l - 1] + tile[h + 1], sc = tile[l - 2] + tile[h + 2];
      sg[i] = sg[i] + ga * sa + gb * sb + gc * sc;
      sd[i] = sd[i] + ea * sa + eb * sb + ec * sc;
    }
  }
  for (; k <= R; k++) {
    const ga = g[k], ea = d2[k];
    for (let i = 0, l = pad - k, h = pad + k; i < w; i++, l++, h++) {
      const sa = tile[l] + tile[h];
      sg[i] += ga * sa;
      sd[i] += ea * sa;
    }
  }
  for (let i = 0; i < w; i++) {
    G[q + i] = sg[i];
    D[q + i] = sd[i];
  }
}

/** scale · (G''(y)·[G(x) ∗ I] + G(y)·[G''(x) ∗ I]) of one output row from the ring rows up[k], dn[k] */
function colPassLoG(G: Float32Array, D: Float32Array, out: Float32Array, o: number, w: number, R: number, g: Float64Array, d2: Float64Array, up: Int32Array, dn: Int32Array, acc: Float64Array, scale: number): void {
  const c = up[0], g0 = g[0], d0 = d2[0];
  for (let i = 0; i < w; i++) acc[i] = d0 * G[c + i] + g0 * D[c + i];
  // three taps per sweep over the row (the same additions, in the same order, as one tap at a time)
  let k = 1;
  for (; k + 2 <= R; k += 3) {
    const u1 = up[k], v1 = dn[k], u2 = up[k + 1], v2 = dn[k + 1], u3 = up[k + 2], v3 = dn[k + 2];
    const e1 = d2[k], g1 = g[k], e2 = d2[k + 1], g2 = g[k + 1], e3 = d2[k + 2], g3 = g[k + 2];
    for (let i = 0; i < w; i++)
      acc[i] = acc[i] + (e1 * (G[u1 + i] + G[v1 + i]) + g1 * (D[u1 + i] + D[v1 + i])) + (e2 * (G[u2 + i] + G[v2 + i]) + g2 * (D[u2 + i] + D[v2 + i])) + (e3 * (G[u3 + i] + G[v3 + i]) + g3 * (D[u3 + i] + D[v3 + i]));
  }
  for (; k <= R; k++) {
    const u = up[k], v = dn[k], dk = d2[k], gk = g[k];
    for (let i = 0; i < w; i++) acc[i] += dk * (G[u + i] + G[v + i]) + gk * (D[u + i] + D[v + i]);
  }
  for (let i = 0; i < w; i++) out[o + i] = scale * acc[i];
}

/** rowPassLoG for R ≤ FUSED_RADIUS: g, d2 padded with zeros to 7 taps, tile centre at 6 + i */
function rowPassLoGFused(tile: Float32Array, G: Float32Array, D: Float32Array, q: number, w: number, g: Float64Array, d2: Float64Array): void {
  const g0 = g[0], g1 = g[1], g2 = g[2], g3 = g[3], g4 = g[4], g5 = g[5], g6 = g[6];
  const e0 = d2[0], e1 = d2[1], e2 = d2[2], e3 = d2[3], e4 = d2[4], e5 = d2[5], e6 = d2[6];
  for (let i = 0, c = 6; i < w; i++, c++) {
    const t = tile[c];
    const s1 = tile[c - 1] + tile[c + 1], s2 = tile[c - 2] + tile[c + 2], s3 = tile[c - 3] + tile[c + 3];
    const s4 = tile[c - 4] + tile[c + 4], s5 = tile[c - 5] + tile[c + 5], s6 = tile[c - 6] + tile[c + 6];
    G[q + i] = g0 * t + g1 * s1 + g2 * s2 + g3 * s3 + g4 * s4 + g5 * s5 + g6 * s6;
    D[q + i] = e0 * t + e1 * s1 + e2 * s2 + e3 * s3 + e4 * s4 + e5 * s5 + e6 * s6;
  }
}

/** colPassLoG for R ≤ FUSED_RADIUS (up, dn of the taps beyond R point at a row of zeros) */
function colPassLoGFused(G: Float32Array, D: Float32Array, out: Float32Array, o: number, w: number, g: Float64Array, d2: Float64Array, up: Int32Array, dn: Int32Array, scale: number): void {
  const c = up[0], u1 = up[1], v1 = dn[1], u2 = up[2], v2 = dn[2], u3 = up[3], v3 = dn[3], u4 = up[4], v4 = dn[4], u5 = up[5], v5 = dn[5], u6 = up[6], v6 = dn[6];
  const g0 = g[0], g1 = g[1], g2 = g[2], g3 = g[3], g4 = g[4], g5 = g[5], g6 = g[6];
  const e0 = d2[0], e1 = d2[1], e2 = d2[2], e3 = d2[3], e4 = d2[4], e5 = d2[5], e6 = d2[6];
  for (let i = 0; i < w; i++)
    out[o + i] = scale * (e0 * G[c + i] + g0 * D[c + i] + (e1 * (G[u1 + i] + G[v1 + i]) + g1 * (D[u1 + i] + D[v1 + i])) + (e2 * (G[u2 + i] + G[v2 + i]) + g2 * (D[u2 + i] + D[v2 + i])) + (e3 * (G[u3 + i] + G[v3 + i]) + g3 * (D[u3 + i] + D[v3 + i]))
      + (e4 * (G[u4 + i] + G[v4 + i]) + g4 * (D[u4 + i] + D[v4 + i])) + (e5 * (G[u5 + i] + G[v5 + i]) + g5 * (D[u5 + i] + D[v5 + i])) + (e6 * (G[u6 + i] + G[v6 + i]) + g6 * (D[u6 + i] + D[v6 + i])));
}

/**
 * The ring offsets of the 2R + 1 rows around output row y: up[k] = row y + R − k, dn[k] = row y + R + k
 * (ring slot = row mod 2R + 1, w values a slot); taps R < k < up.length point at offset `zero`.
 */
function ringOffsets(y: number, R: number, w: number, up: Int32Array, dn: Int32Array, zero: number): void {
  const K = 2 * R + 1;
  for (let k = 0; k <= R; k++) {
    up[k] = ((y + R - k) % K) * w;
    dn[k] = ((y + R + k) % K) * w;
  }
  for (let k = R + 1; k < up.length; k++) up[k] = dn[k] = zero;
}

/** a copy of a kernel with zero taps up to `radius` */
function padKernel(k: Float64Array, radius: number): Float64Array {
  const out = new Float64Array(radius + 1);
  out.set(k);
  return out;
}

/**
 * −σ²∇²(G_σ ∗ (I − offset)) on `box`, returned row-major (box width × box height, Float32).
 * The box is processed in strips of `FILTER_STRIP` columns; within a strip the row passes fill a ring of
 * 2R + 1 rows, which the column passes read while it is still in cache.
 */
export function laplacianOfGaussian(data: ChannelArray, width: number, height: number, sigma: number, box: PixelBox, offset = 0, missing: 'refuse' | 'zero' = 'refuse'): Float32Array {
  checkBox(width, height, data.length, box);
  const { radius: R, g, d2 } = gaussianKernels(sigma);
  const fused = R <= FUSED_RADIUS;
  const pad = fused ? FUSED_RADIUS : R;
  const gp = fused ? padKernel(g, pad) : g, dp = fused ? padKernel(d2, pad) : d2;
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0, K = 2 * R + 1;
  const S = Math.min(bw, FILTER_STRIP);
  // ring of row-filtered tile rows: tile row j in slot j mod K (G(x) ∗ I and G''(x) ∗ I); the row of S
  // values at K·S (past the slots of any strip width) stays 0
  const G = new Float32Array((K + 1) * S);
  const D = new Float32Array((K + 1) * S);
  const sg = new Float64Array(S), sd = new Float64Array(S), acc = new Float64Array(S);
  const up = new Int32Array(pad + 1), dn = new Int32Array(pad + 1);
  const out = new Float32Array(bw * bh);
  const scale = -sigma * sigma;
  for (let sx0 = box.x0; sx0 < box.x1; sx0 += S) {
    const sx1 = Math.min(box.x1, sx0 + S), w = sx1 - sx0;
    const rows = new PaddedRows(data, width, height, box.y0, sx0, sx1, R, pad, offset, missing === 'zero');
    for (let j = 0; j < bh + 2 * R; j++) {
      if (fused) rowPassLoGFused(rows.load(j), G, D, (j % K) * w, w, gp, dp);
      else rowPassLoG(rows.load(j), pad, G, D, (j % K) * w, w, R, g, d2, sg, sd);
      // output row y needs tile rows y .. y + 2R
      const y = j - 2 * R;
      if (y < 0) continue;
      ringOffsets(y, R, w, up, dn, K * S);
      const o = y * bw + (sx0 - box.x0);
      if (fused) colPassLoGFused(G, D, out, o, w, gp, dp, up, dn, scale);
      else colPassLoG(G, D, out, o, w, R, g, d2, up, dn, acc, scale);
    }
  }
  return out;
}

function rowPassGauss(tile: Float32Array, G: Float32Array, q: number, w: number, R: number, g: Float64Array): void {
  for (let i = 0; i < w; i++) {
    const c = R + i;
    let s = g[0] * tile[c];
    for (let k = 1; k <= R; k++) s += g[k] * (tile[c - k] + tile[c + k]);
    G[q + i] = s;
  }
}

function colPassGauss(G: Float32Array, out: Float32Array, o: number, w: number, R: number, g: Float64Array, up: Int32Array, dn: Int32Array): void {
  const c = up[0];
  for (let i = 0; i < w; i++) {
    let s = g[0] * G[c + i];
    for (let k = 1; k <= R; k++) s += g[k] * (G[up[k] + i] + G[dn[k] + i]);
    out[o + i] = s;
  }
}

/** G_σ ∗ (I − offset) on `box` (two separable passes, in strips as the LoG), row-major Float32. */
export function gaussianFilter(data: ChannelArray, width: number, height: number, sigma: number, box: PixelBox, offset = 0): Float32Array {
  checkBox(width, height, data.length, box);
  const { radius: R, g } = gaussianKernels(sigma);
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0, K = 2 * R + 1;
  const S = Math.min(bw, FILTER_STRIP);
  const G = new Float32Array(K * S);
  const up = new Int32Array(R + 1), dn = new Int32Array(R + 1);
  const out = new Float32Array(bw * bh);
  for (let sx0 = box.x0; sx0 < box.x1; sx0 += S) {
    const sx1 = Math.min(box.x1, sx0 + S), w = sx1 - sx0;
    const rows = new PaddedRows(data, width, height, box.y0, sx0, sx1, R, R, offset);
    for (let j = 0; j < 2 * R; j++) rowPassGauss(rows.load(j), G, (j % K) * w, w, R, g);
    for (let y = 0; y < bh; y++) {
      const j = y + 2 * R;
      rowPassGauss(rows.load(j), G, (j % K) * w, w, R, g);
      ringOffsets(y, R, w, up, dn, 0);
      colPassGauss(G, out, y * bw + (sx0 - box.x0), w, R, g, up, dn);
    }
  }
  return out;
}
