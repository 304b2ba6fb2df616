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
 * Memory and order: rows are mirrored and filtered one at a time into a ring of rows that the column pass
 * reads while it is still in cache. For R ≤ FUSED_RADIUS (σ ≤ 1.5, the spot default) the ring rows are
 * Float64, the row pass makes four pixels from 16 loads and the column pass eight output rows per sweep;
 * each pixel's sum has one fixed order, so its value does not depend on the box, strip or sweep that
 * computed it. Larger radii take the plain two-pass loops (Float32 rows, double sums).
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
 * Columns per strip of the plain passes (R > FUSED_RADIUS): the ring of 2(2R + 1) filtered Float32 rows of
 * a strip stays within the first-level cache (26 rows × 256 × 4 bytes = 26 kB at R 6), which makes the
 * column pass about twice as fast as over whole 2048-pixel rows. Each output pixel gets the same sums in
 * the same order either way.
 */
export const FILTER_STRIP = 256;
/**
 * Radii up to this (σ ≤ 1.5 at truncate 4) take the fused passes: all taps of a pixel in one expression,
 * the kernels padded with zero taps to this radius (x + 0·y = x, so the sums are those of the unpadded
 * kernels), instead of a sweep over the row per three taps with a Float64 accumulator row in between.
 * Measured on a 2048² 16-bit image at σ 1.5 (one core): 120 ms CPU with Float32 ring rows and one output
 * row per column sweep, 68 ms with the Float64 ring and eight rows per sweep below.
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

/**
 * Output rows per column sweep of the fused passes: eight rows read 2·6 + 8 ring rows of G and D (5 loads
 * a pixel instead of 26), each loaded value serving up to eight sums.
 */
export const FUSED_BLOCK = 8;
/** ring rows of the fused passes: the 2·FUSED_RADIUS + 1 rows of one output row plus FUSED_BLOCK − 1 */
const FUSED_RING = 2 * FUSED_RADIUS + FUSED_BLOCK;
/**
 * Columns per strip of the fused passes: their ring rows are Float64 (no conversion on the loads of a
 * column sweep), 2 × 21 rows × 128 × 8 bytes = 43 kB, within the first-level cache.
 */
export const FUSED_STRIP = 128;

/**
 * G ∗ row and G'' ∗ row of one tile row for R ≤ FUSED_RADIUS (g, d2 padded with zero taps to 7, tile
 * centre of pixel i at 6 + i), into ring rows G, D at q: four pixels per step from 16 loads, each pixel
 * the same expression (symmetric taps added first, (t[c − k] + t[c + k])·g[k]) whichever step computes it.
 */
function rowPassLoGFused(t: Float32Array, G: Float64Array, D: Float64Array, q: number, w: number, g: Float64Array, d2: Float64Array): void {
  const g0 = g[0], g1 = g[1], g2 = g[2], g3 = g[3], g4 = g[4], g5 = g[5], g6 = g[6];
  const e0 = d2[0], e1 = d2[1], e2 = d2[2], e3 = d2[3], e4 = d2[4], e5 = d2[5], e6 = d2[6];
  let i = 0, s1, s2, s3, s4, s5, s6;
  for (; i + 4 <= w; i += 4) {
    const t0 = t[i + 0], t1 = t[i + 1], t2 = t[i + 2], t3 = t[i + 3], t4 = t[i + 4], t5 = t[i + 5], t6 = t[i + 6], t7 = t[i + 7], t8 = t[i + 8], t9 = t[i + 9], t10 = t[i + 10], t11 = t[i + 11], t12 = t[i + 12], t13 = t[i + 13], t14 = t[i + 14], t15 = t[i + 15];
    s1 = t5 + t7; s2 = t4 + t8; s3 = t3 + t9; s4 = t2 + t10; s5 = t1 + t11; s6 = t0 + t12;
    G[q + i + 0] = g0 * t6 + g1 * s1 + g2 * s2 + g3 * s3 + g4 * s4 + g5 * s5 + g6 * s6;
    D[q + i + 0] = e0 * t6 + e1 * s1 + e2 * s2 + e3 * s3 + e4 * s4 + e5 * s5 + e6 * s6;
    s1 = t6 + t8; s2 = t5 + t9; s3 = t4 + t10; s4 = t3 + t11; s5 = t2 + t12; s6 = t1 + t13;
    G[q + i + 1] = g0 * t7 + g1 * s1 + g2 * s2 + g3 * s3 + g4 * s4 + g5 * s5 + g6 * s6;
    D[q + i + 1] = e0 * t7 + e1 * s1 + e2 * s2 + e3 * s3 + e4 * s4 + e5 * s5 + e6 * s6;
    s1 = t7 + t9; s2 = t6 + t10; s3 = t5 + t11; s4 = t4 + t12; s5 = t3 + t13; s6 = t2 + t14;
    G[q + i + 2] = g0 * t8 + g1 * s1 + g2 * s2 + g3 * s3 + g4 * s4 + g5 * s5 + g6 * s6;
    D[q + i + 2] = e0 * t8 + e1 * s1 + e2 * s2 + e3 * s3 + e4 * s4 + e5 * s5 + e6 * s6;
    s1 = t8 + t10; s2 = t7 + t11; s3 = t6 + t12; s4 = t5 + t13; s5 = t4 + t14; s6 = t3 + t15;
    G[q + i + 3] = g0 * t9 + g1 * s1 + g2 * s2 + g3 * s3 + g4 * s4 + g5 * s5 + g6 * s6;
    D[q + i + 3] = e0 * t9 + e1 * s1 + e2 * s2 + e3 * s3 + e4 * s4 + e5 * s5 + e6 * s6;
  }
  for (; i < w; i++) {
    const c = i + 6, t6 = t[c];
    s1 = t[c - 1] + t[c + 1]; s2 = t[c - 2] + t[c + 2]; s3 = t[c - 3] + t[c + 3]; s4 = t[c - 4] + t[c + 4]; s5 = t[c - 5] + t[c + 5]; s6 = t[c - 6] + t[c + 6];
    G[q + i] = g0 * t6 + g1 * s1 + g2 * s2 + g3 * s3 + g4 * s4 + g5 * s5 + g6 * s6;
    D[q + i] = e0 * t6 + e1 * s1 + e2 * s2 + e3 * s3 + e4 * s4 + e5 * s5 + e6 * s6;
  }
}

/**
 * scale · (G''(y) ∗ G + G(y) ∗ D) for R ≤ FUSED_RADIUS: FUSED_BLOCK output rows (o, o + bw, …) from ring rows
 * r[0..19], output row m centred on r[m + 6], symmetric rows added first, (G[c − k] + G[c + k])·G''(k). Each
 * output is the same expression as in colPassLoGRow, so a pixel's value does not depend on the sweep (nor
 * on the box or strip) that computed it.
 */
function colPassLoGBlock(G: Float64Array, D: Float64Array, out: Float32Array, o: number, bw: number, w: number, g: Float64Array, d2: Float64Array, r: Int32Array, scale: number): void {
  const g0 = g[0], g1 = g[1], g2 = g[2], g3 = g[3], g4 = g[4], g5 = g[5], g6 = g[6];
  const e0 = d2[0], e1 = d2[1], e2 = d2[2], e3 = d2[3], e4 = d2[4], e5 = d2[5], e6 = d2[6];
  const r0 = r[0], r1 = r[1], r2 = r[2], r3 = r[3], r4 = r[4], r5 = r[5], r6 = r[6], r7 = r[7], r8 = r[8], r9 = r[9];
  const r10 = r[10], r11 = r[11], r12 = r[12], r13 = r[13], r14 = r[14], r15 = r[15], r16 = r[16], r17 = r[17], r18 = r[18], r19 = r[19];
  for (let i = 0; i < w; i++) {
    const x0 = G[r0 + i], x1 = G[r1 + i], x2 = G[r2 + i], x3 = G[r3 + i], x4 = G[r4 + i], x5 = G[r5 + i], x6 = G[r6 + i], x7 = G[r7 + i], x8 = G[r8 + i], x9 = G[r9 + i];
    const x10 = G[r10 + i], x11 = G[r11 + i], x12 = G[r12 + i], x13 = G[r13 + i], x14 = G[r14 + i], x15 = G[r15 + i], x16 = G[r16 + i], x17 = G[r17 + i], x18 = G[r18 + i], x19 = G[r19 + i];
    const y0 = D[r0 + i], y1 = D[r1 + i], y2 = D[r2 + i], y3 = D[r3 + i], y4 = D[r4 + i], y5 = D[r5 + i], y6 = D[r6 + i], y7 = D[r7 + i], y8 = D[r8 + i], y9 = D[r9 + i];
    const y10 = D[r10 + i], y11 = D[r11 + i], y12 = D[r12 + i], y13 = D[r13 + i], y14 = D[r14 + i], y15 = D[r15 + i], y16 = D[r16 + i], y17 = D[r17 + i], y18 = D[r18 + i], y19 = D[r19 + i];
    out[o + 0 * bw + i] = scale * (e0 * x6 + g0 * y6 + (e1 * (x5 + x7) + g1 * (y5 + y7)) + (e2 * (x4 + x8) + g2 * (y4 + y8)) + (e3 * (x3 + x9) + g3 * (y3 + y9))
      + (e4 * (x2 + x10) + g4 * (y2 + y10)) + (e5 * (x1 + x11) + g5 * (y1 + y11)) + (e6 * (x0 + x12) + g6 * (y0 + y12)));
    out[o + 1 * bw + i] = scale * (e0 * x7 + g0 * y7 + (e1 * (x6 + x8) + g1 * (y6 + y8)) + (e2 * (x5 + x9) + g2 * (y5 + y9)) + (e3 * (x4 + x10) + g3 * (y4 + y10))
      + (e4 * (x3 + x11) + g4 * (y3 + y11)) + (e5 * (x2 + x12) + g5 * (y2 + y12)) + (e6 * (x1 + x13) + g6 * (y1 + y13)));
    out[o + 2 * bw + i] = scale * (e0 * x8 + g0 * y8 + (e1 * (x7 + x9) + g1 * (y7 + y9)) + (e2 * (x6 + x10) + g2 * (y6 + y10)) + (e3 * (x5 + x11) + g3 * (y5 + y11))
      + (e4 * (x4 + x12) + g4 * (y4 + y12)) + (e5 * (x3 + x13) + g5 * (y3 + y13)) + (e6 * (x2 + x14) + g6 * (y2 + y14)));
    out[o + 3 * bw + i] = scale * (e0 * x9 + g0 * y9 + (e1 * (x8 + x10) + g1 * (y8 + y10)) + (e2 * (x7 + x11) + g2 * (y7 + y11)) + (e3 * (x6 + x12) + g3 * (y6 + y12))
      + (e4 * (x5 + x13) + g4 * (y5 + y13)) + (e5 * (x4 + x14) + g5 * (y4 + y14)) + (e6 * (x3 + x15) + g6 * (y3 + y15)));
    out[o + 4 * bw + i] = scale * (e0 * x10 + g0 * y10 + (e1 * (x9 + x11) + g1 * (y9 + y11)) + (e2 * (x8 + x12) + g2 * (y8 + y12)) + (e3 * (x7 + x13) + g3 * (y7 + y13))
      + (e4 * (x6 + x14) + g4 * (y6 + y14)) + (e5 * (x5 + x15) + g5 * (y5 + y15)) + (e6 * (x4 + x16) + g6 * (y4 + y16)));
    out[o + 5 * bw + i] = scale * (e0 * x11 + g0 * y11 + (e1 * (x10 + x12) + g1 * (y10 + y12)) + (e2 * (x9 + x13) + g2 * (y9 + y13)) + (e3 * (x8 + x14) + g3 * (y8 + y14))
      + (e4 * (x7 + x15) + g4 * (y7 + y15)) + (e5 * (x6 + x16) + g5 * (y6 + y16)) + (e6 * (x5 + x17) + g6 * (y5 + y17)));
    out[o + 6 * bw + i] = scale * (e0 * x12 + g0 * y12 + (e1 * (x11 + x13) + g1 * (y11 + y13)) + (e2 * (x10 + x14) + g2 * (y10 + y14)) + (e3 * (x9 + x15) + g3 * (y9 + y15))
      + (e4 * (x8 + x16) + g4 * (y8 + y16)) + (e5 * (x7 + x17) + g5 * (y7 + y17)) + (e6 * (x6 + x18) + g6 * (y6 + y18)));
    out[o + 7 * bw + i] = scale * (e0 * x13 + g0 * y13 + (e1 * (x12 + x14) + g1 * (y12 + y14)) + (e2 * (x11 + x15) + g2 * (y11 + y15)) + (e3 * (x10 + x16) + g3 * (y10 + y16))
      + (e4 * (x9 + x17) + g4 * (y9 + y17)) + (e5 * (x8 + x18) + g5 * (y8 + y18)) + (e6 * (x7 + x19) + g6 * (y7 + y19)));
  }
}

/** colPassLoGBlock for one output row (the last rows of a strip): ring rows r[0..12] */
function colPassLoGRow(G: Float64Array, D: Float64Array, out: Float32Array, o: number, w: number, g: Float64Array, d2: Float64Array, r: Int32Array, scale: number): void {
  const g0 = g[0], g1 = g[1], g2 = g[2], g3 = g[3], g4 = g[4], g5 = g[5], g6 = g[6];
  const e0 = d2[0], e1 = d2[1], e2 = d2[2], e3 = d2[3], e4 = d2[4], e5 = d2[5], e6 = d2[6];
  const r0 = r[0], r1 = r[1], r2 = r[2], r3 = r[3], r4 = r[4], r5 = r[5], r6 = r[6], r7 = r[7], r8 = r[8], r9 = r[9];
  const r10 = r[10], r11 = r[11], r12 = r[12];
  for (let i = 0; i < w; i++) {
    const x0 = G[r0 + i], x1 = G[r1 + i], x2 = G[r2 + i], x3 = G[r3 + i], x4 = G[r4 + i], x5 = G[r5 + i], x6 = G[r6 + i], x7 = G[r7 + i], x8 = G[r8 + i], x9 = G[r9 + i];
    const x10 = G[r10 + i], x11 = G[r11 + i], x12 = G[r12 + i];
    const y0 = D[r0 + i], y1 = D[r1 + i], y2 = D[r2 + i], y3 = D[r3 + i], y4 = D[r4 + i], y5 = D[r5 + i], y6 = D[r6 + i], y7 = D[r7 + i], y8 = D[r8 + i], y9 = D[r9 + i];
    const y10 = D[r10 + i], y11 = D[r11 + i], y12 = D[r12 + i];
    out[o + i] = scale * (e0 * x6 + g0 * y6 + (e1 * (x5 + x7) + g1 * (y5 + y7)) + (e2 * (x4 + x8) + g2 * (y4 + y8)) + (e3 * (x3 + x9) + g3 * (y3 + y9))
      + (e4 * (x2 + x10) + g4 * (y2 + y10)) + (e5 * (x1 + x11) + g5 * (y1 + y11)) + (e6 * (x0 + x12) + g6 * (y0 + y12)));
  }
}

/**
 * The fused passes (R ≤ FUSED_RADIUS) on `box`: strips of FUSED_STRIP columns, a ring of FUSED_RING
 * row-filtered tile rows (slot = tile row mod FUSED_RING), FUSED_BLOCK output rows per column sweep once
 * their rows are in. Block row b of output row y is tile row y + R − 6 + b; rows beyond the tile (taps past
 * R, whose coefficient is 0) read the row of zeros after the slots.
 */
function laplacianFused(data: ChannelArray, width: number, height: number, sigma: number, box: PixelBox, offset: number, zeroMissing: boolean, R: number, g: Float64Array, d2: Float64Array): Float32Array {
  const P = FUSED_RADIUS, M = FUSED_RING;
  const gp = padKernel(g, P), dp = padKernel(d2, P);
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0;
  const S = Math.min(bw, FUSED_STRIP);
  const G = new Float64Array((M + 1) * S), D = new Float64Array((M + 1) * S);
  const zero = M * S;
  const r = new Int32Array(M);
  const out = new Float32Array(bw * bh);
  const scale = -sigma * sigma;
  const tileRows = bh + 2 * R;
  for (let sx0 = box.x0; sx0 < box.x1; sx0 += S) {
    const sx1 = Math.min(box.x1, sx0 + S), w = sx1 - sx0;
    const rows = new PaddedRows(data, width, height, box.y0, sx0, sx1, R, P, offset, zeroMissing);
    let y = 0;
    for (let j = 0; j < tileRows; j++) {
      rowPassLoGFused(rows.load(j), G, D, (j % M) * w, w, gp, dp);
      // output row y needs tile rows y .. y + 2R; after the last tile row, the remaining rows one at a time
      const ready = j - 2 * R;
      while (y + FUSED_BLOCK - 1 <= ready || (j === tileRows - 1 && y <= ready)) {
        for (let b = 0; b < M; b++) {
          const tr = y + R - P + b;
          r[b] = tr < 0 || tr > j ? zero : (tr % M) * w;
        }
        const o = y * bw + (sx0 - box.x0);
        if (y + FUSED_BLOCK - 1 <= ready) {
          colPassLoGBlock(G, D, out, o, bw, w, gp, dp, r, scale);
          y += FUSED_BLOCK;
        } else {
          colPassLoGRow(G, D, out, o, w, gp, dp, r, scale);
          y++;
        }
      }
    }
  }
  return out;
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
  if (R <= FUSED_RADIUS) return laplacianFused(data, width, height, sigma, box, offset, missing === 'zero', R, g, d2);
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0, K = 2 * R + 1;
  const S = Math.min(bw, FILTER_STRIP);
  // ring of row-filtered tile rows: tile row j in slot j mod K (G(x) ∗ I and G''(x) ∗ I)
  const G = new Float32Array(K * S);
  const D = new Float32Array(K * S);
  const sg = new Float64Array(S), sd = new Float64Array(S), acc = new Float64Array(S);
  const up = new Int32Array(R + 1), dn = new Int32Array(R + 1);
  const out = new Float32Array(bw * bh);
  const scale = -sigma * sigma;
  for (let sx0 = box.x0; sx0 < box.x1; sx0 += S) {
    const sx1 = Math.min(box.x1, sx0 + S), w = sx1 - sx0;
    const rows = new PaddedRows(data, width, height, box.y0, sx0, sx1, R, R, offset, missing === 'zero');
    for (let j = 0; j < bh + 2 * R; j++) {
      rowPassLoG(rows.load(j), R, G, D, (j % K) * w, w, R, g, d2, sg, sd);
      // output row y needs tile rows y .. y + 2R
      const y = j - 2 * R;
      if (y < 0) continue;
      ringOffsets(y, R, w, up, dn, 0);
      colPassLoG(G, D, out, y * bw + (sx0 - box.x0), w, R, g, d2, up, dn, acc, scale);
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
