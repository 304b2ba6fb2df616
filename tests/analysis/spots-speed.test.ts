/**
 * The fast paths of spot detection give the same answers as the direct computations they replace:
 * the counting median against a full sort, the streamed separable filters against the 2-D sum of the
 * kernel over mirrored pixels, and the whole-image shortcut against the same region given as a mask or
 * an index list.
 */
import { describe, expect, it } from 'vitest';
import { analyzeObjects, detectSpots, gaussianFilter, gaussianKernels, laplacianOfGaussian, Xoshiro128 } from '../../shared/analysis/index';
import { medianAndMad, medianOfFloat32Bits } from '../../shared/analysis/robust-scale';
import { selectRank } from '../../shared/analysis/select';

function sortedMedian(a: Float32Array): number {
  const s = Float64Array.from(a).sort();
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
}
const bitsOf = (a: Float32Array) => new Int32Array(a.buffer, a.byteOffset, a.length);

describe('exact median over the Float32 bits', () => {
  const rng = new Xoshiro128(11);
  const normal = () => Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());

  it('equals the sorted median for odd and even counts, negative and mixed values', () => {
    for (const n of [1, 2, 3, 4, 5, 10, 101, 1000, 4097]) {
      for (const scale of [1e-6, 1, 3e4]) {
        const a = Float32Array.from({ length: n }, () => scale * normal());
        expect(medianOfFloat32Bits(bitsOf(a))).toBe(sortedMedian(a));
        const neg = a.map((v) => -Math.abs(v));
        expect(medianOfFloat32Bits(bitsOf(neg))).toBe(sortedMedian(neg));
      }
    }
  });

  it('ties, both zeros, infinities, and middle values in different top-bit buckets', () => {
    expect(medianOfFloat32Bits(bitsOf(Float32Array.from([5, 5, 5, 5, 1, 9])))).toBe(5);
    expect(medianOfFloat32Bits(bitsOf(Float32Array.from([-0, 0, -0, 0])))).toBe(0);
    expect(medianOfFloat32Bits(bitsOf(Float32Array.from([-Infinity, 2, 3, Infinity])))).toBe(2.5);
    // 1 and 1000 differ in the top 16 key bits: the two middle values come from two buckets
    expect(medianOfFloat32Bits(bitsOf(Float32Array.from([-7, 1, 1000, 1e9])))).toBe(500.5);
    // a view into a larger buffer reads only its own values
    const big = Float32Array.from([100, 100, 3, 1, 2, 100]);
    expect(medianOfFloat32Bits(new Int32Array(big.buffer, 8, 3))).toBe(2);
  });

  it('refuses no values', () => {
    expect(() => medianOfFloat32Bits(new Int32Array(0))).toThrow(/no values/);
  });
});

describe('exact median and MAD', () => {
  const rng = new Xoshiro128(12);
  const normal = () => Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
  /** the definition: median of the Float32 roundings of |v − median| */
  const sortedMad = (a: Float32Array) => {
    const m = sortedMedian(a);
    return sortedMedian(Float32Array.from(a, (v) => Math.abs(v - m)));
  };

  it('equals the sorted median and MAD on noise-like values (the one-pass bracket when centred near 0)', () => {
    for (const n of [1, 2, 3, 10, 1001, 20000, 65537]) {
      for (const [scale, shift] of [[1, 0], [3e4, 0], [0.01, 5], [200, -1e3], [1, 0.3]]) {
        const a = Float32Array.from({ length: n }, () => shift + scale * normal());
        const r = medianAndMad(a);
        expect(r.median).toBe(sortedMedian(a));
        expect(r.mad).toBe(sortedMad(a));
        // the buckets are relative to the values: spread well above the distance from 0 resolves them
        if (n >= 1001 && Math.abs(shift) <= scale) expect(r.madPath).toBe('bracket');
      }
    }
  });

  it('mixtures, heavy tails, values near 0 and a median about one MAD from 0 give the sorted definition', () => {
    const gens: (() => number)[] = [
      () => normal() / normal(),
      () => (rng.nextFloat() < 0.7 ? 0.01 * normal() : 50 + 10 * normal()),
      () => -Math.log(1 - rng.nextFloat()),
      () => (rng.nextFloat() < 0.5 ? 1e-20 * normal() : normal()),
      () => (rng.nextFloat() < 0.5 ? 1 + 0.1 * normal() : 0.01 * normal()),
      () => (rng.nextFloat() < 0.01 ? Infinity : normal()),
    ];
    let bracketed = 0;
    for (const g of gens)
      for (const n of [100, 5000, 30001]) {
        const a = Float32Array.from({ length: n }, g);
        const r = medianAndMad(a);
        expect(r.median).toBe(sortedMedian(a));
        expect(r.mad).toBe(sortedMad(a));
        if (r.madPath === 'bracket') bracketed++;
      }
    // the one-pass bracket takes most of them
    expect(bracketed).toBeGreaterThan(9);
  });

  it('selectRank finds every rank of values with ties, and refuses a rank outside the values', () => {
    for (const n of [1, 2, 3, 10, 257]) {
      const a = Float64Array.from({ length: n }, () => rng.nextInt(Math.max(1, n >> 2)) - 0.5 * rng.nextInt(3));
      const sorted = Float64Array.from(a).sort();
      for (let k = 0; k < n; k++) {
        const b = Float64Array.from(a);
        expect(selectRank(b, k)).toBe(sorted[k]);
        for (let i = 0; i < n; i++) expect(i < k ? b[i] <= b[k] : b[i] >= b[k]).toBe(true);
      }
    }
    expect(() => selectRank(new Float64Array(3), 3)).toThrow(/rank 3 outside 0..2/);
  });

  it('many equal values, a flat region and two spikes take the counting path, with the same definition', () => {
    const cases = [
      new Float32Array(5000).fill(7),
      Float32Array.from({ length: 5000 }, (_, i) => (i % 3 === 0 ? 1 : 0)),
      Float32Array.from({ length: 4000 }, (_, i) => (i % 2 ? 1e6 : -1e6)),
      Float32Array.from({ length: 3001 }, () => 1000 + 1e-3 * normal()),
      Float32Array.from([-Infinity, 2, 3, Infinity, 4, 5]),
    ];
    for (const a of cases) {
      const r = medianAndMad(a);
      expect(r.median).toBe(sortedMedian(a));
      expect(r.mad).toBe(sortedMad(a));
    }
    expect(medianAndMad(cases[0]).madPath).toBe('digits');
    expect(medianAndMad(cases[0]).mad).toBe(0);
  });

  it('refuses no values', () => {
    expect(() => medianAndMad(new Float32Array(0))).toThrow(/no values/);
  });
});

/** direct 2-D evaluation: Σ_{i,j} K(i, j) · (I(mirror(x + i), mirror(y + j)) − offset), in double */
function direct(img: ArrayLike<number>, w: number, h: number, sigma: number, box: { x0: number; y0: number; x1: number; y1: number }, offset: number, log: boolean) {
  const { radius: R, g, d2 } = gaussianKernels(sigma);
  const mirror = (i: number, n: number) => {
    let j = ((i % (2 * n)) + 2 * n) % (2 * n);
    if (j >= n) j = 2 * n - 1 - j;
    return j;
  };
  const out: number[] = [];
  for (let y = box.y0; y < box.y1; y++)
    for (let x = box.x0; x < box.x1; x++) {
      let s = 0;
      for (let j = -R; j <= R; j++)
        for (let i = -R; i <= R; i++) {
          const kij = log ? -sigma * sigma * (d2[Math.abs(i)] * g[Math.abs(j)] + g[Math.abs(i)] * d2[Math.abs(j)]) : g[Math.abs(i)] * g[Math.abs(j)];
          s += kij * (img[mirror(y + j, h) * w + mirror(x + i, w)] - offset);
        }
      out.push(s);
    }
  return out;
}

describe('streamed separable filters', () => {
  const rng = new Xoshiro128(5);
  const cases = [
    { w: 23, h: 17, sigma: 1.5, box: { x0: 0, y0: 0, x1: 23, y1: 17 } },
    { w: 23, h: 17, sigma: 1.5, box: { x0: 4, y0: 9, x1: 21, y1: 16 } },
    // R = 12 reaches past the whole 9 × 7 image: pixels are mirrored more than once
    { w: 9, h: 7, sigma: 3, box: { x0: 1, y0: 2, x1: 8, y1: 5 } },
    { w: 40, h: 3, sigma: 0.7, box: { x0: 10, y0: 0, x1: 11, y1: 3 } },
  ];
  for (const { w, h, sigma, box } of cases)
    it(`LoG and Gaussian on ${w}×${h}, σ ${sigma}, box ${JSON.stringify(box)} equal the 2-D sums`, () => {
      const u16 = Uint16Array.from({ length: w * h }, () => rng.nextInt(4000));
      const f64 = Float64Array.from({ length: w * h }, () => rng.nextFloat() * 200 - 50);
      for (const [img, offset] of [[u16, 37], [f64, -3.5]] as const) {
        for (const log of [true, false]) {
          const got = (log ? laplacianOfGaussian : gaussianFilter)(img, w, h, sigma, box, offset);
          const want = direct(img, w, h, sigma, box, offset, log);
          expect(got.length).toBe(want.length);
          let worst = 0, size = 0;
          for (let t = 0; t < want.length; t++) {
            worst = Math.max(worst, Math.abs(got[t] - want[t]));
            size = Math.max(size, Math.abs(want[t]));
          }
          // Float32 rows and output: a few units in the 7th significant digit of the largest value
          expect(worst).toBeLessThan(1e-5 * Math.max(size, 1));
        }
      }
    });

  it('the fused LoG gives each pixel the same value whichever box, strip or column sweep computes it', () => {
    // 300 columns: three strips; 61 rows: blocks of eight output rows and single tail rows, at several offsets
    const rng = new Xoshiro128(3);
    const w = 300, h = 61;
    const img = Float32Array.from({ length: w * h }, () => rng.nextFloat() * 1000 - 100);
    for (const sigma of [1.5, 1, 0.6]) {
      const whole = laplacianOfGaussian(img, w, h, sigma, { x0: 0, y0: 0, x1: w, y1: h }, 3);
      for (const b of [{ x0: 5, y0: 3, x1: 290, y1: 40 }, { x0: 130, y0: 0, x1: 131, y1: 61 }, { x0: 0, y0: 17, x1: 300, y1: 26 }, { x0: 77, y0: 50, x1: 211, y1: 61 }]) {
        const part = laplacianOfGaussian(img, w, h, sigma, b, 3);
        const bw = b.x1 - b.x0;
        let differ = 0;
        for (let y = b.y0; y < b.y1; y++) for (let x = b.x0; x < b.x1; x++) if (part[(y - b.y0) * bw + x - b.x0] !== whole[y * w + x]) differ++;
        expect(differ, `σ ${sigma}, box ${JSON.stringify(b)}`).toBe(0);
      }
    }
  });

  it('a non-finite pixel within reach of the box is refused; one beyond reach is not read', () => {
    const w = 40, img = new Float32Array(w * w).fill(10);
    const box = { x0: 10, y0: 10, x1: 20, y1: 20 };
    // σ 1.5 → R 6: pixel (25, 15) is read, pixel (27, 15) is not
    img[15 * w + 27] = NaN;
    expect(() => laplacianOfGaussian(img, w, w, 1.5, box, 10)).not.toThrow();
    img[15 * w + 25] = Infinity;
    expect(() => laplacianOfGaussian(img, w, w, 1.5, box, 10)).toThrow(/pixel 625 is Infinity/);
    expect(() => gaussianFilter(img, w, w, 1.5, box)).toThrow(/pixel 625 is Infinity/);
  });
});

describe('whole-image detection', () => {
  it('null, a mask of every pixel and a list of every pixel give the same detection', () => {
    const rng = new Xoshiro128(9);
    const w = 96, h = 80, img = new Float32Array(w * h);
    for (let i = 0; i < img.length; i++) img[i] = 100 + 10 * (rng.nextFloat() - 0.5);
    for (let s = 0; s < 25; s++) {
      const cx = 5 + rng.nextFloat() * (w - 10), cy = 5 + rng.nextFloat() * (h - 10);
      for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) img[y * w + x] += 300 * Math.exp(-((x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2) / 4.5);
    }
    const a = detectSpots(img, w, h, null)!;
    const b = detectSpots(img, w, h, new Uint8Array(w * h).fill(1))!;
    const c = detectSpots(img, w, h, Array.from({ length: w * h }, (_, i) => i))!;
    expect(a.spots.length).toBeGreaterThan(15);
    expect(b).toEqual(a);
    expect(c).toEqual(a);
    // the whole image minus one corner pixel goes through the index list: nearly the same noise estimate
    const m = new Uint8Array(w * h).fill(1);
    m[0] = 0;
    const d = detectSpots(img, w, h, m)!;
    expect(Math.abs(d.noise - a.noise) / a.noise).toBeLessThan(0.01);
    expect(d.spots.length).toBe(a.spots.length);
  });

  it('object measures of the whole image: null and a mask of every pixel agree', () => {
    const rng = new Xoshiro128(21);
    const w = 64, h = 64;
    const make = () => {
      const img = new Float32Array(w * h);
      for (let i = 0; i < img.length; i++) img[i] = 50 + 8 * (rng.nextFloat() - 0.5);
      for (let s = 0; s < 12; s++) {
        const cx = 6 + rng.nextFloat() * (w - 12), cy = 6 + rng.nextFloat() * (h - 12);
        for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) img[y * w + x] += 200 * Math.exp(-((x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2) / 4.5);
      }
      return img;
    };
    const c1 = make(), c2 = make();
    const a = analyzeObjects(c1, c2, w, h, null, { placements: 99 });
    const b = analyzeObjects(c1, c2, w, h, new Uint8Array(w * h).fill(1), { placements: 99 });
    expect(a.result.count1).toBeGreaterThan(5);
    expect(b).toEqual(a);
  });

  it('refuses a non-finite pixel of a float image on the whole-image path, quoting it', () => {
    const img = new Float64Array(32 * 32).fill(1);
    img[517] = -Infinity;
    expect(() => detectSpots(img, 32, 32, null)).toThrow(/pixel 517 is -Infinity/);
  });
});
