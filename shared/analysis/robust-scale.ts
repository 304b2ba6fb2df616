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
 * bit set). One counting pass over the top 16 key bits finds the bucket of each middle rank, so the median
 * m lies in a known interval [mA, mB]. A bucket is an interval of values, so the number of values within t
 * of m is bracketed by whole buckets for every m in [mA, mB]; this gives deviations tlo ≤ thi with at most
 * the middle ranks' count below tlo and more than it up to thi, and two zones of buckets, around m − t and
 * m + t, that hold every value whose deviation can lie between them. A second pass counts the low 16 key
 * bits of the middle ranks' buckets (the exact median) and keeps the values of the zones (1–2 % of them for
 * noise-like values); the deviations of the kept values give the MAD by selection (`selectRank`), the
 * values between the zones being only counted. The result is checked against bounds on the deviations of
 * the counted values (`madFromZones`); when the check fails, the zones would keep more than an eighth of
 * the values (many equal values, e.g. a flat region) or the median's bucket edges are not finite, the
 * deviations are counted by digits as the median is (two more passes) — the same exact value either way.
 * No copy of all the values or of all the deviations is made in either case. */

import { selectRank } from './select';

const F = new Float32Array(1);
const I = new Int32Array(F.buffer);

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
  const { kLo, kHi } = middleRanks(bits.length);
  const [bLo, rLo] = bucketOfRank(hist, kLo);
  const [bHi, rHi] = bucketOfRank(hist, kHi);
  const lowLo = new Int32Array(65536), lowHi = bLo === bHi ? lowLo : new Int32Array(65536);
  countLowBits(bits, bLo, bHi, lowLo, lowHi);
  return medianFromLow(bLo, rLo, lowLo, bHi, rHi, lowHi, kLo === kHi);
}

/** counts of the low 16 key bits of the values in bucket bLo (into lowLo) and bucket bHi (into lowHi) */
function countLowBits(bits: Int32Array, bLo: number, bHi: number, lowLo: Int32Array, lowHi: Int32Array): void {
  for (let i = 0; i < bits.length; i++) {
    const u = bits[i];
    const key = u ^ ((u >> 31) | -0x80000000);
    const b = key >>> 16;
    if (b === bLo) lowLo[key & 0xffff] = (lowLo[key & 0xffff] + 1) | 0;
    else if (b === bHi) lowHi[key & 0xffff] = (lowHi[key & 0xffff] + 1) | 0;
  }
}

/** the median from the middle ranks' buckets, their ranks within them and their low-bit counts */
function medianFromLow(bLo: number, rLo: number, lowLo: Int32Array, bHi: number, rHi: number, lowHi: Int32Array, oneMiddle: boolean): number {
  const hi = valueInBucket(bHi, lowHi, rHi);
  return oneMiddle ? hi : (valueInBucket(bLo, lowLo, rLo) + hi) / 2;
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
  const { kLo, kHi } = middleRanks(n);
  const [bLo, rLo] = bucketOfRank(hist, kLo);
  const [bHi, rHi] = bucketOfRank(hist, kHi);
  // the median lies in [mA, mB], the values of buckets bLo..bHi (NaN edges: no bracket, counted by digits)
  const mA = keyToFloat(bLo << 16), mB = keyToFloat(((bHi << 16) | 0xffff) >>> 0);
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
  const count = (b0: number, b1: number) => (b0 <= b1 ? P[b1 + 1] - P[b0] : 0);
  const clamp = (b: number) => Math.min(65535, Math.max(0, b));
  // values within t of every possible median: at most those of the buckets from bucketOf(mA − t) − 1 to
  // bucketOf(mB + t) + 1; at least those strictly between bucketOf(mB − t) and bucketOf(mA + t)
  const upper = (t: number) => count(clamp(bucketOf(mA - t) - 1), clamp(bucketOf(mB + t) + 1));
  const lower = (t: number) => count(bucketOf(mB - t) + 1, bucketOf(mA + t) - 1);
  let zones: Zones | null = null;
  if (Number.isFinite(mA) && Number.isFinite(mB)) {
    const span = Math.max(Math.abs(keyToFloat(first << 16) - mA), Math.abs(keyToFloat(((last << 16) | 0xffff) >>> 0) - mB));
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
    // the deviations in [tlo, thi] come from the buckets around m − t and m + t (zones, kept); the buckets
    // between the zones hold smaller deviations, those beyond them larger ones (both only counted)
    let l0 = clamp(bucketOf(mA - thi) - 1), l1 = clamp(bucketOf(mB - tlo) + 1);
    let r0 = clamp(bucketOf(mA + tlo) - 1), r1 = clamp(bucketOf(mB + thi) + 1);
    if (l1 + 1 >= r0) {
      l1 = r1;
      r0 = r1 + 1;
    }
    const kept = count(l0, l1) + count(r0, r1);
    if (Number.isFinite(thi) && kept <= n / 8) zones = { l0, l1, r0, r1, kept };
  }
  // one pass: the low 16 key bits of the middle ranks' buckets (the exact median), and the values of the zones
  const lowLo = new Int32Array(65536), lowHi = bLo === bHi ? lowLo : new Int32Array(65536);
  const keep = new Float32Array(zones ? zones.kept : 0);
  if (zones) {
    // what each bucket is: KEEP (a zone), LOW / HIGH (the middle ranks'); most are none, one load and test
    const role = new Uint8Array(65536);
    role.fill(KEEP, zones.l0, zones.l1 + 1);
    if (zones.r0 <= zones.r1) role.fill(KEEP, zones.r0, zones.r1 + 1);
    role[bLo] |= LOW;
    if (bHi !== bLo) role[bHi] |= HIGH;
    let c = 0;
    for (let i = 0; i < n; i++) {
      const u = bits[i];
      const key = u ^ ((u >> 31) | -0x80000000);
      const f = role[key >>> 16];
      if (f === 0) continue;
      if (f & KEEP) keep[c++] = vals[i];
      if (f & LOW) lowLo[key & 0xffff] = (lowLo[key & 0xffff] + 1) | 0;
      else if (f & HIGH) lowHi[key & 0xffff] = (lowHi[key & 0xffff] + 1) | 0;
    }
  } else countLowBits(bits, bLo, bHi, lowLo, lowHi);
  const m = medianFromLow(bLo, rLo, lowLo, bHi, rHi, lowHi, kLo === kHi);
  if (zones) {
    const mad = madFromZones(keep, m, zones, count, kLo, kHi);
    if (mad !== null) return { median: m, mad, madPath: 'bracket' };
  }
  return { median: m, mad: madByDigits(vals, m), madPath: 'digits' };
}

const KEEP = 1, LOW = 2, HIGH = 4;

/** bucket ranges l0..l1 and r0..r1 (inclusive; r0 > r1 when empty) whose `kept` values are kept */
interface Zones {
  l0: number;
  l1: number;
  r0: number;
  r1: number;
  kept: number;
}

const deviation = (v: number, m: number) => Math.fround(Math.abs(v - m));

/**
 * The MAD from the kept values, or null when the zones do not bracket the middle ranks. The values between
 * the zones (buckets l1 + 1 .. r0 − 1) are only counted; a value v ↦ fround(|v − m|) falls as v rises to
 * m and rises after it (rounding is monotonic), so their deviations are at most those of the range's two
 * end values, and the values beyond the zones' outer ends have at least the deviations of those ends. When
 * the kLo-th and kHi-th smallest deviations, ranked as if every counted value between were below the kept
 * ones, are at least the first bound and at most the second, they are the true ones.
 */
function madFromZones(keep: Float32Array, m: number, z: Zones, count: (b0: number, b1: number) => number, kLo: number, kHi: number): number | null {
  const below = count(z.l1 + 1, z.r0 - 1);
  const c = keep.length;
  if (!(below <= kLo && below + c > kHi)) return null;
  const d = new Float64Array(c);
  for (let i = 0; i < c; i++) d[i] = deviation(keep[i], m);
  const dLo = selectRank(d, kLo - below);
  // the next rank: the least value above position kLo − below
  let dHi = dLo;
  if (kHi > kLo) {
    dHi = Infinity;
    for (let i = kLo - below + 1; i < c; i++) if (d[i] < dHi) dHi = d[i];
  }
  const insideMax = below === 0 ? -Infinity : Math.max(deviation(keyToFloat(((z.l1 + 1) << 16) >>> 0), m), deviation(keyToFloat((((z.r0 - 1) << 16) | 0xffff) >>> 0), m));
  let outsideMin = Infinity;
  if (z.l0 > 0) {
    const edge = keyToFloat((((z.l0 - 1) << 16) | 0xffff) >>> 0);
    if (!(edge <= m)) return null;
    outsideMin = Math.min(outsideMin, deviation(edge, m));
  }
  const right = z.r0 <= z.r1 ? z.r1 : z.l1;
  if (right < 65535) {
    const edge = keyToFloat(((right + 1) << 16) >>> 0);
    if (!(edge >= m)) return null;
    outsideMin = Math.min(outsideMin, deviation(edge, m));
  }
  if (!(insideMax <= dLo && outsideMin >= dHi)) return null;
  return kLo === kHi ? dHi : (dLo + dHi) / 2;
}
