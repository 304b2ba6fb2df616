/**
 * Collecting the (x, y) intensity pairs of a region and the level structure the exact rank-based and
 * distance-based coefficients share.
 *
 * Integer channels (8/16-bit, or any integer data within 0..65535) keep their values in a Uint16Array and
 * get their levels by counting (O(n + L), L ≤ 65,536); other data (32-bit float, wide integers) is stored
 * as Float64 and gets its levels by sorting (O(n log n)). Pairs where either value is NaN are dropped
 * (decided here: a NaN pixel carries no intensity). ±Infinity is rejected with a RangeError.
 */
import type { ChannelArray, RegionSpec } from './types';
import type { PairSweep } from './sweep';

export type PairArray = Uint16Array | Float64Array;
export type RankArray = Uint16Array | Uint32Array;

export interface Pairs {
  n: number;
  x: PairArray;
  y: PairArray;
  /** true when both arrays hold integers in 0..65535 (Uint16Array storage) */
  integer: boolean;
}

/** Dense levels of one variable: the distinct values in ascending order, their counts, each item's level. */
export interface LevelIndex {
  /** number of distinct values */
  L: number;
  /** level (0..L−1) of each item */
  rank: RankArray;
  /** the distinct values, ascending */
  values: Float64Array;
  /** how many items take each value */
  counts: Int32Array;
  /** integer data counted by value: the level of each value 0..max (absent when the levels came by sorting) */
  valueLevel?: Uint16Array;
}

/** Items ordered by level with a counting sort: items of level k are order[start[k] .. start[k+1]). */
export interface LevelOrder {
  order: Uint32Array;
  start: Int32Array;
}

/**
 * The y levels of the items in (x, y) order: items of x level k occupy positions start[k] .. start[k+1] of
 * `yRank`, ascending within the group. Sequential memory access for the sweeps of kendall/dcor.
 */
export interface XSorted {
  start: Int32Array;
  yRank: RankArray;
}

function isSmallUnsigned(a: ChannelArray): boolean {
  return a instanceof Uint8Array || a instanceof Uint8ClampedArray || a instanceof Uint16Array;
}

/** Pairs from plain arrays (tests, previews). Integer storage is chosen when every value fits. */
export function pairsFromArrays(x: ArrayLike<number>, y: ArrayLike<number>): Pairs {
  if (x.length !== y.length) throw new RangeError(`x and y differ in length: ${x.length} vs ${y.length}`);
  const n = x.length;
  let integer = true;
  for (let i = 0; i < n && integer; i++) {
    const a = x[i];
    const b = y[i];
    if (!(Number.isInteger(a) && a >= 0 && a <= 65535 && Number.isInteger(b) && b >= 0 && b <= 65535)) integer = false;
  }
  if (integer) return { n, x: Uint16Array.from(x), y: Uint16Array.from(y), integer };
  const xs = new Float64Array(n);
  const ys = new Float64Array(n);
  let m = 0;
  for (let i = 0; i < n; i++) {
    const a = x[i];
    const b = y[i];
    if (Number.isNaN(a) || Number.isNaN(b)) continue;
    if (!Number.isFinite(a) || !Number.isFinite(b)) throw new RangeError(`infinite intensity at item ${i}: (${a}, ${b})`);
    xs[m] = a;
    ys[m] = b;
    m++;
  }
  return { n: m, x: m === n ? xs : xs.slice(0, m), y: m === n ? ys : ys.slice(0, m), integer: false };
}

/**
 * The (x, y) pairs of a region of two same-sized channels. `region` null means the whole image.
 * Indices out of range throw a RangeError quoting the index.
 */
export function collectPairs(ch1: ChannelArray, ch2: ChannelArray, region: RegionSpec): Pairs {
  if (ch1.length !== ch2.length) throw new RangeError(`channels differ in size: ${ch1.length} vs ${ch2.length} pixels`);
  const N = ch1.length;
  let idx: ArrayLike<number> | null = null;
  let n: number;
  if (region === null) n = N;
  else if (region.kind === 'mask') {
    const mask = region.mask;
    if (mask.length !== N) throw new RangeError(`mask has ${mask.length} pixels, the image ${N}`);
    let c = 0;
    for (let i = 0; i < N; i++) if (mask[i] !== 0) c++;
    const ix = new Uint32Array(c);
    c = 0;
    for (let i = 0; i < N; i++) if (mask[i] !== 0) ix[c++] = i;
    idx = ix;
    n = c;
  } else {
    idx = region.indices;
    n = idx.length;
    for (let k = 0; k < n; k++) {
      const i = idx[k];
      if (!(Number.isInteger(i) && i >= 0 && i < N)) throw new RangeError(`pixel index out of range: ${i} (image has ${N} pixels)`);
    }
  }
  const wide = !(isSmallUnsigned(ch1) && isSmallUnsigned(ch2));
  if (!wide) {
    const x = new Uint16Array(n);
    const y = new Uint16Array(n);
    if (idx === null) {
      x.set(ch1 as ArrayLike<number>);
      y.set(ch2 as ArrayLike<number>);
    } else {
      for (let k = 0; k < n; k++) {
        const i = idx[k];
        x[k] = ch1[i];
        y[k] = ch2[i];
      }
    }
    return { n, x, y, integer: true };
  }
  const xs: number[] | Float64Array = new Float64Array(n);
  const ys = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const i = idx === null ? k : idx[k];
    xs[k] = ch1[i];
    ys[k] = ch2[i];
  }
  // wide integer data that fits 0..65535 takes the integer paths too
  return pairsFromArrays(xs, ys);
}

/** The value range up to which integer data gets its levels by counting rather than sorting. */
function countingMax(v: Uint16Array, n: number): number {
  let max = 65535;
  // counting pays off unless the value range is much wider than the number of items
  if (n < 4096) {
    max = 0;
    for (let i = 0; i < n; i++) if (v[i] > max) max = v[i];
  }
  return max < 16 * n + 256 ? max : -1;
}

/**
 * Levels from a value histogram `cnt` (index = value, 0..max) of integer data: the values present, their
 * counts, and the map value → level (`valueLevel`); each item's level (`rank`) is computed on first use.
 */
function levelsFromCounts(v: Uint16Array, n: number, cnt: Int32Array, max: number): LevelIndex {
  while (max > 0 && cnt[max] === 0) max--;
  const map = new Uint16Array(max + 1);
  let L = 0;
  for (let k = 0; k <= max; k++) if (cnt[k] > 0) map[k] = L++;
  const values = new Float64Array(L);
  const counts = new Int32Array(L);
  for (let k = 0; k <= max; k++) {
    if (cnt[k] > 0) {
      values[map[k]] = k;
      counts[map[k]] = cnt[k];
    }
  }
  let rank: Uint16Array | undefined;
  return {
    L,
    values,
    counts,
    valueLevel: map,
    get rank() {
      if (!rank) {
        rank = new Uint16Array(n);
        for (let i = 0; i < n; i++) rank[i] = map[v[i]];
      }
      return rank;
    },
  };
}

/** Levels of one variable: counting for Uint16 storage, sorting otherwise. */
export function levelIndex(v: PairArray, n = v.length): LevelIndex {
  const max = v instanceof Uint16Array ? countingMax(v, n) : -1;
  if (v instanceof Uint16Array && max >= 0) {
    const cnt = new Int32Array(max + 1);
    for (let i = 0; i < n; i++) cnt[v[i]]++;
    return levelsFromCounts(v, n, cnt, max);
  }
  const sorted = Float64Array.from(v.subarray(0, n)).sort();
  let L = 0;
  for (let i = 0; i < n; i++) if (i === 0 || sorted[i] !== sorted[i - 1]) sorted[L++] = sorted[i];
  const values = sorted.slice(0, L);
  const counts = new Int32Array(L);
  const rank: RankArray = L <= 65536 ? new Uint16Array(n) : new Uint32Array(n);
  for (let i = 0; i < n; i++) {
    const t = v[i];
    let lo = 0;
    let hi = L - 1;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (values[mid] < t) lo = mid + 1;
      else hi = mid;
    }
    rank[i] = lo;
    counts[lo]++;
  }
  return { L, rank, values, counts };
}

/** Levels of both variables; integer data counts both in one pass over the pairs. */
export function levelIndexPair(x: PairArray, y: PairArray, n: number): [LevelIndex, LevelIndex] {
  if (x instanceof Uint16Array && y instanceof Uint16Array) {
    const mx = countingMax(x, n), my = countingMax(y, n);
    if (mx >= 0 && my >= 0) {
      const cx = new Int32Array(mx + 1), cy = new Int32Array(my + 1);
      for (let i = 0; i < n; i++) {
        cx[x[i]]++;
        cy[y[i]]++;
      }
      return [levelsFromCounts(x, n, cx, mx), levelsFromCounts(y, n, cy, my)];
    }
  }
  return [levelIndex(x, n), levelIndex(y, n)];
}

/** Counting sort of items by level: O(n + L). Stable. */
export function levelOrder(li: LevelIndex): LevelOrder {
  const { L, rank, counts } = li;
  const n = rank.length;
  const start = new Int32Array(L + 1);
  for (let k = 0; k < L; k++) start[k + 1] = start[k] + counts[k];
  const pos = start.slice(0, L);
  const order = new Uint32Array(n);
  for (let i = 0; i < n; i++) order[pos[rank[i]]++] = i;
  return { order, start };
}

/**
 * y levels in x order, O(n + Lx + Ly): a two-pass (least significant key first) counting sort, so within
 * each x level the y levels ascend. Equal (x, y) pairs are then adjacent (the sweeps of kendall/dcor visit
 * each distinct pair once with its multiplicity) and the queries of one x group climb the Fenwick tree in
 * ascending order (the nodes they share stay in cache).
 */
export function sortByX(lx: LevelIndex, ly: LevelIndex, x?: PairArray, y?: PairArray): XSorted {
  const { L, counts } = lx;
  const { L: Ly, counts: cy } = ly;
  let n = 0;
  for (let k = 0; k < L; k++) n += counts[k];
  const xl = lx.valueLevel, yl = ly.valueLevel;
  // pass 1: the x levels in y order
  const yStart = new Int32Array(Ly + 1);
  for (let k = 0; k < Ly; k++) yStart[k + 1] = yStart[k] + cy[k];
  const wideX = L > 65536;
  const xByY: RankArray = wideX ? new Uint32Array(n) : new Uint16Array(n);
  if (xl && yl && x instanceof Uint16Array && y instanceof Uint16Array && n > yl.length) {
    // integer data counted by value: positions per y value, x levels by lookup (no per-item level arrays;
    // for fewer items than values the per-item levels are cheaper)
    const yPos = new Int32Array(yl.length);
    for (let v = 0; v < yl.length; v++) yPos[v] = yStart[yl[v]];
    for (let i = 0; i < n; i++) xByY[yPos[y[i]]++] = xl[x[i]];
  } else {
    const rx = lx.rank, ry = ly.rank;
    const yPos = yStart.slice(0, Ly);
    for (let i = 0; i < n; i++) xByY[yPos[ry[i]]++] = rx[i];
  }
  // pass 2: stable by x, writing the y level of each position
  const start = new Int32Array(L + 1);
  for (let k = 0; k < L; k++) start[k + 1] = start[k] + counts[k];
  const pos = start.slice(0, L);
  const yRank: RankArray = Ly > 65536 ? new Uint32Array(n) : new Uint16Array(n);
  for (let k = 0; k < Ly; k++) for (let q = yStart[k], e = yStart[k + 1]; q < e; q++) yRank[pos[xByY[q]]++] = k;
  return { start, yRank };
}

/**
 * The distinct (x, y) pairs in (x, y) order with their multiplicities: the pairs of x level g are positions
 * start[g] .. start[g+1] of `yRank` (ascending) and `mult`. What the pair sweep (sweep.ts) reads: one entry
 * per distinct pair instead of one per item.
 */
export interface DistinctPairs {
  start: Int32Array;
  yRank: RankArray;
  mult: Int32Array;
}

/**
 * Distinct pairs in (x, y) order, O(n + Lx + Ly): the items sorted by sortByX (equal pairs adjacent), each
 * run of equal pairs then kept once with its length.
 */
export function distinctByX(lx: LevelIndex, ly: LevelIndex, x?: PairArray, y?: PairArray): DistinctPairs {
  const { start, yRank } = sortByX(lx, ly, x, y);
  const L = start.length - 1;
  const n = yRank.length;
  const mult = new Int32Array(n);
  const out = new Int32Array(L + 1);
  let w = 0;
  for (let g = 0; g < L; g++) {
    const b = start[g + 1];
    for (let q = start[g]; q < b; ) {
      const r = yRank[q];
      let e = q + 1;
      while (e < b && yRank[e] === r) e++;
      yRank[w] = r;
      mult[w++] = e - q;
      q = e;
    }
    out[g + 1] = w;
  }
  // big regions: copies of the used part, so that the item-sized arrays can go
  if (n >= 1 << 20) return { start: out, yRank: yRank.slice(0, w), mult: mult.slice(0, w) };
  return { start: out, yRank: yRank.subarray(0, w), mult: mult.subarray(0, w) };
}

/**
 * Pairs with lazily computed, cached level structures so that the coefficients of one region share
 * one pass of counting (measureRegion computes each piece at most once).
 */
export class PreparedPairs implements Pairs {
  readonly n: number;
  readonly x: PairArray;
  readonly y: PairArray;
  readonly integer: boolean;
  private _lx?: LevelIndex;
  private _ly?: LevelIndex;
  private _ox?: LevelOrder;
  private _sx?: XSorted;
  private _dx?: DistinctPairs;
  /** C − D of Kendall's τ, filled by whichever sweep computes it first (kendall.ts or the pair sweep) */
  kendallS?: number;
  /** the pair sweep (sweep.ts), once done: dCor's cross terms, C − D, ρ's rank products */
  sweep?: PairSweep;
  constructor(p: Pairs) {
    this.n = p.n;
    this.x = p.x;
    this.y = p.y;
    this.integer = p.integer;
  }
  /** keep a finished pair sweep (computed here or by the caller, e.g. over threads) */
  useSweep(s: PairSweep): void {
    this.sweep = s;
    this.kendallS = s.kendallS;
  }
  get levelsX(): LevelIndex {
    if (!this._lx) [this._lx, this._ly] = levelIndexPair(this.x, this.y, this.n);
    return this._lx;
  }
  get levelsY(): LevelIndex {
    if (!this._ly) [this._lx, this._ly] = levelIndexPair(this.x, this.y, this.n);
    return this._ly!;
  }
  get orderX(): LevelOrder {
    return (this._ox ??= levelOrder(this.levelsX));
  }
  get distinctByX(): DistinctPairs {
    return (this._dx ??= distinctByX(this.levelsX, this.levelsY, this.x, this.y));
  }
  get sortedByX(): XSorted {
    return (this._sx ??= sortByX(this.levelsX, this.levelsY, this.x, this.y));
  }
}

export function prepare(p: Pairs | PreparedPairs): PreparedPairs {
  return p instanceof PreparedPairs ? p : new PreparedPairs(p);
}
