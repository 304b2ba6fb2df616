/**
 * MICe and TICe: the equicharacteristic-matrix estimators of the maximal information coefficient and of the
 * total information coefficient.
 *
 * - Reshef YA, Reshef DN, Finucane HK, Sabeti PC, Mitzenmacher M (2016) Measuring dependence powerfully and
 *   equitably. J. Mach. Learn. Res. 17(212):1–63. (MICe, TICe, the equicharacteristic matrix)
 * - Reshef DN, Reshef YA, Finucane HK, Grossman SR, McVean G, Turnbaugh PJ, Lander ES, Mitzenmacher M,
 *   Sabeti PC (2011) Detecting novel associations in large data sets. Science 334:1518–1524.
 *   doi:10.1126/science.1205438 (MIC; the equipartition, clump and OptimizeXAxis algorithms of its SOM)
 *
 * Definition. With B(n) = max(n^α, 4), for every grid of k columns × l rows with k·l ≤ B(n) the
 * equicharacteristic matrix holds the largest mutual information of the grid's cell frequencies among grids
 * whose LARGER partition is an equipartition (the other is free), divided by log min(k, l'), where l' is the
 * number of rows the equipartition actually has (ties never straddle a row, so l' ≤ l):
 *   - k ≤ l: y is equipartitioned into l rows, the k columns on x are optimised;
 *   - k ≥ l: x is equipartitioned into k parts, the l rows on y are optimised (this side gives the diagonal).
 * MICe is the largest entry, TICe the sum of all entries (not divided by their number).
 *
 * The free axis is optimised exactly by the dynamic programme OptimizeXAxis (2011 SOM, Algorithm 2): the
 * points in the free axis' order are cut into clumps (maximal runs in one row; tied values that fall in
 * different rows form one clump of their own, so ties are never split), and when there are more than
 * ĉ = ⌊c · ⌊B/l⌋⌋ clumps they are merged into ĉ superclumps by the same equipartition applied to the clump
 * sizes. Over the (super)clumps, with f(x) = x ln x and T(s, t) = Σ_rows f(n_r) − f(N) of the column made of
 * clumps s+1..t, W(t, j) = max(W(t, j−1), max_s W(s, j−1) + T(s, t)) is the best sum over at most j columns of
 * the first t clumps, and I = (f(n) − Σ_rows f(R_r) + W(p, j)) / n is the mutual information (natural log).
 * Counts are integers; each T is accumulated incrementally from a table of f, so the values are exact up to
 * double rounding (≈1e−12).
 *
 * Exact shortcuts (the same values bit for bit as the plain programme): φ(v) = Σ f(v_r) − f(Σ v_r) ≤ 0 is
 * subadditive (N·entropy is concave and 1-homogeneous), so for s' < s a candidate W(s', j−1) + T(s', t) is at
 * most W(s, j) + T(s, t); the sweep over s stops for layer j once that bound is below the layer's best (with a
 * slack far above the rounding), which skips about 40 % of the column pairs. Equipartitions are found by
 * bisection on prefix sums, and when there are more clumps than ĉ the superclump boundaries are found by
 * looking only at the clumps next to each boundary, the row counts then summed in one pass over the levels.
 *
 * The values depend only on the order and ties of each channel. Degenerate: fewer than 2 pairs, or a channel
 * with a single value (no equipartition into 2 rows exists), → both null.
 */
import { prepare, sortByX, type Pairs, type PreparedPairs, type RankArray } from './pairs';

export interface MicOptions {
  /** exponent of the grid budget B(n) = n^α, in (0, 1] (default 0.6) */
  alpha?: number;
  /** clump factor: at most ⌊c · ⌊B/l⌋⌋ (super)clumps on the free axis, c > 0 (default 15) */
  c?: number;
}

export interface MicResult {
  micE: number | null;
  ticE: number | null;
}

export const MIC_DEFAULTS = { alpha: 0.6, c: 15 } as const;

/** Checks α and c, quoting a bad value. */
export function micOptions(o: MicOptions = {}): Required<MicOptions> {
  const alpha = o.alpha ?? MIC_DEFAULTS.alpha;
  const c = o.c ?? MIC_DEFAULTS.c;
  if (!(Number.isFinite(alpha) && alpha > 0 && alpha <= 1)) throw new RangeError(`MICe alpha must be in (0, 1], received ${String(alpha)}`);
  if (!(Number.isFinite(c) && c > 0)) throw new RangeError(`MICe c must be a positive number, received ${String(c)}`);
  return { alpha, c };
}

/**
 * Equipartition of tie groups (2011 SOM, Algorithm 3): groups of sizes `sizes` (in axis order, n items in
 * all) are assigned to at most about `rows` consecutive rows, a group never split; a group starts a new row
 * when adding it would move the row further from the target size n_left / rows_left than stopping.
 * Writes each group's row to `out` and returns the number of rows.
 */
export function equipartition(sizes: ArrayLike<number>, groups: number, n: number, rows: number, out: Int32Array): number {
  let rowsize = n / rows;
  let h = 0;
  let curr = 0;
  let i = 0;
  for (let g = 0; g < groups; g++) {
    const s = sizes[g];
    if (h !== 0 && Math.abs(h + s - rowsize) >= Math.abs(h - rowsize)) {
      curr++;
      h = 0;
      rowsize = (n - i) / (rows - curr);
    }
    out[g] = curr;
    i += s;
    h += s;
  }
  return curr + 1;
}

/**
 * The same partition as `equipartition` for the groups of sizes P[g + 1] − P[g] (P: prefix sums, P[0] = 0,
 * P[groups] = n), written as row boundaries: row r holds groups bounds[r] .. bounds[r + 1]. Returns the number
 * of rows. While h + s ≤ rowsize the test of `equipartition` cannot open a row (|h + s − rowsize| <
 * |h − rowsize| in floating point too, the two differing by s ≥ 1), so each row's end is found by bisection
 * on P and only the groups from there on are tested, exactly as `equipartition` does: O(rows · log groups).
 * (Exported for its test against `equipartition`.)
 */
export function equipartitionPrefix(P: Int32Array, groups: number, n: number, rows: number, bounds: Int32Array): number {
  let rowsize = n / rows;
  let curr = 0;
  let g = 0;
  bounds[0] = 0;
  while (g < groups) {
    const base = P[g];
    // the first group after the row's first that takes the row past rowsize
    let lo = g + 1;
    let hi = groups;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (P[mid + 1] - base > rowsize) hi = mid;
      else lo = mid + 1;
    }
    g = lo;
    for (; g < groups; g++) {
      const h = P[g] - base;
      if (Math.abs(h + (P[g + 1] - P[g]) - rowsize) >= Math.abs(h - rowsize)) break;
    }
    if (g < groups) {
      curr++;
      bounds[curr] = g;
      rowsize = (n - P[g]) / (rows - curr);
    }
  }
  bounds[curr + 1] = groups;
  return curr + 1;
}

/** Level structure of one axis: counts per distinct value (ascending) and, in that order, the other axis' levels. */
interface Axis {
  L: number;
  counts: Int32Array;
  /** items of level k are at start[k] .. start[k+1] of `other` (so start holds the prefix sums of counts) */
  start: Int32Array;
  other: RankArray;
}

/** Scratch buffers reused across the rows of one call (sized once: levels L, pairs n, rows). */
class Work {
  /** f[k] = k ln k */
  readonly f: Float64Array;
  readonly cnt: Int32Array;
  readonly touched: Int32Array;
  /** the row of each level of the equipartitioned axis */
  readonly rowOf: Int32Array;
  /** the first level of each row of the equipartitioned axis (one more entry: L) */
  readonly rowStart: Int32Array;
  /** superclump boundaries */
  readonly bounds: Int32Array;
  /** per clump: its row, or −1 − level for a mixed tie group */
  readonly label: Int32Array;
  /** per clump: its first item (prefix sums of the clump sizes; one more entry, n) */
  readonly cs: Int32Array;
  readonly off: Int32Array;
  /** clump entries: row, count, row, count, … */
  readonly rc: Int32Array;
  readonly c: Int32Array;
  readonly best: Float64Array;
  /** the layers j still open in a sweep */
  readonly act: Int32Array;
  private w = new Float64Array(0);
  constructor(n: number, L: number, maxRows: number) {
    this.f = new Float64Array(n + 1);
    for (let k = 2; k <= n; k++) this.f[k] = k * Math.log(k);
    this.cnt = new Int32Array(maxRows + 1);
    this.touched = new Int32Array(maxRows + 1);
    this.rowOf = new Int32Array(L);
    this.rowStart = new Int32Array(L + 1);
    this.bounds = new Int32Array(L + 1);
    this.label = new Int32Array(L);
    this.cs = new Int32Array(L + 1);
    this.off = new Int32Array(L + 1);
    this.rc = new Int32Array(2 * n);
    this.c = new Int32Array(L + 1);
    this.best = new Float64Array(maxRows + 2);
    this.act = new Int32Array(maxRows + 2);
  }
  /** the DP table, at least `size` long (grown when needed) */
  layers(size: number): Float64Array {
    if (this.w.length < size) this.w = new Float64Array(Math.max(size, 2 * this.w.length));
    return this.w;
  }
}

/**
 * Adds the row counts of the items a .. b−1 of `other` (ascending levels, so ascending rows) to cnt, noting
 * each row met for the first time in touched; returns the new number of touched rows. Runs of one row are
 * skipped by bisection on the row's first level (rowStart), so a level with many tied items costs about one
 * step per row it meets.
 */
function addRuns(other: RankArray, a: number, b: number, rowOf: Int32Array, rowStart: Int32Array, cnt: Int32Array, touched: Int32Array, nt: number): number {
  let i = a;
  while (i < b) {
    const r = rowOf[other[i]];
    const next = rowStart[r + 1];
    let j = i + 1;
    if (j < b && other[j] < next) {
      // the run of row r ends at the first item at or above the next row's first level
      let lo = j + 1;
      let hi = b;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (other[mid] < next) lo = mid + 1;
        else hi = mid;
      }
      j = lo;
    }
    const m = cnt[r];
    touched[nt] = r;
    nt += +(m === 0);
    cnt[r] = m + j - i;
    i = j;
  }
  return nt;
}

/**
 * The (super)clumps of the free axis for the rows w.rowOf of the levels of the equipartitioned axis: returns
 * their number p and fills w.off/rc (clump g's sparse (row, count) entries at off[g] .. off[g+1]) and w.c
 * (c[g]: the items before clump g).
 */
function clumps(free: Axis, n: number, cap: number, w: Work): number {
  const { L, start, other } = free;
  const { rowOf, rowStart, label, cs, bounds, cnt, touched, off, rc, c } = w;
  // clumps in free-axis order: consecutive levels whose items all lie in one row merge (label = that row);
  // a level whose tied items lie in different rows is a clump of its own (label −1 − level). The items of a
  // level are in ascending order of the other axis, so its first and last item tell whether it lies in one
  // row. (Branch-free: the slot p is written every time and kept, p + 1, only when a clump starts.)
  let p = 0;
  let prev = -1;
  let b = start[0];
  for (let k = 0; k < L; k++) {
    const a = b;
    b = start[k + 1];
    const r0 = rowOf[other[a]];
    const lab = r0 === rowOf[other[b - 1]] ? r0 : -1 - k;
    label[p] = lab;
    cs[p] = a;
    p += +(lab !== prev) | +(lab < 0);
    prev = lab;
  }
  cs[p] = n;
  // superclumps: the clumps equipartitioned by size into at most about `cap` groups
  const grouped = p > cap;
  const groups = grouped ? equipartitionPrefix(cs, p, n, cap, bounds) : p;
  // sparse (row, count) entries per group (the clumps of a group are consecutive), rows in order of first
  // appearance
  let e = 0;
  for (let g = 0; g < groups; g++) {
    off[g] = e;
    const j0 = grouped ? bounds[g] : g;
    const j1 = grouped ? bounds[g + 1] : g + 1;
    c[g] = cs[j0];
    if (j1 === j0 + 1 && label[j0] >= 0) {
      rc[2 * e] = label[j0];
      rc[2 * e + 1] = cs[j1] - cs[j0];
      e++;
      continue;
    }
    let nt = 0;
    for (let j = j0; j < j1; j++) {
      const lab = label[j];
      if (lab >= 0) {
        // (branch-free: the row is written to touched[nt] every time and kept when it is new)
        const m = cnt[lab];
        touched[nt] = lab;
        nt += +(m === 0);
        cnt[lab] = m + cs[j + 1] - cs[j];
      } else nt = addRuns(other, cs[j], cs[j + 1], rowOf, rowStart, cnt, touched, nt);
    }
    for (let u = 0; u < nt; u++) {
      const r = touched[u];
      rc[2 * e] = r;
      rc[2 * e + 1] = cnt[r];
      e++;
      cnt[r] = 0;
    }
  }
  off[groups] = e;
  c[groups] = n;
  return groups;
}

/** The row of level k of the free axis when all its items lie in one row, else −1 − k. */
function levelLabel(other: RankArray, start: Int32Array, rowOf: Int32Array, k: number): number {
  const r0 = rowOf[other[start[k]]];
  return r0 === rowOf[other[start[k + 1] - 1]] ? r0 : -1 - k;
}

/** The level after the last of the clump that starts at level k. */
function clumpEnd(other: RankArray, start: Int32Array, rowOf: Int32Array, L: number, k: number): number {
  const lab = levelLabel(other, start, rowOf, k);
  let e = k + 1;
  if (lab >= 0) while (e < L && levelLabel(other, start, rowOf, e) === lab) e++;
  return e;
}

/**
 * The superclumps when there are more than `cap` clumps, as `clumps` computes them, without listing the
 * clumps: the boundaries of the equipartition of the clump sizes (`equipartitionPrefix`) are found by
 * looking only at the clumps near each boundary (the clump holding the item where the running size passes
 * rowsize, and the one after it), and the row counts of every superclump are then summed in one pass over
 * the levels, which also counts the clumps. Returns the number of superclumps, or −1 when there are at most
 * `cap` clumps (no grouping; `clumps` then does the work).
 */
function superclumps(free: Axis, n: number, cap: number, w: Work): number {
  const { L, start, other } = free;
  const { rowOf, rowStart, bounds: gk, cnt, touched, off, rc, c } = w;
  let rowsize = n / cap;
  let curr = 0;
  gk[0] = 0;
  let k0 = 0;
  for (;;) {
    const base = start[k0];
    const first = clumpEnd(other, start, rowOf, L, k0);
    // the first clump after the group's first one whose end passes base + rowsize holds item m
    const m = base + Math.floor(rowsize);
    if (m >= n || first >= L) break;
    let kj = first;
    if (m >= start[first]) {
      let lo = first;
      let hi = L - 1;
      while (lo < hi) {
        const mid = (lo + hi + 1) >> 1;
        if (start[mid] <= m) lo = mid;
        else hi = mid - 1;
      }
      kj = lo;
      const lab = levelLabel(other, start, rowOf, kj);
      if (lab >= 0) while (kj > first && levelLabel(other, start, rowOf, kj - 1) === lab) kj--;
    }
    // from there, the test of `equipartition`, clump by clump
    let stop = false;
    while (kj < L) {
      const ke = clumpEnd(other, start, rowOf, L, kj);
      const h = start[kj] - base;
      if (Math.abs(h + (start[ke] - start[kj]) - rowsize) >= Math.abs(h - rowsize)) {
        stop = true;
        break;
      }
      kj = ke;
    }
    if (!stop) break;
    curr++;
    gk[curr] = kj;
    rowsize = (n - start[kj]) / (cap - curr);
    k0 = kj;
  }
  const groups = curr + 1;
  gk[groups] = L;
  // row counts per superclump (rows in order of first appearance) and the number of clumps
  let p = 0;
  let prev = -1;
  let e = 0;
  for (let g = 0; g < groups; g++) {
    off[g] = e;
    c[g] = start[gk[g]];
    let nt = 0;
    let b = start[gk[g]];
    for (let k = gk[g], k1 = gk[g + 1]; k < k1; k++) {
      const a = b;
      b = start[k + 1];
      const r0 = rowOf[other[a]];
      if (r0 === rowOf[other[b - 1]]) {
        // (branch-free: the row is written to touched[nt] every time and kept when it is new)
        const m = cnt[r0];
        touched[nt] = r0;
        nt += +(m === 0);
        cnt[r0] = m + b - a;
        p += +(r0 !== prev);
        prev = r0;
      } else {
        nt = addRuns(other, a, b, rowOf, rowStart, cnt, touched, nt);
        p++;
        prev = -1;
      }
    }
    for (let u = 0; u < nt; u++) {
      const r = touched[u];
      rc[2 * e] = r;
      rc[2 * e + 1] = cnt[r];
      e++;
      cnt[r] = 0;
    }
  }
  off[groups] = e;
  c[groups] = n;
  return p > cap ? groups : -1;
}

/**
 * OptimizeXAxis: for j = 2..maxCols, the largest mutual information (nats) of grids with the given rows and
 * at most j columns made of consecutive (super)clumps; written to out[j − 2].
 *
 * For each t, the last column (clumps s+1..t) is grown one clump at a time as s goes down, so T(s, t) costs
 * the clump's few row counts, and every layer j takes its candidate W(s, j − 1) + T(s, t) at once
 * (W is stored t-major: the layers of one t are adjacent). Layer j leaves the sweep once
 * W(s, j) + T(s, t) (a bound on every candidate still to come, see the module comment) is below its best;
 * the higher layers leave first, and once layer 2 is alone the sweep goes on in a tighter loop.
 */
function optimizeAxis(p: number, rowTotals: Int32Array, q: number, n: number, maxCols: number, w: Work, out: Float64Array) {
  const { f, cnt, off, rc, c, best } = w;
  let hq = f[n];
  for (let r = 0; r < q; r++) hq -= f[rowTotals[r]];
  if (p === 1) {
    out.fill(0, 0, maxCols - 1);
    return;
  }
  const J = maxCols;
  // slack for rounding in the bound below: far above the accumulated rounding of sums of f (≤ f(n)·1e−12),
  // so a candidate is skipped only when it could not have won, and the values stay bit for bit
  const margin = 1e-9 * f[n];
  // W[t * J + (j − 1)], j = 1..J−1: best sum of T over at most j columns of the first t clumps (t < p)
  const W = w.layers((p + 1) * J);
  // W(t, 1) = T(0, t) (the first t clumps as one column), in one forward pass (c[t]: items of clumps 1..t)
  let S0 = 0;
  for (let t = 1; t <= p; t++) {
    for (let e = 2 * off[t - 1], e1 = 2 * off[t]; e < e1; e += 2) {
      const r = rc[e];
      const k = rc[e + 1];
      const a0 = cnt[r];
      S0 += f[a0 + k] - f[a0];
      cnt[r] = a0 + k;
    }
    W[t * J] = S0 - f[c[t]];
  }
  cnt.fill(0, 0, q);
  // one clump: every layer equals one column
  for (let j = 2; j < J; j++) W[J + j - 1] = W[J];
  // for t = p every layer up to J is needed; for t < p, layers 2..J−1 (none when J = 2)
  for (let t = J > 2 ? 2 : p; t <= p; t++) {
    const top = t === p ? J : J - 1;
    const wt = t * J;
    // the sweep: s = t−1 … 1, column = clumps s+1..t grown one clump at a time
    let S = 0;
    const ct = c[t];
    for (let j = 2; j <= top; j++) best[j] = -Infinity;
    // layers 2..open are still open (the higher layers' last columns are shorter, so they close first)
    let open = top;
    let s = t - 1;
    // the lowest s swept
    let low = t;
    while (open >= 3 && s >= 1) {
      let e = 2 * off[s];
      const e1 = 2 * off[s + 1];
      let r = rc[e];
      let a0 = cnt[r];
      let b0 = a0 + rc[e + 1];
      let d = f[b0] - f[a0];
      cnt[r] = b0;
      for (e += 2; e < e1; e += 2) {
        r = rc[e];
        a0 = cnt[r];
        b0 = a0 + rc[e + 1];
        d += f[b0] - f[a0];
        cnt[r] = b0;
      }
      S += d;
      const T = S - f[ct - c[s]];
      const ws = s * J - 1;
      for (let j = 2; j <= open; j++) {
        const v = W[ws + j - 1] + T;
        if (v > best[j]) best[j] = v;
      }
      // every s' < s gives layer j at most W(s, j) + T(s, t) (W ≤ 0 stands in for the unstored layer J)
      while (open >= 2 && (open < J ? W[ws + open] : 0) + T + margin < best[open]) open--;
      low = s;
      s--;
    }
    if (open === 2) {
      // layer 2 alone from here on: the same sweep with its best value held in a local
      let b2 = best[2];
      const stored = J > 2;
      while (s >= 1) {
        let e = 2 * off[s];
        const e1 = 2 * off[s + 1];
        let r = rc[e];
        let a0 = cnt[r];
        let b0 = a0 + rc[e + 1];
        let d = f[b0] - f[a0];
        cnt[r] = b0;
        for (e += 2; e < e1; e += 2) {
          r = rc[e];
          a0 = cnt[r];
          b0 = a0 + rc[e + 1];
          d += f[b0] - f[a0];
          cnt[r] = b0;
        }
        S += d;
        const T = S - f[ct - c[s]];
        const ws = s * J;
        const v = W[ws] + T;
        if (v > b2) b2 = v;
        low = s;
        s--;
        if ((stored ? W[ws + 1] : 0) + T + margin < b2) break;
      }
      best[2] = b2;
    }
    // clear the counts of clumps low..t−1 (or all q rows when that is less)
    const e0 = 2 * off[low], e1 = 2 * off[t];
    if (e1 - e0 > 2 * q) cnt.fill(0, 0, q);
    else for (let e = e0; e < e1; e += 2) cnt[rc[e]] = 0;
    let prev = W[wt];
    for (let j = 2; j <= top; j++) {
      const v = best[j] > prev ? best[j] : prev;
      if (j < J) W[wt + j - 1] = v;
      prev = v;
      if (t === p) out[j - 2] = (hq + v) / n;
    }
  }
}

/**
 * The rows of an equipartition of `eq` into l rows: w.rowOf (per level of `eq`), w.rowStart, their totals,
 * and the number of rows.
 */
function rowsOf(eq: Axis, n: number, l: number, w: Work, totals: Int32Array): number {
  const { rowOf, rowStart } = w;
  const q = equipartitionPrefix(eq.start, eq.L, n, l, rowStart);
  for (let r = 0; r < q; r++) {
    rowOf.fill(r, rowStart[r], rowStart[r + 1]);
    totals[r] = eq.start[rowStart[r + 1]] - eq.start[rowStart[r]];
  }
  return q;
}

/**
 * MICe and TICe of the pairs (α = 0.6, c = 15 unless given).
 * @throws RangeError for α outside (0, 1] or c ≤ 0 (quoting the value)
 */
export function mic(pairs: Pairs | PreparedPairs, options: MicOptions = {}): MicResult {
  const { alpha, c } = micOptions(options);
  const p = prepare(pairs);
  const n = p.n;
  if (n < 2) return { micE: null, ticE: null };
  const lx = p.levelsX;
  const ly = p.levelsY;
  if (lx.L < 2 || ly.L < 2) return { micE: null, ticE: null };
  const sx = p.sortedByX;
  const sy = sortByX(ly, lx);
  const X: Axis = { L: lx.L, counts: lx.counts, start: sx.start, other: sx.yRank };
  const Y: Axis = { L: ly.L, counts: ly.counts, start: sy.start, other: sy.yRank };
  const B = Math.max(Math.pow(n, alpha), 4);
  const nRows = Math.max(Math.floor(B / 2), 2) - 1;
  const w = new Work(n, Math.max(lx.L, ly.L), nRows + 2);
  // M[a][b]: y in a + 2 bins, x in b + 2 bins, b < floor(B / (a + 2)) − 1
  const M: Float64Array[] = [];
  for (let a = 0; a < nRows; a++) M.push(new Float64Array(Math.floor(B / (a + 2)) - 1));
  const scores = new Float64Array(nRows + 1);
  const totals = new Int32Array(nRows + 2);
  for (const side of [0, 1] as const) {
    const eq = side === 0 ? Y : X;
    const free = side === 0 ? X : Y;
    for (let i = 0; i < nRows; i++) {
      const l = i + 2;
      const m = M[i].length;
      // side 0 stops below the diagonal k = l: that entry comes from side 1 (x equipartitioned)
      const maxCols = Math.min(side === 0 ? l - 1 : l, m + 1);
      if (maxCols < 2) continue;
      const cap = Math.max(Math.trunc(c * (m + 1)), 1);
      const q = rowsOf(eq, n, l, w, totals);
      let pc = free.L > cap ? superclumps(free, n, cap, w) : -1;
      if (pc < 0) pc = clumps(free, n, cap, w);
      optimizeAxis(pc, totals, q, n, maxCols, w, scores);
      const lq = Math.log(q);
      for (let j = 2; j <= maxCols; j++) {
        const v = scores[j - 2] / Math.min(Math.log(j), lq);
        // side 0: y has l rows, x has j columns (j ≤ l); side 1: x has l parts, y has j (j ≤ l), the diagonal's source
        if (side === 0) M[i][j - 2] = v;
        else M[j - 2][i] = v;
      }
    }
  }
  let best = -Infinity;
  let sum = 0;
  for (const row of M)
    for (let b = 0; b < row.length; b++) {
      if (row[b] > best) best = row[b];
      sum += row[b];
    }
  return { micE: best, ticE: sum };
}
