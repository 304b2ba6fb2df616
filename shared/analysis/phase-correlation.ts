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
import { inverseRealFft2d, nextPowerOfTwo, realFft2dPair } from './fft';

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

/** Channel minus its finite mean, tapered, zero-padded into a W × H grid; null when it has no variation. */
function centred(ch: ChannelArray, width: number, height: number, W: number, H: number, what: string): Float64Array | null {
  let s = 0, n = 0;
  let first = NaN, varies = false;
  for (let i = 0; i < width * height; i++) {
    const v = ch[i];
    if (Number.isNaN(v)) continue;
    if (!Number.isFinite(v)) throw new RangeError(`${what} has an infinite value at pixel ${i}: ${v}`);
    if (n === 0) first = v;
    else if (v !== first) varies = true;
    s += v;
    n++;
  }
  if (!varies) return null;
  const m = s / n;
  const wx = tukeyWindow(width, SHIFT_TAPER), wy = tukeyWindow(height, SHIFT_TAPER);
  const out = new Float64Array(W * H);
  for (let y = 0; y < height; y++)
    for (let x = 0; x < width; x++) {
      const v = ch[y * width + x];
      out[y * W + x] = Number.isNaN(v) ? 0 : (v - m) * wy[y] * wx[x];
    }
  return out;
}

/**
 * c(u, v) on the grid u = cu + (i − m)·step, v = cv + (j − m)·step (i, j = 0 … 2m), from the half-plane
 * cross-power spectrum P of a W × H grid; returns the best (u, v) and its value.
 */
function refine(P: Float64Array, W: number, H: number, cu: number, cv: number, step: number, m: number): { u: number; v: number; c: number } {
  const hw = W / 2 + 1, n = 2 * m + 1;
  // column kernel: weight(kx) · e^{2πi kx v_j / W}
  const kr = new Float64Array(n * hw), ki = new Float64Array(n * hw);
  for (let j = 0; j < n; j++) {
    const v = cv + (j - m) * step;
    for (let kx = 0; kx < hw; kx++) {
      const wgt = kx === 0 || kx === W / 2 ? 1 : 2;
      const a = (2 * Math.PI * kx * v) / W;
      kr[j * hw + kx] = wgt * Math.cos(a);
      ki[j * hw + kx] = wgt * Math.sin(a);
    }
  }
  // T(ky, j) = Σ_kx P(ky, kx) · kernel(kx, j)
  const tr = new Float64Array(H * n), ti = new Float64Array(H * n);
  for (let ky = 0; ky < H; ky++) {
    const row = 2 * hw * ky;
    for (let j = 0; j < n; j++) {
      const o = j * hw;
      let sr = 0, si = 0;
      for (let kx = 0; kx < hw; kx++) {
        const pr = P[row + 2 * kx], pi = P[row + 2 * kx + 1];
        const cr = kr[o + kx], ci = ki[o + kx];
        sr += pr * cr - pi * ci;
        si += pr * ci + pi * cr;
      }
      tr[ky * n + j] = sr;
      ti[ky * n + j] = si;
    }
  }
  // c(i, j) = Re Σ_ky T(ky, j) e^{2πi fy u_i / H}
  let best = -Infinity, bu = cu, bv = cv;
  for (let i = 0; i < n; i++) {
    const u = cu + (i - m) * step;
    const ac = new Float64Array(n);
    for (let ky = 0; ky < H; ky++) {
      const fy = ky < H / 2 ? ky : ky - H;
      const a = (2 * Math.PI * fy * u) / H;
      const c = Math.cos(a), s = Math.sin(a);
      for (let j = 0; j < n; j++) ac[j] += tr[ky * n + j] * c - ti[ky * n + j] * s;
    }
    for (let j = 0; j < n; j++)
      if (ac[j] > best) {
        best = ac[j];
        bu = u;
        bv = cv + (j - m) * step;
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
  const a = centred(ch1, width, height, W, H, 'channel 1');
  const b = centred(ch2, width, height, W, H, 'channel 2');
  if (a === null || b === null) return { dx: null, dy: null, peak: null };
  const { A, B } = realFft2dPair(a, b, W, H);
  // P = B·conj(A) / |B·conj(A)|, in place in B
  const P = B;
  for (let i = 0; i < P.length; i += 2) {
    const br = B[i], bi = B[i + 1], ar = A[i], ai = -A[i + 1];
    const re = br * ar - bi * ai, im = br * ai + bi * ar;
    const mag = Math.hypot(re, im);
    P[i] = mag > 0 ? re / mag : 0;
    P[i + 1] = mag > 0 ? im / mag : 0;
  }
  const c = inverseRealFft2d(P, W, H);
  let k = 0;
  for (let i = 1; i < c.length; i++) if (c[i] > c[k]) k = i;
  const iy = Math.floor(k / W), ix = k % W;
  let u = iy > H / 2 ? iy - H : iy, v = ix > W / 2 ? ix - W : ix;
  let peak = c[k];
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
