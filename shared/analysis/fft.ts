/**
 * Two-dimensional discrete Fourier transforms of real images on a power-of-two grid, built on the radix-4
 * FFT of radix4-fft.ts (bit for bit that of the npm package `fft.js` 4.0.4, which it replaced).
 *
 * Real input costs half a complex transform: two real images a, b are transformed together as one complex
 * image z = a + i·b, and separated with the Hermitian symmetry of real data,
 * A(k) = (Z(k) + conj Z(−k)) / 2, B(k) = (Z(k) − conj Z(−k)) / (2i) (Cooley, Lewis & Welch 1970,
 * J. Sound Vib. 12:315, doi:10.1016/0022-460X(70)90075-1). The inverse of a Hermitian spectrum is real, so
 * its rows are inverted two at a time the same way. Spectra are kept on the half plane kx = 0 … w/2 only.
 *
 * Layout: complex values interleaved (re, im) in a Float64Array. A half-plane spectrum of an h × w image is
 * stored column by column: w/2 + 1 columns kx = 0 … w/2, each of h values ky = 0 … h−1 (numpy's order:
 * ky ≥ h/2 stands for ky − h), at index 2·(kx·h + ky). The column transforms then run on contiguous memory
 * (rows are transformed a block at a time and written straight into their columns, instead of gathering
 * every column).
 */
import { Radix4Fft } from './radix4-fft';

/** The smallest power of two ≥ n (n ≥ 1). */
export function nextPowerOfTwo(n: number): number {
  if (!(Number.isInteger(n) && n >= 1)) throw new RangeError(`a transform size must be a positive whole number, received ${n}`);
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

function checkSize(w: number, h: number): void {
  for (const [name, v] of [['width', w], ['height', h]] as const)
    if (!(Number.isInteger(v) && v >= 2 && (v & (v - 1)) === 0)) throw new RangeError(`transform ${name} must be a power of two ≥ 2, received ${v}`);
}

const plans = new Map<number, Radix4Fft>();
function plan(n: number): Radix4Fft {
  let p = plans.get(n);
  if (!p) plans.set(n, (p = new Radix4Fft(n)));
  return p;
}

/** Complex FFT of each of `count` contiguous rows of n values, in place. */
function rowTransforms(z: Float64Array, count: number, n: number): void {
  const f = plan(n);
  const tmp = new Float64Array(2 * n);
  for (let r = 0; r < count; r++) {
    const row = z.subarray(2 * n * r, 2 * n * (r + 1));
    f.transform(tmp, row);
    row.set(tmp);
  }
}

/** Rows per block when rows are transformed and written column by column (16 complex values = 4 cache lines). */
const ROWS = 16;

/**
 * Writes row y of a w-wide complex image (interleaved re, im) into `out`; returns false when the row is all
 * zero (out is then not read).
 */
export type ComplexRowSource = (y: number, out: Float64Array) => boolean;

/**
 * The rows of an h × w complex image given row by row, each transformed and written straight into its place
 * in the columns (column x at 2·x·h, y = 0 … h−1 contiguous) of `zt` (2·w·h values): ROWS rows at a time (a
 * blocked transposition, no row-major copy of the image). Rows reported all zero (padding) skip their
 * transform. The columns are not transformed (`complexFft2dColumns` does that; `fft1d` one column).
 */
export function complexRowsToColumns(w: number, h: number, row: ComplexRowSource, zt: Float64Array): void {
  const fr = plan(w);
  const tin = new Float64Array(2 * w);
  const blk = new Float64Array(2 * w * ROWS);
  for (let y0 = 0; y0 < h; y0 += ROWS) {
    const nr = Math.min(ROWS, h - y0);
    for (let r = 0; r < nr; r++) {
      const dst = blk.subarray(2 * w * r, 2 * w * (r + 1));
      if (row(y0 + r, tin)) fr.transform(dst, tin);
      else dst.fill(0);
    }
    for (let x = 0; x < w; x++) {
      let si = 2 * x;
      let di = 2 * (x * h + y0);
      for (let r = 0; r < nr; r++, si += 2 * w, di += 2) {
        zt[di] = blk[si];
        zt[di + 1] = blk[si + 1];
      }
    }
  }
}

/**
 * The full complex 2-D spectrum of an h × w complex image given row by row, stored column by column
 * (column kx at 2·kx·h, ky = 0 … h−1 contiguous) in `zt` (2·w·h values): `complexRowsToColumns`, then each
 * column transformed in place.
 */
export function complexFft2dColumns(w: number, h: number, row: ComplexRowSource, zt: Float64Array): void {
  complexRowsToColumns(w, h, row, zt);
  rowTransforms(zt, w, h);
}

/** The forward transform of the n complex values at `src[so …]` into `dst[dOff …]` (ranges must not overlap). */
export function fft1d(n: number, src: Float64Array, so: number, dst: Float64Array, dOff: number): void {
  plan(n).transform(dst.subarray(dOff, dOff + 2 * n), src.subarray(so, so + 2 * n));
}

/**
 * The half-plane spectra (layout above) of two real w × h images (row-major, w and h powers of two),
 * unnormalised: A(ky, kx) = Σ a(y, x) e^{−2πi (ky y / h + kx x / w)}.
 */
export function realFft2dPair(a: Float64Array, b: Float64Array, w: number, h: number): { A: Float64Array; B: Float64Array } {
  checkSize(w, h);
  if (a.length !== w * h || b.length !== w * h) throw new RangeError(`images must have ${w}×${h} = ${w * h} values, received ${a.length} and ${b.length}`);
  const zt = new Float64Array(2 * w * h);
  complexFft2dColumns(
    w,
    h,
    (y, tin) => {
      for (let x = 0; x < w; x++) {
        tin[2 * x] = a[y * w + x];
        tin[2 * x + 1] = b[y * w + x];
      }
      return true;
    },
    zt,
  );
  const hw = w / 2 + 1;
  const A = new Float64Array(2 * hw * h), Bs = new Float64Array(2 * hw * h);
  for (let kx = 0; kx < hw; kx++) {
    const mx = (w - kx) % w;
    for (let ky = 0; ky < h; ky++) {
      const my = (h - ky) % h;
      const p = 2 * (kx * h + ky), q = 2 * (mx * h + my);
      const zr = zt[p], zi = zt[p + 1], mr = zt[q], mi = zt[q + 1];
      A[p] = (zr + mr) / 2;
      A[p + 1] = (zi - mi) / 2;
      Bs[p] = (zi + mi) / 2;
      Bs[p + 1] = (mr - zr) / 2;
    }
  }
  return { A, B: Bs };
}

/**
 * Receives the real rows y and y + 1 of a transform of a Hermitian spectrum (interleaved: row y in the even,
 * row y + 1 in the odd places of `z`, x = 0 … w−1); `two` says row y + 1 exists (always, h being a power of two).
 */
export type RealRowPairSink = (y: number, z: Float64Array, two: boolean) => void;

/**
 * The forward transform F(y, x) = Σ_k S(k) e^{−2πi (ky y / h + kx x / w)} of a Hermitian spectrum S given on
 * the half plane (layout above), which is real, handed out two rows at a time without storing the image,
 * unnormalised. With S = conj T it is w·h times the inverse transform of T (the inverse of a Hermitian
 * spectrum is real, so it equals its own conjugate): inverses are computed this way, with forward transforms
 * only (an inverse 1-D transform would also divide every result by its size). `work` (at least 2·(w/2 + 1)·h values)
 * receives the column transforms (S is left as it is); the rows are then gathered from it ROWS at a time (a
 * blocked transposition) and transformed in pairs as one complex row G1 + i·G2, G(w − kx) = conj G(kx) (the
 * column transforms of a Hermitian spectrum), whose transform is F1 + i·F2. The imaginary parts of the kx = 0
 * and kx = w/2 columns, which a Hermitian spectrum has only from rounding, are ignored.
 */
export function hermitianFft2dRows(S: Float64Array, w: number, h: number, work: Float64Array, sink: RealRowPairSink): void {
  checkSize(w, h);
  const hw = w / 2 + 1;
  if (S.length !== 2 * hw * h) throw new RangeError(`a half-plane spectrum of ${w}×${h} has ${2 * hw * h} values, received ${S.length}`);
  if (work.length < 2 * hw * h) throw new RangeError(`the work buffer needs ${2 * hw * h} values, received ${work.length}`);
  const columns = new Int32Array(hw);
  for (let kx = 0; kx < hw; kx++) {
    columns[kx] = 2 * h * kx;
    fft1d(h, S, 2 * h * kx, work, 2 * h * kx);
  }
  hermitianRowPairs(work, columns, w, h, sink);
}

/**
 * The second half of `hermitianFft2dRows`: from the column transforms G of a Hermitian half-plane spectrum
 * (column kx, h complex values, at `G[columns[kx] …]`, kx = 0 … w/2, anywhere in G), the real rows of its
 * transform, two at a time (ROWS rows at a time gathered straight into the complex rows G1 + i·G2 of their
 * pairs, transformed as described there).
 */
export function hermitianRowPairs(G: Float64Array, columns: Int32Array, w: number, h: number, sink: RealRowPairSink): void {
  checkSize(w, h);
  const hw = w / 2 + 1;
  if (columns.length !== hw) throw new RangeError(`a half plane of width ${w} has ${hw} columns, received ${columns.length} column offsets`);
  for (let kx = 0; kx < hw; kx++)
    if (!(columns[kx] >= 0 && columns[kx] + 2 * h <= G.length)) throw new RangeError(`column ${kx} at ${columns[kx]} does not lie within the ${G.length} values given`);
  const fr = plan(w);
  // h and ROWS are powers of two ≥ 2, so every block has an even number of rows: ROWS / 2 row pairs, each
  // gathered straight into the complex row it is transformed as
  const pairs = Math.min(ROWS, h) / 2;
  const zin = new Float64Array(2 * w * pairs), zout = new Float64Array(2 * w);
  for (let y0 = 0; y0 < h; y0 += 2 * pairs) {
    // rows y0 … y0 + 2·pairs − 1 of the column transforms, as the rows Z = G1 + i·G2 of each pair (y, y + 1):
    // the edge columns kx = 0 and w/2 real; G as stored for kx < w/2, conj G(w − kx) above
    for (let kx = 0; kx < hw; kx++) {
      const si = columns[kx] + 2 * y0;
      if (kx === 0 || kx === w / 2)
        for (let j = 0, q = si, z = 2 * kx; j < pairs; j++, q += 4, z += 2 * w) {
          zin[z] = G[q];
          zin[z + 1] = G[q + 2];
        }
      else
        for (let j = 0, q = si, p = 2 * kx, m = 2 * w - 2 * kx; j < pairs; j++, q += 4, p += 2 * w, m += 2 * w) {
          const g1r = G[q], g1i = G[q + 1], g2r = G[q + 2], g2i = G[q + 3];
          zin[p] = g1r - g2i;
          zin[p + 1] = g1i + g2r;
          zin[m] = g1r + g2i;
          zin[m + 1] = g2r - g1i;
        }
    }
    for (let j = 0; j < pairs; j++) {
      fr.transform(zout, zin.subarray(2 * w * j, 2 * w * (j + 1)));
      sink(y0 + 2 * j, zout, true);
    }
  }
}

/**
 * The real w × h image of a Hermitian spectrum given on the half plane (layout above, as from
 * `realFft2dPair`), normalised: c(y, x) = (1 / wh) Σ_k S(k) e^{+2πi (ky y / h + kx x / w)}, computed as
 * `hermitianFft2dRows` of conj S divided by w·h. The imaginary parts of the kx = 0 and kx = w/2 columns, which
 * a Hermitian spectrum has only from rounding, are ignored.
 */
export function inverseRealFft2d(S: Float64Array, w: number, h: number): Float64Array {
  const out = new Float64Array(w * h);
  const conj = Float64Array.from(S);
  for (let i = 1; i < conj.length; i += 2) conj[i] = -conj[i];
  const n = w * h;
  hermitianFft2dRows(conj, w, h, new Float64Array(S.length), (y, z, two) => {
    for (let x = 0; x < w; x++) {
      out[y * w + x] = z[2 * x] / n;
      if (two) out[(y + 1) * w + x] = z[2 * x + 1] / n;
    }
  });
  return out;
}
