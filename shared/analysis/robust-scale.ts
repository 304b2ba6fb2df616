/**
 * Median and median absolute deviation (MAD) of Float32 values, exact: order statistics, not estimates.
 * The MAD as a robust scale follows Hampel 1974, "The influence curve and its role in robust estimation",
 * J. Am. Stat. Assoc. 69:383–393, doi:10.1080/01621459.1974.10482962.
 *
 * Definitions: the median of an even count is the mean of the two middle values (in double); the MAD is
 * the median of the deviations |v − median| rounded to Float32 (the values spot detection had stored).
 *
 * Method (counting by digits; Knuth, The Art of Computer Programming vol. 3, 1998, §5.2.5): the Float32
 * bits are mapped to keys that sort as the numbers do (sign bit set: all bits flipped; otherwise the sign
 * bit set). The median: one counting pass over the top 16 key bits finds the bucket of each middle rank,
 * a second over the low 16 bits of that bucket's keys the exact key. The MAD reuses the first pass's
 * counts: a bucket is an interval of values, so the number of values within [m − t, m + t] is bracketed
 * by whole buckets, which gives deviations tlo ≤ thi with at most the middle ranks' count below tlo and
 * at least it up to thi; one pass counts the deviations below tlo and keeps those in [tlo, thi] (about
 * one percent of them for noise-like values), which are sorted. When the bracket would keep more than
 * an eighth of the values (many equal values, e.g. a flat region), or does not hold the middle ranks,
 * the deviations are counted by digits as the median is (two more passes) — the same exact value either
 * way. No copy of the values or of the deviations is made in either case.
 */

const F = new Float32Array(1);
const I = new Int32Array(F.buffer);
const SIGN_F64 = new Float64Array(1);
/** the high word of SIGN_F64 (little-endian, as every platform these typed arrays run on) */
const SIGN_HIGH = new Int32Array(SIGN_F64.buffer);

/** sortable key of Float32 bits u: all bits flipped for a negative value, else the sign bit set */
function keyOf(u: number): number {
  return (u ^ ((u >> 31) | -0x80000000)) >>> 0;
}
function keyToFloat(key: number): number {
  const k = key | 0;
  I[0] = k < 0 ? k ^ -0x80000000 : ~k;
  return F[0];
}
/** top-16 key bucket of the Float32 rounding of x */
function bucketOf(x: number): number {
  F[0] = x;
  return keyOf(I[0]) >>> 16;
}

interface Ranks {
  kLo: number;
  kHi: number;
}
function middleRanks(n: number): Ranks {
  const kHi = n >> 1;
  return { kLo: n % 2 ? kHi : kHi - 1, kHi };
}

/** counts of the top 16 key bits */
function topCounts(bits: Int32Array): Int32Array {
  const n = bits.length;
  const hist = new Int32Array(65536);
  for (let i = 0; i < n; i++) {
    const u = bits[i];
    const b = (u ^ ((u >> 31) | -0x80000000)) >>> 16;
    hist[b] = (hist[b] + 1) | 0;
  }
  return hist;
}

/** bucket holding rank k, and k's rank within it */
function bucketOfRank(hist: Int32Array, k: number): [number, number] {
  for (let b = 0, below = 0; b < 65536; b++) {
    const c = hist[b];
    if (k < below + c) return [b, k - below];
    below += c;
  }
  throw new RangeError(`rank ${k} beyond the counted values`);
}

/** the value of rank r within bucket b, given the low-16-bit counts of that bucket */
function valueInBucket(bucket: number, low: Int32Array, r: number): number {
  let l = 0;
  for (let below = 0; ; l++) {
    below += low[l];
    if (r < below) break;
  }
  return keyToFloat((bucket << 16) | l);
}

function medianFromCounts(bits: Int32Array, hist: Int32Array): number {
  const n = bits.length;
  const { kLo, kHi } = middleRanks(n);
  const [bLo, rLo] = bucketOfRank(hist, kLo);
  const [bHi, rHi] = bucketOfRank(hist, kHi);
  const lowLo = new Int32Array(65536), lowHi = bLo === bHi ? lowLo : new Int32Array(65536);
  for (let i = 0; i < n; i++) {
    const u = bits[i];
    const key = u ^ ((u >> 31) | -0x80000000);
    const b = key >>> 16;
    if (b === bLo) lowLo[key & 0xffff] = (lowLo[key & 0xffff] + 1) | 0;
    else if (b === bHi) lowHi[key & 0xffff] = (lowHi[key & 0xffff] + 1) | 0;
  }
  const hi = valueInBucket(bHi, lowHi, rHi);
  return kLo === kHi ? hi : (valueInBucket(bLo, lowLo, rLo) + hi) / 2;
}

/**
 * Median of Float32 values given as their bit patterns (an Int32Array view of the Float32Array), exact:
 * the mean of the two middle values for an even count. Two linear passes, the values untouched.
 */
export function medianOfFloat32Bits(bits: Int32Array): number {
  if (bits.length === 0) throw new RangeError('median of no values');
  return medianFromCounts(bits, topCounts(bits));
}

/** MAD by digits: the deviations fround(|v − m|) counted twice, never stored */
function madByDigits(vals: Float32Array, m: number): number {
  const n = vals.length;
  const { kLo, kHi } = middleRanks(n);
  const hist = new Int32Array(65536);
  for (let i = 0; i < n; i++) {
    F[0] = Math.abs(vals[i] - m);
    const b = keyOf(I[0]) >>> 16;
    hist[b] = (hist[b] + 1) | 0;
  }
  const [bLo, rLo] = bucketOfRank(hist, kLo);
  const [bHi, rHi] = bucketOfRank(hist, kHi);
  const lowLo = new Int32Array(65536), lowHi = bLo === bHi ? lowLo : new Int32Array(65536);
  for (let i = 0; i < n; i++) {
    F[0] = Math.abs(vals[i] - m);
    const key = keyOf(I[0]);
    const b = key >>> 16;
    if (b === bLo) lowLo[key & 0xffff] = (lowLo[key & 0xffff] + 1) | 0;
    else if (b === bHi) lowHi[key & 0xffff] = (lowHi[key & 0xffff] + 1) | 0;
  }
  const hi = valueInBucket(bHi, lowHi, rHi);
  return kLo === kHi ? hi : (valueInBucket(bLo, lowLo, rLo) + hi) / 2;
}

export interface MedianMad {
  median: number;
  /** median of fround(|v − median|) */
  mad: number;
  /** which way the MAD was found: 'bracket' (one pass and a small sort) or 'digits' (two counting passes) */
  madPath: 'bracket' | 'digits';
}

/** Median and MAD of Float32 values (see the file comment); no values → RangeError. */
export function medianAndMad(vals: Float32Array): MedianMad {
  const n = vals.length;
  if (n === 0) throw new RangeError('median of no values');
  const bits = new Int32Array(vals.buffer, vals.byteOffset, n);
  const hist = topCounts(bits);
  const m = medianFromCounts(bits, hist);
  const { kLo, kHi } = middleRanks(n);
  // prefix counts: P[b] = number of values in buckets below b
  const P = new Float64Array(65537);
  let first = -1, last = -1;
  for (let b = 0; b < 65536; b++) {
    P[b + 1] = P[b] + hist[b];
    if (hist[b] > 0) {
      if (first < 0) first = b;
      last = b;
    }
  }
  // values within [m − t, m + t]: at most those of the buckets from bucketOf(m − t) − 1 to bucketOf(m + t) + 1,
  // at least those strictly between bucketOf(m − t) and bucketOf(m + t)
  const upper = (t: number) => P[Math.min(65535, bucketOf(m + t) + 1) + 1] - P[Math.max(0, bucketOf(m - t) - 1)];
  const lower = (t: number) => {
    const a = bucketOf(m - t) + 1, b = bucketOf(m + t) - 1;
    return a <= b ? P[b + 1] - P[a] : 0;
  };
  const span = Math.max(Math.abs(keyToFloat(first << 16) - m), Math.abs(keyToFloat((last << 16) | 0xffff) - m));
  // tlo: the largest t with at most kLo values within t; thi: the smallest with more than kHi (bisection)
  let a = 0, b = span;
  if (upper(0) > kLo) b = 0;
  else
    for (let it = 0; it < 80; it++) {
      const t = (a + b) / 2;
      if (upper(t) <= kLo) a = t;
      else b = t;
    }
  const tlo = a;
  a = 0;
  b = span * 2 + Number.MIN_VALUE;
  for (let it = 0; it < 80; it++) {
    const t = (a + b) / 2;
    if (lower(t) > kHi) b = t;
    else a = t;
  }
  const thi = b;
  const estimate = upper(thi) - lower(tlo);
  if (estimate <= n / 8 && Number.isFinite(thi) && tlo <= thi) {
    const keep = new Float64Array(Math.min(n, estimate + 1024));
    let below = 0, c = 0, full = false;
    const sign = SIGN_HIGH;
    for (let i = 0; i < n; i++) {
      const d = Math.fround(Math.abs(vals[i] - m));
      // d < tlo counted without a branch (half the deviations are below, in no predictable order): the
      // sign bit of d − tlo, which is exact for finite values (no difference of unequal values is 0)
      SIGN_F64[0] = d - tlo;
      below += sign[1] >>> 31;
      // rarely true, so well predicted; the exact test follows
      if ((d - tlo) * (thi - d) >= 0 && d >= tlo && d <= thi) {
        if (c === keep.length) {
          full = true;
          break;
        }
        keep[c++] = d;
      }
    }
    if (!full && below <= kLo && below + c > kHi) {
      const s = keep.subarray(0, c).sort();
      const hi = s[kHi - below];
      return { median: m, mad: kLo === kHi ? hi : (s[kLo - below] + hi) / 2, madPath: 'bracket' };
    }
  }
  return { median: m, mad: madByDigits(vals, m), madPath: 'digits' };
}
