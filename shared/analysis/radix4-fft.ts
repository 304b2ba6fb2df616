/**
 * One-dimensional complex FFT of a power-of-two size n ≥ 2, radix 4 (a radix-2 first pass when log2 n is odd),
 * decimation in time: Cooley JW, Tukey JW (1965), "An algorithm for the machine calculation of complex
 * Fourier series", Math. Comp. 19:297–301, doi:10.1090/S0025-5718-1965-0178586-1; radix 4: Gentleman WM,
 * Sande G (1966), "Fast Fourier transforms: for fun and profit", AFIPS Fall Joint Computer Conference 29:563–578,
 * doi:10.1145/1464291.1464352.
 *
 * X(k) = Σ_j x(j) e^{−2πi jk / n}, unnormalised, complex values interleaved (re, im).
 *
 * The butterflies, twiddle factors (cos, −sin of πi/n at even i) and the order of every addition and
 * multiplication are those of the npm package `fft.js` 4.0.4 (`transform`), so the results are bit for bit
 * its results (tested against it). What differs is the bookkeeping, which makes fewer passes over the data:
 * for odd log2 n the radix-2 first pass and the first radix-4 pass are done together on eight values held in
 * local variables, and the later radix-4 passes two at a time on sixteen values (the four butterflies of a pass
 * whose outputs make up four butterflies of the next), so a 2048-point transform reads and writes its data
 * three times instead of six (decided 2026-12-03: ~18 % less time than fft.js's at 2048 points, same run).
 */

export class Radix4Fft {
  readonly size: number;
  /** cos, −sin of π·i/n for i = 0, 2, … 2n − 2 (interleaved) */
  private readonly table: Float64Array;
  /** log2 n when odd, else log2 n − 1: the first pass is radix 2 (odd) or radix 4 */
  private readonly width: number;
  /** the input offset (in doubles) of each first-pass group, in digit-reversed order */
  private readonly bitrev: Int32Array;

  constructor(n: number) {
    if (!(Number.isInteger(n) && n >= 2 && (n & (n - 1)) === 0)) throw new RangeError(`an FFT size must be a power of two ≥ 2, received ${n}`);
    this.size = n;
    const table = new Float64Array(2 * n);
    for (let i = 0; i < 2 * n; i += 2) {
      const angle = (Math.PI * i) / n;
      table[i] = Math.cos(angle);
      table[i + 1] = -Math.sin(angle);
    }
    this.table = table;
    let power = 0;
    for (let t = 1; n > t; t <<= 1) power++;
    this.width = power % 2 === 0 ? power - 1 : power;
    this.bitrev = new Int32Array(1 << this.width);
    for (let j = 0; j < this.bitrev.length; j++) {
      let r = 0;
      for (let shift = 0; shift < this.width; shift += 2) r |= ((j >>> shift) & 3) << (this.width - shift - 2);
      this.bitrev[j] = r;
    }
  }

  /** The transform of `data` (2n values) into `out` (2n values, a different array or range). */
  transform(out: Float64Array, data: Float64Array): void {
    const size = 2 * this.size, bitrev = this.bitrev, table = this.table;
    if (out.length < size || data.length < size) throw new RangeError(`an FFT of ${this.size} points needs ${size} values in and out, received ${data.length} and ${out.length}`);
    if (out === data) throw new RangeError('the input and output of an FFT must be different arrays');
    let step = 1 << this.width;
    const first = (size / step) << 1;
    if (first === 4 && size >= 16) {
      // radix-2 pass (pairs step apart) and the first radix-4 pass (quarter length 4) together: each group of
      // eight outputs from four radix-2 pairs
      const s1 = step >> 2;
      const tBr = table[s1], tBi = table[s1 + 1], tCr = table[2 * s1], tCi = table[2 * s1 + 1], tDr = table[3 * s1], tDi = table[3 * s1 + 1];
      for (let o = 0, t = 0; o < size; o += 16, t += 4) {
        let off = bitrev[t];
        const a0r = data[off], a0i = data[off + 1], a1r = data[off + step], a1i = data[off + step + 1];
        off = bitrev[t + 1];
        const b0r = data[off], b0i = data[off + 1], b1r = data[off + step], b1i = data[off + step + 1];
        off = bitrev[t + 2];
        const c0r = data[off], c0i = data[off + 1], c1r = data[off + step], c1i = data[off + step + 1];
        off = bitrev[t + 3];
        const d0r = data[off], d0i = data[off + 1], d1r = data[off + step], d1i = data[off + step + 1];
        const l0r = a0r + a1r, l0i = a0i + a1i, l1r = a0r - a1r, l1i = a0i - a1i;
        const l2r = b0r + b1r, l2i = b0i + b1i, l3r = b0r - b1r, l3i = b0i - b1i;
        const l4r = c0r + c1r, l4i = c0i + c1i, l5r = c0r - c1r, l5i = c0i - c1i;
        const l6r = d0r + d1r, l6i = d0i + d1i, l7r = d0r - d1r, l7i = d0i - d1i;
        // twiddle (1, −0) for the first butterfly: its products kept (they fix the sign of a zero)
        {
          const mbr = l2r * 1 - l2i * -0, mbi = l2r * -0 + l2i * 1;
          const mcr = l4r * 1 - l4i * -0, mci = l4r * -0 + l4i * 1;
          const mdr = l6r * 1 - l6i * -0, mdi = l6r * -0 + l6i * 1;
          const t0r = l0r + mcr, t0i = l0i + mci, t1r = l0r - mcr, t1i = l0i - mci;
          const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
          out[o] = t0r + t2r;
          out[o + 1] = t0i + t2i;
          out[o + 8] = t0r - t2r;
          out[o + 9] = t0i - t2i;
          out[o + 4] = t1r + t3i;
          out[o + 5] = t1i - t3r;
          out[o + 12] = t1r - t3i;
          out[o + 13] = t1i + t3r;
        }
        {
          const mbr = l3r * tBr - l3i * tBi, mbi = l3r * tBi + l3i * tBr;
          const mcr = l5r * tCr - l5i * tCi, mci = l5r * tCi + l5i * tCr;
          const mdr = l7r * tDr - l7i * tDi, mdi = l7r * tDi + l7i * tDr;
          const t0r = l1r + mcr, t0i = l1i + mci, t1r = l1r - mcr, t1i = l1i - mci;
          const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
          out[o + 2] = t0r + t2r;
          out[o + 2 + 1] = t0i + t2i;
          out[o + 2 + 8] = t0r - t2r;
          out[o + 2 + 9] = t0i - t2i;
          out[o + 2 + 4] = t1r + t3i;
          out[o + 2 + 5] = t1i - t3r;
          out[o + 2 + 12] = t1r - t3i;
          out[o + 2 + 13] = t1i + t3r;
        }
      }
      step = s1;
    } else if (first === 4) {
      for (let o = 0, t = 0; o < size; o += 4, t++) {
        const off = bitrev[t];
        const er = data[off], ei = data[off + 1], or = data[off + step], oi = data[off + step + 1];
        out[o] = er + or;
        out[o + 1] = ei + oi;
        out[o + 2] = er - or;
        out[o + 3] = ei - oi;
      }
    } else {
      const s2 = 2 * step, s3 = 3 * step;
      for (let o = 0, t = 0; o < size; o += 8, t++) {
        const off = bitrev[t];
        const ar = data[off], ai = data[off + 1], br = data[off + step], bi = data[off + step + 1];
        const cr = data[off + s2], ci = data[off + s2 + 1], dr = data[off + s3], di = data[off + s3 + 1];
        const t0r = ar + cr, t0i = ai + ci, t1r = ar - cr, t1i = ai - ci, t2r = br + dr, t2i = bi + di, t3r = br - dr, t3i = bi - di;
        out[o] = t0r + t2r;
        out[o + 1] = t0i + t2i;
        out[o + 2] = t1r + t3i;
        out[o + 3] = t1i - t3r;
        out[o + 4] = t0r - t2r;
        out[o + 5] = t0i - t2i;
        out[o + 6] = t1r - t3i;
        out[o + 7] = t1i + t3r;
      }
    }
    // the remaining radix-4 passes, two at a time where two are left (16 values per group in local variables)
    for (step >>= 2; step >= 2; ) {
      const len = (size / step) << 1, q = len >>> 2;
      if (step >= 8) {
        // passes with quarter lengths q and 4q (steps step, step/4)
        const step2 = step >> 2, q2 = 4 * q, len2 = 4 * len;
        for (let o = 0; o < size; o += len2)
          for (let a = o, k = 0; a < o + q; a += 2, k += step) {
            const wbr = table[k], wbi = table[k + 1], wcr = table[2 * k], wci = table[2 * k + 1], wdr = table[3 * k], wdi = table[3 * k + 1];
            // first pass: four butterflies at a + len·i (i = 0 … 3), points a + len·i + q·m; results y{i}{m}
            const a0 = a, b0 = a0 + q, c0 = b0 + q, d0 = c0 + q;
            const a1 = a + 1 * len, b1 = a1 + q, c1 = b1 + q, d1 = c1 + q;
            const a2 = a + 2 * len, b2 = a2 + q, c2 = b2 + q, d2 = c2 + q;
            const a3 = a + 3 * len, b3 = a3 + q, c3 = b3 + q, d3 = c3 + q;
            let y00r = 0, y00i = 0, y01r = 0, y01i = 0, y02r = 0, y02i = 0, y03r = 0, y03i = 0;
            let y10r = 0, y10i = 0, y11r = 0, y11i = 0, y12r = 0, y12i = 0, y13r = 0, y13i = 0;
            let y20r = 0, y20i = 0, y21r = 0, y21i = 0, y22r = 0, y22i = 0, y23r = 0, y23i = 0;
            let y30r = 0, y30i = 0, y31r = 0, y31i = 0, y32r = 0, y32i = 0, y33r = 0, y33i = 0;
            {
              const ar = out[a0], ai = out[a0 + 1], br = out[b0], bi = out[b0 + 1], cr = out[c0], ci = out[c0 + 1], dr = out[d0], di = out[d0 + 1];
              const mbr = br * wbr - bi * wbi, mbi = br * wbi + bi * wbr;
              const mcr = cr * wcr - ci * wci, mci = cr * wci + ci * wcr;
              const mdr = dr * wdr - di * wdi, mdi = dr * wdi + di * wdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              y00r = t0r + t2r; y00i = t0i + t2i;
              y02r = t0r - t2r; y02i = t0i - t2i;
              y01r = t1r + t3i; y01i = t1i - t3r;
              y03r = t1r - t3i; y03i = t1i + t3r;
            }
            {
              const ar = out[a1], ai = out[a1 + 1], br = out[b1], bi = out[b1 + 1], cr = out[c1], ci = out[c1 + 1], dr = out[d1], di = out[d1 + 1];
              const mbr = br * wbr - bi * wbi, mbi = br * wbi + bi * wbr;
              const mcr = cr * wcr - ci * wci, mci = cr * wci + ci * wcr;
              const mdr = dr * wdr - di * wdi, mdi = dr * wdi + di * wdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              y10r = t0r + t2r; y10i = t0i + t2i;
              y12r = t0r - t2r; y12i = t0i - t2i;
              y11r = t1r + t3i; y11i = t1i - t3r;
              y13r = t1r - t3i; y13i = t1i + t3r;
            }
            {
              const ar = out[a2], ai = out[a2 + 1], br = out[b2], bi = out[b2 + 1], cr = out[c2], ci = out[c2 + 1], dr = out[d2], di = out[d2 + 1];
              const mbr = br * wbr - bi * wbi, mbi = br * wbi + bi * wbr;
              const mcr = cr * wcr - ci * wci, mci = cr * wci + ci * wcr;
              const mdr = dr * wdr - di * wdi, mdi = dr * wdi + di * wdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              y20r = t0r + t2r; y20i = t0i + t2i;
              y22r = t0r - t2r; y22i = t0i - t2i;
              y21r = t1r + t3i; y21i = t1i - t3r;
              y23r = t1r - t3i; y23i = t1i + t3r;
            }
            {
              const ar = out[a3], ai = out[a3 + 1], br = out[b3], bi = out[b3 + 1], cr = out[c3], ci = out[c3 + 1], dr = out[d3], di = out[d3 + 1];
              const mbr = br * wbr - bi * wbi, mbi = br * wbi + bi * wbr;
              const mcr = cr * wcr - ci * wci, mci = cr * wci + ci * wcr;
              const mdr = dr * wdr - di * wdi, mdi = dr * wdi + di * wdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              y30r = t0r + t2r; y30i = t0i + t2i;
              y32r = t0r - t2r; y32i = t0i - t2i;
              y31r = t1r + t3i; y31i = t1i - t3r;
              y33r = t1r - t3i; y33i = t1i + t3r;
            }
            // second pass: butterflies at a + q·m (m = 0 … 3) over y0m … y3m
            const k0 = ((a - o) / 2) * step2, dq = (q / 2) * step2;
            {
              const k2 = k0;
              const vbr = table[k2], vbi = table[k2 + 1], vcr = table[2 * k2], vci = table[2 * k2 + 1], vdr = table[3 * k2], vdi = table[3 * k2 + 1];
              const ar = y00r, ai = y00i, br = y10r, bi = y10i, cr = y20r, ci = y20i, dr = y30r, di = y30i;
              const mbr = br * vbr - bi * vbi, mbi = br * vbi + bi * vbr;
              const mcr = cr * vcr - ci * vci, mci = cr * vci + ci * vcr;
              const mdr = dr * vdr - di * vdi, mdi = dr * vdi + di * vdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              const e = a;
              out[e] = t0r + t2r;
              out[e + 1] = t0i + t2i;
              out[e + 2 * q2] = t0r - t2r;
              out[e + 2 * q2 + 1] = t0i - t2i;
              out[e + q2] = t1r + t3i;
              out[e + q2 + 1] = t1i - t3r;
              out[e + 3 * q2] = t1r - t3i;
              out[e + 3 * q2 + 1] = t1i + t3r;
            }
            {
              const k2 = k0 + 1 * dq;
              const vbr = table[k2], vbi = table[k2 + 1], vcr = table[2 * k2], vci = table[2 * k2 + 1], vdr = table[3 * k2], vdi = table[3 * k2 + 1];
              const ar = y01r, ai = y01i, br = y11r, bi = y11i, cr = y21r, ci = y21i, dr = y31r, di = y31i;
              const mbr = br * vbr - bi * vbi, mbi = br * vbi + bi * vbr;
              const mcr = cr * vcr - ci * vci, mci = cr * vci + ci * vcr;
              const mdr = dr * vdr - di * vdi, mdi = dr * vdi + di * vdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              const e = a + 1 * q;
              out[e] = t0r + t2r;
              out[e + 1] = t0i + t2i;
              out[e + 2 * q2] = t0r - t2r;
              out[e + 2 * q2 + 1] = t0i - t2i;
              out[e + q2] = t1r + t3i;
              out[e + q2 + 1] = t1i - t3r;
              out[e + 3 * q2] = t1r - t3i;
              out[e + 3 * q2 + 1] = t1i + t3r;
            }
            {
              const k2 = k0 + 2 * dq;
              const vbr = table[k2], vbi = table[k2 + 1], vcr = table[2 * k2], vci = table[2 * k2 + 1], vdr = table[3 * k2], vdi = table[3 * k2 + 1];
              const ar = y02r, ai = y02i, br = y12r, bi = y12i, cr = y22r, ci = y22i, dr = y32r, di = y32i;
              const mbr = br * vbr - bi * vbi, mbi = br * vbi + bi * vbr;
              const mcr = cr * vcr - ci * vci, mci = cr * vci + ci * vcr;
              const mdr = dr * vdr - di * vdi, mdi = dr * vdi + di * vdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              const e = a + 2 * q;
              out[e] = t0r + t2r;
              out[e + 1] = t0i + t2i;
              out[e + 2 * q2] = t0r - t2r;
              out[e + 2 * q2 + 1] = t0i - t2i;
              out[e + q2] = t1r + t3i;
              out[e + q2 + 1] = t1i - t3r;
              out[e + 3 * q2] = t1r - t3i;
              out[e + 3 * q2 + 1] = t1i + t3r;
            }
            {
              const k2 = k0 + 3 * dq;
              const vbr = table[k2], vbi = table[k2 + 1], vcr = table[2 * k2], vci = table[2 * k2 + 1], vdr = table[3 * k2], vdi = table[3 * k2 + 1];
              const ar = y03r, ai = y03i, br = y13r, bi = y13i, cr = y23r, ci = y23i, dr = y33r, di = y33i;
              const mbr = br * vbr - bi * vbi, mbi = br * vbi + bi * vbr;
              const mcr = cr * vcr - ci * vci, mci = cr * vci + ci * vcr;
              const mdr = dr * vdr - di * vdi, mdi = dr * vdi + di * vdr;
              const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
              const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
              const e = a + 3 * q;
              out[e] = t0r + t2r;
              out[e + 1] = t0i + t2i;
              out[e + 2 * q2] = t0r - t2r;
              out[e + 2 * q2 + 1] = t0i - t2i;
              out[e + q2] = t1r + t3i;
              out[e + q2 + 1] = t1i - t3r;
              out[e + 3 * q2] = t1r - t3i;
              out[e + 3 * q2 + 1] = t1i + t3r;
            }
          }
        step = step2 >> 2;
        continue;
      }
      for (let o = 0; o < size; o += len)
        for (let a = o, k = 0; a < o + q; a += 2, k += step) {
          const b = a + q, c = b + q, d = c + q;
          const ar = out[a], ai = out[a + 1], br = out[b], bi = out[b + 1], cr = out[c], ci = out[c + 1], dr = out[d], di = out[d + 1];
          const wbr = table[k], wbi = table[k + 1], wcr = table[2 * k], wci = table[2 * k + 1], wdr = table[3 * k], wdi = table[3 * k + 1];
          const mbr = br * wbr - bi * wbi, mbi = br * wbi + bi * wbr;
          const mcr = cr * wcr - ci * wci, mci = cr * wci + ci * wcr;
          const mdr = dr * wdr - di * wdi, mdi = dr * wdi + di * wdr;
          const t0r = ar + mcr, t0i = ai + mci, t1r = ar - mcr, t1i = ai - mci;
          const t2r = mbr + mdr, t2i = mbi + mdi, t3r = mbr - mdr, t3i = mbi - mdi;
          out[a] = t0r + t2r;
          out[a + 1] = t0i + t2i;
          out[c] = t0r - t2r;
          out[c + 1] = t0i - t2i;
          out[b] = t1r + t3i;
          out[b + 1] = t1i - t3r;
          out[d] = t1r - t3i;
          out[d + 1] = t1i + t3r;
        }
      step >>= 2;
    }
  }
}
