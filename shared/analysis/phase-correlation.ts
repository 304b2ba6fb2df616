/**
 * Shift between the two channels by phase correlation with sub-pixel refinement by upsampled
 * cross-correlation: Guizar-Sicairos M, Thurman ST, Fienup JR (2008), "Efficient subpixel image
 * registration algorithms", Opt. Lett. 33:156–158, doi:10.1364/OL.33.000156. Phase correlation itself:
 * Kuglin CD, Hines DC (1975), Proc. IEEE Int. Conf. Cybernetics and Society, 163–165.
 *
 * Convention (the `analyze` contract): channel 2 is displaced by (dx, dy) relative to channel 1, i.e.
 * ch2(x + dx, y + dy) ≈ ch1(x, y); x right, y down, in pixels.
 *
 * Method:
 *  1. each channel minus its mean (over finite pixels; NaN pixels carry no intensity and enter as the mean),
 *     tapered by a Tukey window (α = 0.25: cosine edges over an eighth of each side, flat in the middle;
 *     Harris FJ 1978, Proc. IEEE 66:51, doi:10.1109/PROC.1978.10837) so the image border, which both
 *     channels share, does not pull the peak towards zero shift, then zero-padded to the next power of two in
 *     each direction (so any size is accepted);
 *  2. cross-power spectrum P = B·conj(A) / |B·conj(A)| (0 where the product is 0); its inverse transform
 *     c(y, x) peaks at the integer shift (largest value, wrapped to −size/2 … size/2 as numpy's fftfreq);
 *  3. refinement: the same c evaluated off the grid by the matrix-multiply DFT of the paper (eq. 12),
 *     c(u, v) = (1/N) Re Σ_k P(k) e^{2πi (ky u / h + kx v / w)}, on nested 7 × 7 grids of step 1/4, 1/20 and
 *     1/100 px centred on the best point so far (±0.75, ±0.15, ±0.03 px). Each grid covers the
 *     uncertainty left by the one before, so the result is the paper's 1/100 px upsampled peak at a small
 *     fraction of the cost of one 150 × 150 grid (decided here). The half-plane spectrum is used with
 *     weights 1 (kx = 0, w/2) and 2, which makes c real (the Nyquist term split evenly between ±w/2).
 *
 * Degenerate cases: a channel without variation (constant, or every pixel NaN) gives dx = dy = null.
 * ±Infinity is rejected with a RangeError.
 */
import type { ChannelArray } from './types';
import { complexFft2dColumns, inverseRealFft2dRows, nextPowerOfTwo } from './fft';

export interface ShiftResult {
  /** channel 2's displacement along x (right) in pixels; null when undefined */
  dx: number | null;
  /** along y (down) */
  dy: number | null;
  /** height of the normalised phase-correlation peak (1 for identical channels); null when undefined */
  peak: number | null;
}

export interface ShiftOptions {
  /** final grid step is 1/upsample px; 100 by default (the paper's example and scikit-image's usual choice) */
  upsample?: number;
}

/**
 * The Tukey window of n points with taper fraction α (the formula of SciPy's `signal.windows.tukey(n, α)`,
 * symmetric, 0 at both ends).
 */
export function tukeyWindow(n: number, alpha: number): Float64Array {
  const w = new Float64Array(n).fill(1);
  if (n === 1 || alpha <= 0) return w;
  const width = Math.floor((alpha * (n - 1)) / 2);
  for (let i = 0; i <= width; i++) {
    const v = 0.5 * (1 + Math.cos(Math.PI * (-1 + (2 * i) / (alpha * (n - 1)))));
    w[i] = v;
    w[n - 1 - i] = v;
  }
  return w;
}

/** Taper fraction of the window (see the module comment). */
export const SHIFT_TAPER = 0.25;

/** A channel's finite mean and the taper of each column and row; null when it has no variation. */
interface Tapered {
  ch: ChannelArray;
  m: number;
  wx: Float64Array;
  wy: Float64Array;
}

/** Mean (over finite pixels) and taper of a channel; null when it has no variation. */
function tapered(ch: ChannelArray, width: number, height: number, what: string): Tapered | null {
  let s = 0, n = 0;
  let first = NaN, varies = false;
  const N = width * height;
  if (!(ch instanceof Float32Array || ch instanceof Float64Array)) {
    // integer data: no NaN or infinity to look for
    first = ch[0];
    for (let i = 0; i < N; i++) {
      const v = ch[i];
      if (v !== first) varies = true;
      s += v;
    }
    n = N;
  } else
    for (let i = 0; i < N; i++) {
      const v = ch[i];
      if (Number.isNaN(v)) continue;
      if (!Number.isFinite(v)) throw new RangeError(`${what} has an infinite value at pixel ${i}: ${v}`);
      if (n === 0) first = v;
      else if (v !== first) varies = true;
      s += v;
      n++;
    }
  if (!varies) return null;
  return { ch, m: s / n, wx: tukeyWindow(width, SHIFT_TAPER), wy: tukeyWindow(height, SHIFT_TAPER) };
}

/**
 * Row y of the two channels minus their means, tapered, zero-padded to W columns, as one complex row
 * (channel 1 real, channel 2 imaginary); false for the padding rows below the image.
 */
function taperedRow(a: Tapered, b: Tapered, width: number, height: number, W: number, y: number, out: Float64Array): boolean {
  if (y >= height) return false;
  const ca = a.ch, cb = b.ch, ma = a.m, mb = b.m, wxa = a.wx, wxb = b.wx, wya = a.wy[y], wyb = b.wy[y];
  const o = y * width;
  for (let x = 0; x < width; x++) {
    const va = ca[o + x], vb = cb[o + x];
    out[2 * x] = Number.isNaN(va) ? 0 : (va - ma) * wya * wxa[x];
    out[2 * x + 1] = Number.isNaN(vb) ? 0 : (vb - mb) * wyb * wxb[x];
  }
  out.fill(0, 2 * width, 2 * W);
  return true;
}

/**
 * c(u, v) on the grid u = cu + (i − m)·step, v = cv + (j − m)·step (i, j = 0 … 2m), from the half-plane
 * cross-power spectrum P of a W × H grid; returns the best (u, v) and its value.
 */
function refine(P: Float64Array, W: number, H: number, cu: number, cv: number, step: number, m: number): { u: number; v: number; c: number } {
  const hw = W / 2 + 1, n = 2 * m + 1;
  // row kernel: e^{2πi fy u_i / H} (fy in numpy's fftfreq order), interleaved (cos, sin)
  const K = new Float64Array(2 * n * H);
  for (let i = 0; i < n; i++) {
    const u = cu + (i - m) * step;
    for (let ky = 0; ky < H; ky++) {
      const a = (2 * Math.PI * (ky < H / 2 ? ky : ky - H) * u) / H;
      K[2 * (i * H + ky)] = Math.cos(a);
      K[2 * (i * H + ky) + 1] = Math.sin(a);
    }
  }
  // T(kx, i) = Σ_ky P(kx, ky) · kernel(i, ky): P is stored column by column (fft.ts), so each sum runs over
  // contiguous memory; four kernels at a time share each load of P (every sum keeps its own order)
  const tr = new Float64Array(hw * n), ti = new Float64Array(hw * n);
  for (let kx = 0; kx < hw; kx++) {
    const col = 2 * H * kx;
    for (let i = 0; i < n; i += 4) {
      // kernels i … i + 3 (the last one repeated past n, its sums dropped)
      const o0 = 2 * i * H, o1 = 2 * Math.min(i + 1, n - 1) * H, o2 = 2 * Math.min(i + 2, n - 1) * H, o3 = 2 * Math.min(i + 3, n - 1) * H;
      let r0 = 0, s0 = 0, r1 = 0, s1 = 0, r2 = 0, s2 = 0, r3 = 0, s3 = 0;
      for (let ky = 0; ky < H; ky++) {
        const pr = P[col + 2 * ky], pi = P[col + 2 * ky + 1];
        const q = 2 * ky;
        let cr = K[o0 + q], ci = K[o0 + q + 1];
        r0 += pr * cr - pi * ci;
        s0 += pr * ci + pi * cr;
        cr = K[o1 + q];
        ci = K[o1 + q + 1];
        r1 += pr * cr - pi * ci;
        s1 += pr * ci + pi * cr;
        cr = K[o2 + q];
        ci = K[o2 + q + 1];
        r2 += pr * cr - pi * ci;
        s2 += pr * ci + pi * cr;
        cr = K[o3 + q];
        ci = K[o3 + q + 1];
        r3 += pr * cr - pi * ci;
        s3 += pr * ci + pi * cr;
      }
      const t = kx * n + i;
      tr[t] = r0;
      ti[t] = s0;
      if (i + 1 < n) {
        tr[t + 1] = r1;
        ti[t + 1] = s1;
      }
      if (i + 2 < n) {
        tr[t + 2] = r2;
        ti[t + 2] = s2;
      }
      if (i + 3 < n) {
        tr[t + 3] = r3;
        ti[t + 3] = s3;
      }
    }
  }
  // c(i, j) = Re Σ_kx weight(kx) · T(kx, i) · e^{2πi kx v_j / W}
  let best = -Infinity, bu = cu, bv = cv;
  for (let j = 0; j < n; j++) {
    const v = cv + (j - m) * step;
    const ac = new Float64Array(n);
    for (let kx = 0; kx < hw; kx++) {
      const wgt = kx === 0 || kx === W / 2 ? 1 : 2;
      const a = (2 * Math.PI * kx * v) / W;
      const c = wgt * Math.cos(a), sn = wgt * Math.sin(a);
      for (let i = 0; i < n; i++) ac[i] += tr[kx * n + i] * c - ti[kx * n + i] * sn;
    }
    for (let i = 0; i < n; i++)
      if (ac[i] > best) {
        best = ac[i];
        bu = cu + (i - m) * step;
        bv = v;
      }
  }
  return { u: bu, v: bv, c: best / (W * H) };
}

/**
 * Channel 2's displacement relative to channel 1 (see the module comment). `ch1`, `ch2`: width × height,
 * row-major, one plane.
 */
export function measureShift(ch1: ChannelArray, ch2: ChannelArray, width: number, height: number, options: ShiftOptions = {}): ShiftResult {
  if (!(Number.isInteger(width) && width >= 1 && Number.isInteger(height) && height >= 1)) throw new RangeError(`image size must be positive whole numbers, received ${width}×${height}`);
  if (ch1.length !== width * height || ch2.length !== width * height)
    throw new RangeError(`channels must have ${width}×${height} = ${width * height} pixels, received ${ch1.length} and ${ch2.length}`);
  const upsample = options.upsample ?? 100;
  if (!(Number.isInteger(upsample) && upsample >= 1 && upsample <= 1000)) throw new RangeError(`upsample must be a whole number from 1 to 1000, received ${upsample}`);
  const W = Math.max(2, nextPowerOfTwo(width)), H = Math.max(2, nextPowerOfTwo(height));
  const a = tapered(ch1, width, height, 'channel 1');
  const b = tapered(ch2, width, height, 'channel 2');
  if (a === null || b === null) return { dx: null, dy: null, peak: null };
  // the spectra of both channels at once: Z = FFT(a + i·b), column by column (fft.ts), in a buffer with room
  // for two half planes (W/2 + 1 columns each): the cross-power spectrum replaces Z in the first, the
  // inverse's column transforms go to the second
  const hw = W / 2 + 1;
  const buf = new Float64Array(4 * hw * H);
  complexFft2dColumns(W, H, (y, out) => taperedRow(a, b, width, height, W, y, out), buf);
  // P = B·conj(A) / |B·conj(A)| on the half plane, with A(k) = (Z(k) + conj Z(−k)) / 2 and
  // B(k) = (Z(k) − conj Z(−k)) / (2i) (the Hermitian symmetry of real images; fft.ts). P(kx) overwrites Z(kx);
  // Z(−k) lies in column W − kx > W/2, never overwritten, except for the columns kx = 0 and W/2, which are
  // their own mirror: there ky and H − ky are done together.
  const P = buf.subarray(0, 2 * hw * H);
  const cross = (p: number, q: number) => {
    const zr = buf[p], zi = buf[p + 1], mr = buf[q], mi = buf[q + 1];
    const ar = (zr + mr) / 2, ai = -((zi - mi) / 2);
    const br = (zi + mi) / 2, bi = (mr - zr) / 2;
    const re = br * ar - bi * ai, im = br * ai + bi * ar;
    const mag = Math.sqrt(re * re + im * im);
    return mag > 0 ? [re / mag, im / mag] : [0, 0];
  };
  for (const kx of [0, W / 2])
    for (let ky = 0; ky <= H / 2; ky++) {
      const my = (H - ky) % H;
      const p = 2 * (kx * H + ky), q = 2 * (kx * H + my);
      const u = cross(p, q), v = cross(q, p);
      P[p] = u[0];
      P[p + 1] = u[1];
      P[q] = v[0];
      P[q + 1] = v[1];
    }
  for (let kx = 1; kx < W / 2; kx++) {
    const mx = W - kx;
    for (let ky = 0; ky < H; ky++) {
      const my = (H - ky) % H;
      const p = 2 * (kx * H + ky), q = 2 * (mx * H + my);
      const zr = buf[p], zi = buf[p + 1], mr = buf[q], mi = buf[q + 1];
      const ar = (zr + mr) / 2, ai = -((zi - mi) / 2);
      const br = (zi + mi) / 2, bi = (mr - zr) / 2;
      const re = br * ar - bi * ai, im = br * ai + bi * ar;
      const mag = Math.sqrt(re * re + im * im);
      P[p] = mag > 0 ? re / mag : 0;
      P[p + 1] = mag > 0 ? im / mag : 0;
    }
  }
  // its inverse c(y, x), scanned for the largest value row by row (the image is not kept)
  let best = -Infinity, k = 0;
  inverseRealFft2dRows(P, W, H, buf.subarray(2 * hw * H), (y, z, two) => {
    const o = y * W;
    for (let x = 0; x < W; x++)
      if (z[2 * x] > best) {
        best = z[2 * x];
        k = o + x;
      }
    if (two)
      for (let x = 0; x < W; x++)
        if (z[2 * x + 1] > best) {
          best = z[2 * x + 1];
          k = o + W + x;
        }
  });
  const iy = Math.floor(k / W), ix = k % W;
  let u = iy > H / 2 ? iy - H : iy, v = ix > W / 2 ? ix - W : ix;
  let peak = best;
  if (upsample > 1) {
    // nested grids of 7 × 7 points; steps 1/4, 1/20, 1/100 for the default (each ≥ 5× finer, ending at 1/upsample)
    const steps: number[] = [];
    for (let s = upsample; s > 1; s = Math.max(1, Math.floor(s / 5))) steps.unshift(s);
    let prev = 1;
    for (const U of steps) {
      // the grid reaches ≥ 0.6 of the previous step each way (its best point is within half a step)
      const r = refine(P, W, H, u, v, 1 / U, Math.ceil((0.6 * U) / prev));
      u = r.u;
      v = r.v;
      peak = r.c;
      prev = U;
    }
  }
  const clean = (t: number) => (Object.is(t, -0) ? 0 : Math.round(t * upsample) / upsample);
  return { dx: clean(v), dy: clean(u), peak };
}
