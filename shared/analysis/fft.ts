/**
 * Two-dimensional discrete Fourier transforms of real images on a power-of-two grid, built on the radix-4
 * FFT of the npm package `fft.js` (pinned in package.json).
 *
 * Real input costs half a complex transform: two real images a, b are transformed together as one complex
 * image z = a + i·b, and separated with the Hermitian symmetry of real data,
 * A(k) = (Z(k) + conj Z(−k)) / 2, B(k) = (Z(k) − conj Z(−k)) / (2i) (Cooley, Lewis & Welch 1970,
 * J. Sound Vib. 12:315, doi:10.1016/0022-460X(70)90075-1). The inverse of a Hermitian spectrum is real, so
 * its rows are inverted two at a time the same way. Spectra are kept on the half plane kx = 0 … w/2 only.
 *
 * Layout: complex values interleaved (re, im) in a Float64Array; a half-plane spectrum of an h × w image is
 * h rows of (w/2 + 1) complex values, row ky (0 … h−1, numpy's order: ky ≥ h/2 stands for ky − h).
 */
import FFT from 'fft.js';

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

const plans = new Map<number, InstanceType<typeof FFT>>();
function plan(n: number): InstanceType<typeof FFT> {
  let p = plans.get(n);
  if (!p) plans.set(n, (p = new FFT(n)));
  return p;
}

/** Complex FFT of every column of an interleaved h × cols complex array, in place (inverse when `inverse`). */
function columnTransform(z: Float64Array, h: number, cols: number, stride: number, inverse: boolean): void {
  const f = plan(h);
  // a block of columns at a time: gathered rows stay in cache
  const B = 8;
  const tin = new Float64Array(2 * h * B);
  const tout = new Float64Array(2 * h);
  for (let c0 = 0; c0 < cols; c0 += B) {
    const nb = Math.min(B, cols - c0);
    for (let y = 0; y < h; y++) {
      const row = y * stride + 2 * c0;
      for (let b = 0; b < nb; b++) {
        tin[b * 2 * h + 2 * y] = z[row + 2 * b];
        tin[b * 2 * h + 2 * y + 1] = z[row + 2 * b + 1];
      }
    }
    for (let b = 0; b < nb; b++) {
      const col = tin.subarray(b * 2 * h, (b + 1) * 2 * h);
      if (inverse) f.inverseTransform(tout, col);
      else f.transform(tout, col);
      col.set(tout);
    }
    for (let y = 0; y < h; y++) {
      const row = y * stride + 2 * c0;
      for (let b = 0; b < nb; b++) {
        z[row + 2 * b] = tin[b * 2 * h + 2 * y];
        z[row + 2 * b + 1] = tin[b * 2 * h + 2 * y + 1];
      }
    }
  }
}

/**
 * The half-plane spectra of two real w × h images (row-major, w and h powers of two), unnormalised:
 * A(ky, kx) = Σ a(y, x) e^{−2πi (ky y / h + kx x / w)}.
 */
export function realFft2dPair(a: Float64Array, b: Float64Array, w: number, h: number): { A: Float64Array; B: Float64Array } {
  checkSize(w, h);
  if (a.length !== w * h || b.length !== w * h) throw new RangeError(`images must have ${w}×${h} = ${w * h} values, received ${a.length} and ${b.length}`);
  const z = new Float64Array(2 * w * h);
  const fr = plan(w);
  const tin = new Float64Array(2 * w);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      tin[2 * x] = a[y * w + x];
      tin[2 * x + 1] = b[y * w + x];
    }
    fr.transform(z.subarray(2 * w * y, 2 * w * (y + 1)), tin);
  }
  columnTransform(z, h, w, 2 * w, false);
  const hw = w / 2 + 1;
  const A = new Float64Array(2 * hw * h), Bs = new Float64Array(2 * hw * h);
  for (let ky = 0; ky < h; ky++) {
    const my = (h - ky) % h;
    for (let kx = 0; kx < hw; kx++) {
      const mx = (w - kx) % w;
      const p = 2 * (ky * w + kx), q = 2 * (my * w + mx);
      const zr = z[p], zi = z[p + 1], mr = z[q], mi = z[q + 1];
      const o = 2 * (ky * hw + kx);
      A[o] = (zr + mr) / 2;
      A[o + 1] = (zi - mi) / 2;
      Bs[o] = (zi + mi) / 2;
      Bs[o + 1] = (mr - zr) / 2;
    }
  }
  return { A, B: Bs };
}

/**
 * The real w × h image of a Hermitian spectrum given on the half plane (as from `realFft2dPair`),
 * normalised: c(y, x) = (1 / wh) Σ_k S(k) e^{+2πi (ky y / h + kx x / w)}. The imaginary parts of the
 * kx = 0 and kx = w/2 columns, which a Hermitian spectrum has only from rounding, are ignored.
 */
export function inverseRealFft2d(S: Float64Array, w: number, h: number): Float64Array {
  checkSize(w, h);
  const hw = w / 2 + 1;
  if (S.length !== 2 * hw * h) throw new RangeError(`a half-plane spectrum of ${w}×${h} has ${2 * hw * h} values, received ${S.length}`);
  const g = S.slice();
  columnTransform(g, h, hw, 2 * hw, true);
  const fr = plan(w);
  const out = new Float64Array(w * h);
  const zin = new Float64Array(2 * w), zout = new Float64Array(2 * w);
  for (let y = 0; y < h; y += 2) {
    const r1 = 2 * hw * y, r2 = 2 * hw * (y + 1);
    const two = y + 1 < h;
    for (let kx = 0; kx < w; kx++) {
      // H(kx) for kx ≤ w/2 as stored, conj H(w − kx) above
      const src = kx < hw ? kx : w - kx, sg = kx < hw ? 1 : -1;
      const edge = kx === 0 || kx === w / 2;
      const h1r = g[r1 + 2 * src], h1i = edge ? 0 : sg * g[r1 + 2 * src + 1];
      const h2r = two ? g[r2 + 2 * src] : 0, h2i = two && !edge ? sg * g[r2 + 2 * src + 1] : 0;
      // Z = H1 + i·H2
      zin[2 * kx] = h1r - h2i;
      zin[2 * kx + 1] = h1i + h2r;
    }
    fr.inverseTransform(zout, zin);
    for (let x = 0; x < w; x++) {
      out[y * w + x] = zout[2 * x];
      if (two) out[(y + 1) * w + x] = zout[2 * x + 1];
    }
  }
  // fft.js divides each 1-D inverse by its size, so the two passes together divide by w·h
  return out;
}
