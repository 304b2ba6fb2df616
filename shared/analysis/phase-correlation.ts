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
 *     The kernels of a grid's rows i = m ± d are e^{iθ cu}·(cos θd·step ± i sin θd·step), so the two share
 *     their products with P (half the arithmetic of one complex product per kernel), and frequencies ky and
 *     H − ky (θ and −θ) share them again (half the products once more).
 *
 * Numerics: the spectrum is kept as conj P, whose forward transform is the inverse of P (fft.ts). The
 * shared-kernel refinement changed the peak height by ≤ 4e−16 relative against the earlier one complex
 * product per kernel, and pairing ky with H − ky by ≤ 7.5e−16 (summation order); dx and dy stayed identical
 * (693 cases, sizes 1×8 … 512×128, upsample 1 … 1000; then 899 cases, also 2048², integer, float and NaN
 * pixels).
 *
 * Degenerate cases: a channel without variation (constant, or every pixel NaN) gives dx = dy = null.
 * ±Infinity is rejected with a RangeError.
 */
import type { ChannelArray } from './types';
import { complexRowsToColumns, fft1d, hermitianRowPairs, nextPowerOfTwo } from './fft';

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
 * c(u, v) on the grid u = cu + (i − m)·step, v = cv + (j − m)·step (i, j = 0 … 2m), from the conjugate
 * Q = conj P of the half-plane cross-power spectrum of a W × H grid (as `measureShift` stores it); returns
 * the best (u, v) and its value. P·kernel is formed from Q with the signs of its imaginary part flipped
 * (the same products and sums, to the last bit, as from P).
 */
function refine(Q: Float64Array, W: number, H: number, cu: number, cv: number, step: number, m: number): { u: number; v: number; c: number } {
  const hw = W / 2 + 1, n = 2 * m + 1, h2 = H / 2;
  // row kernels e^{2πi fy u_i / H} (fy in numpy's fftfreq order) with u_i = cu + d·step, d = i − m: the
  // centre E = e^{2πi fy cu / H} and, for d = 1 … m, cos and sin of 2π fy d·step / H, so that
  // e^{2πi fy u_i / H} = E·(cos ± i sin) for i = m ± d. Only ky = 0 … H/2 are tabulated: ky and H − ky
  // (fy and −fy) share them (conjugate E, the same cos, sin of opposite sign).
  // E: interleaved (cos, sin) per ky; D: groups of three d (d past m repeat the last one, their sums dropped),
  // group g at 6·g·(h2 + 1), six values (c, s for d = 3g + 1 … 3g + 3) per ky
  const groups = Math.ceil(Math.max(1, m) / 3);
  const E = new Float64Array(2 * (h2 + 1)), D = new Float64Array(6 * groups * (h2 + 1));
  for (let ky = 0; ky <= h2; ky++) {
    const f = (2 * Math.PI * (ky < h2 ? ky : ky - H)) / H;
    E[2 * ky] = Math.cos(f * cu);
    E[2 * ky + 1] = Math.sin(f * cu);
    for (let g = 0; g < groups; g++)
      for (let e = 0; e < 3; e++) {
        const d = Math.max(1, Math.min(3 * g + e + 1, m));
        D[6 * (g * (h2 + 1) + ky) + 2 * e] = Math.cos(f * d * step);
        D[6 * (g * (h2 + 1) + ky) + 2 * e + 1] = Math.sin(f * d * step);
      }
  }
  // T(kx, i) = Σ_ky P(kx, ky) · kernel(i, ky). With x = P·E: T(m ± d) = C_d ± i·S_d, C_d = Σ x cos, S_d = Σ x sin
  // (complex sums, real factors): a pair of kernels costs one complex × real product each instead of two
  // complex products. ky and H − ky together: with x1 = P(ky)·E, x2 = P(H − ky)·conj E, s = x1 + x2 and
  // t = x1 − x2 they add s·cos to C_d and t·sin to S_d (half the products again); ky = 0 (E = 1, cos = 1,
  // sin = 0) and ky = H/2 (its own partner) alone. P is stored column by column (fft.ts), so each sum runs over
  // contiguous memory (from both ends); three d at a time share each load of P.
  const tr = new Float64Array(hw * n), ti = new Float64Array(hw * n);
  const cs = new Float64Array(12);
  for (let kx = 0; kx < hw; kx++) {
    const col = 2 * H * kx, t = kx * n + m;
    for (let g = 0; g < groups; g++) {
      const o = 6 * g * (h2 + 1);
      // ky = 0: x = P(0)
      const x0r = Q[col], x0i = -Q[col + 1];
      let sxr = x0r, sxi = x0i;
      let c1r = x0r, c1i = x0i, s1r = 0, s1i = 0, c2r = x0r, c2i = x0i, s2r = 0, s2i = 0, c3r = x0r, c3i = x0i, s3r = 0, s3i = 0;
      for (let ky = 1, k2 = H - 1; ky < h2; ky++, k2--) {
        // Q = conj P = (pr, qi), P = (pr, −qi)
        const q = 2 * ky, p1 = col + q, p2 = col + 2 * k2;
        const ar = Q[p1], ai = Q[p1 + 1], br = Q[p2], bi = Q[p2 + 1];
        const er = E[q], ei = E[q + 1];
        const pp = ar + br, pm = ar - br, qp = ai + bi, qm = ai - bi;
        // s = P1·E + P2·conj E, t = P1·E − P2·conj E
        const sr = pp * er + qm * ei, si = pm * ei - qp * er;
        const tr_ = pm * er + qp * ei, ti_ = pp * ei - qm * er;
        sxr += sr;
        sxi += si;
        const z = o + 6 * ky;
        let c = D[z], sn = D[z + 1];
        c1r += sr * c;
        c1i += si * c;
        s1r += tr_ * sn;
        s1i += ti_ * sn;
        c = D[z + 2];
        sn = D[z + 3];
        c2r += sr * c;
        c2i += si * c;
        s2r += tr_ * sn;
        s2i += ti_ * sn;
        c = D[z + 4];
        sn = D[z + 5];
        c3r += sr * c;
        c3i += si * c;
        s3r += tr_ * sn;
        s3i += ti_ * sn;
      }
      {
        // ky = H/2 (H ≥ 2)
        const q = 2 * h2, pr = Q[col + q], qi = Q[col + q + 1], er = E[q], ei = E[q + 1];
        const xr = pr * er + qi * ei, xi = pr * ei - qi * er;
        sxr += xr;
        sxi += xi;
        const z = o + 6 * h2;
        c1r += xr * D[z];
        c1i += xi * D[z];
        s1r += xr * D[z + 1];
        s1i += xi * D[z + 1];
        c2r += xr * D[z + 2];
        c2i += xi * D[z + 2];
        s2r += xr * D[z + 3];
        s2i += xi * D[z + 3];
        c3r += xr * D[z + 4];
        c3i += xi * D[z + 4];
        s3r += xr * D[z + 5];
        s3i += xi * D[z + 5];
      }
      if (g === 0) {
        tr[t] = sxr;
        ti[t] = sxi;
      }
      cs[0] = c1r; cs[1] = c1i; cs[2] = s1r; cs[3] = s1i;
      cs[4] = c2r; cs[5] = c2i; cs[6] = s2r; cs[7] = s2i;
      cs[8] = c3r; cs[9] = c3i; cs[10] = s3r; cs[11] = s3i;
      for (let e = 0, d = 3 * g + 1; e < 3 && d <= m; e++, d++) {
        const cr = cs[4 * e], ci = cs[4 * e + 1], sr = cs[4 * e + 2], si = cs[4 * e + 3];
        // m + d: C + i·S; m − d: C − i·S
        tr[t + d] = cr - si;
        ti[t + d] = ci + sr;
        tr[t - d] = cr + si;
        ti[t - d] = ci - sr;
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
 * conj P(k) for one k into `out[o]`, `out[o + 1]`: P = B·conj(A) / |B·conj(A)| (0 where the product is 0), from
 * Z(k) at `z[p]` and Z(−k) at `zm[q]` (interleaved re, im), A = (Z(k) + conj Z(−k)) / 2,
 * B = (Z(k) − conj Z(−k)) / (2i).
 */
function crossPower(z: Float64Array, p: number, zm: Float64Array, q: number, out: Float64Array, o: number): void {
  const zr = z[p], zi = z[p + 1], mr = zm[q], mi = zm[q + 1];
  const ar = (zr + mr) / 2, ai = -((zi - mi) / 2);
  const br = (zi + mi) / 2, bi = (mr - zr) / 2;
  const re = br * ar - bi * ai, im = br * ai + bi * ar;
  const mag = Math.sqrt(re * re + im * im);
  out[o] = mag > 0 ? re / mag : 0;
  out[o + 1] = mag > 0 ? -(im / mag) : 0;
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
  // the spectra of both channels at once: Z = FFT(a + i·b) (fft.ts), its rows transformed into the columns of a
  // buffer with room for W + 2 columns; each column pair kx, W − kx is then transformed, the cross-power
  // spectrum P(kx) written into column kx and the column transform of conj P(kx) (the inverse's first half)
  // where Z(W − kx) was; kx = 0 and W/2, their own mirror, put theirs in the two spare columns W and W + 1.
  // Each column is thus read from memory once while its transforms and P are formed.
  const hw = W / 2 + 1;
  const buf = new Float64Array(4 * hw * H);
  complexRowsToColumns(W, H, (y, out) => taperedRow(a, b, width, height, W, y, out), buf);
  // P = B·conj(A) / |B·conj(A)| on the half plane, with A(k) = (Z(k) + conj Z(−k)) / 2 and
  // B(k) = (Z(k) − conj Z(−k)) / (2i) (the Hermitian symmetry of real images; fft.ts), stored as conj P
  const P = buf.subarray(0, 2 * hw * H);
  const columns = new Int32Array(hw);
  const z1 = new Float64Array(2 * H), z2 = new Float64Array(2 * H);
  for (let kx = 0; kx < hw; kx++) {
    const c1 = 2 * H * kx;
    fft1d(H, buf, c1, z1, 0);
    if (kx === 0 || kx === W / 2) {
      // Z(−k) in the same column: ky and H − ky together
      for (let ky = 0; ky <= H / 2; ky++) {
        const my = ky === 0 ? 0 : H - ky;
        const p = 2 * ky, q = 2 * my;
        crossPower(z1, p, z1, q, P, c1 + p);
        crossPower(z1, q, z1, p, P, c1 + q);
      }
      columns[kx] = 2 * H * (kx === 0 ? W : W + 1);
    } else {
      fft1d(H, buf, 2 * H * (W - kx), z2, 0);
      crossPower(z1, 0, z2, 0, P, c1);
      for (let ky = 1; ky < H; ky++) crossPower(z1, 2 * ky, z2, 2 * (H - ky), P, c1 + 2 * ky);
      columns[kx] = 2 * H * (W - kx);
    }
    fft1d(H, P, c1, buf, columns[kx]);
  }
  // its inverse c(y, x) as the forward transform of conj P (real; fft.ts), W·H·c, scanned for the largest
  // value row by row (the image is not kept)
  let best = -Infinity, k = 0;
  hermitianRowPairs(buf, columns, W, H, (y, z, two) => {
    // both rows in one pass (their largest values apart: the first largest in row-major order wins, as
    // scanning row y, then row y + 1, would find)
    let b1 = -Infinity, b2 = -Infinity, x1 = 0, x2 = 0;
    for (let x = 0, i = 0; x < W; x++, i += 2) {
      const v1 = z[i], v2 = z[i + 1];
      if (v1 > b1) {
        b1 = v1;
        x1 = x;
      }
      if (v2 > b2) {
        b2 = v2;
        x2 = x;
      }
    }
    if (b1 > best) {
      best = b1;
      k = y * W + x1;
    }
    if (two && b2 > best) {
      best = b2;
      k = (y + 1) * W + x2;
    }
  });
  const iy = Math.floor(k / W), ix = k % W;
  let u = iy > H / 2 ? iy - H : iy, v = ix > W / 2 ? ix - W : ix;
  // W·H is a power of two: the division is exact
  let peak = best / (W * H);
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
