/**
 * The one pair sweep behind Kendall's τ-b (its C − D), distance correlation (its cross terms) and Spearman's
 * ρ (its rank product sum), split into y slabs so that it runs cache-resident and in parallel, exactly.
 *
 * The sweep of Huo & Székely (2016), "Fast computing for distance covariance", Technometrics 58:435,
 * doi:10.1080/00401706.2015.1054435 (and the counting of Knight 1966, J. Am. Stat. Assoc. 61:436,
 * doi:10.1080/01621459.1966.10480879) visits the items in x order, a whole x group at a time, with a Fenwick
 * tree (Fenwick 1994, Softw. Pract. Exper. 24:327, doi:10.1002/spe.4380240306) over the y levels carrying
 * count, Σu, Σw, Σuw of the items seen (u, w the centred values). One tree over all y levels outgrows the
 * processor's cache on large images, so the y levels are cut into slabs (at most SLAB_LEVELS levels and about
 * an eighth of the items each; one slab below SLAB_MIN_PAIRS pairs, where the tree is small and one slab
 * gives the values of the single-tree sweep bit for bit) and each earlier item j of an item i is
 * counted where it lies:
 * - j in the same slab: by that slab's own sweep (`slabPartial`, a tree over the slab's levels only; the
 *   slabs are independent, so they can run on different threads);
 * - j in a lower (resp. upper) slab: j is below (resp. above) i in y for certain, so only the totals of
 *   the lower and upper slabs over the earlier x groups matter. `planSweep` collects them in one sequential
 *   pass over the items with a tiny tree over the slabs, together with the per-group sums of the other
 *   pieces (S2 = Σ_i a_i·b_i· of dCor, Σ rank products of ρ), which need no tree at all.
 * `mergeSweep` adds the slab partials to that pass in slab order. The slabs depend only on the data, so the
 * result is the same (bit for bit) however the slabs are shared out over threads: counts are exact integers;
 * the float sums are compensated (Neumaier 1974, Z. Angew. Math. Mech. 54:39, doi:10.1002/zamm.19740540106)
 * within each slab and then across slabs in a fixed order.
 *
 * Pure TypeScript on typed arrays; the slab input is plain typed arrays, so it can be copied or shared
 * with other threads by the caller.
 */
import type { PreparedPairs, RankArray } from './pairs';

/** At most this many y levels per slab (its tree, 32 bytes per level, stays within a core's cache). */
export const SLAB_LEVELS = 4096;
/** Below this many pairs the sweep is one slab. */
export const SLAB_MIN_PAIRS = 1 << 20;

/** What one slab's sweep reads: typed arrays only (copyable to, or shareable with, another thread). */
export interface SweepInput {
  /** the distinct pairs of x level g are positions start[g] .. start[g+1] (pairs.ts DistinctPairs) */
  start: Int32Array;
  /** y level of each distinct pair in (x, y) order, and how many items it stands for */
  yRank: RankArray;
  mult: Int32Array;
  /** slab s holds the y levels cut[s] .. cut[s+1] − 1 */
  cut: Int32Array;
  /** centred value of each x level, of each y level */
  ux: Float64Array;
  uy: Float64Array;
}

/** One slab's share: C − D and Σ (u_i − u_j)|w_i − w_j| over its pairs of items (j before i in x order). */
export interface SlabPartial {
  kendall: number;
  s1: number;
}

/** The per-level quantities the sweep sums: dCor's centred values and row sums, ρ's centred ranks. */
export interface SweepLevels {
  ux: Float64Array;
  uy: Float64Array;
  /** row sums a_k·, b_k· of each level (dcor.ts) */
  ra: Float64Array;
  rb: Float64Array;
  /** doubled, centred average ranks of each level (spearman.ts) */
  dx: Float64Array;
  dy: Float64Array;
}

export interface SweepPlan {
  input: SweepInput;
  /** number of slabs */
  slabs: number;
  /** items in each slab (for sharing the slabs out evenly) */
  slabItems: Float64Array;
  /** the pairs of items in different slabs: C − D and the Σ (u_i − u_j)|w_i − w_j| share */
  crossKendall: number;
  crossS1: number;
  /** Σ_i a_i· b_i· */
  s2: number;
  /** Σ_i dx_i dy_i (doubled centred ranks) */
  spearman: number;
}

/** The finished sweep: Kendall's C − D, dCor's S1 = Σ_ij |x_i − x_j||y_i − y_j| and S2, ρ's rank product sum. */
export interface PairSweep {
  kendallS: number;
  s1: number;
  s2: number;
  spearman: number;
}

/** How the y levels are cut (tests use small slabs to exercise the cross-slab shares on small data). */
export interface SlabOptions {
  /** at most this many levels per slab (SLAB_LEVELS) */
  levels?: number;
  /** one slab below this many pairs (SLAB_MIN_PAIRS) */
  minPairs?: number;
}

/** Slab boundaries over y levels with the given counts (n items in all). */
export function slabCuts(counts: Int32Array, n: number, options: SlabOptions = {}): Int32Array {
  const L = counts.length;
  const maxLevels = options.levels ?? SLAB_LEVELS;
  if (n < (options.minPairs ?? SLAB_MIN_PAIRS) || L <= 1) return Int32Array.of(0, L);
  const maxItems = Math.ceil(n / 8);
  const cuts = [0];
  let items = 0, levels = 0;
  for (let k = 0; k < L; k++) {
    if (levels >= maxLevels || (items > 0 && items + counts[k] > maxItems)) {
      cuts.push(k);
      items = 0;
      levels = 0;
    }
    items += counts[k];
    levels++;
  }
  cuts.push(L);
  return Int32Array.from(cuts);
}

function addTo(acc: Float64Array, i: number, v: number): void {
  const s = acc[i];
  const t = s + v;
  if (Math.abs(s) >= Math.abs(v)) acc[i + 1] += s - t + v;
  else acc[i + 1] += v - t + s;
  acc[i] = t;
}

/**
 * The sequential pass: slab cuts, the cross-slab shares, S2 and the rank product sum. O(n + Lx·log S).
 */
export function planSweep(p: PreparedPairs, lv: SweepLevels, options: SlabOptions = {}): SweepPlan {
  const { start, yRank, mult } = p.distinctByX;
  const { ux, uy, ra, rb, dx, dy } = lv;
  const cut = slabCuts(p.levelsY.counts, p.n, options);
  const S = cut.length - 1;
  const Lx = start.length - 1;
  // per slab: items and Σw of this group's segment; totals of the groups seen (point values, a Fenwick
  // tree over the slabs for the lower-slab sums, and the grand total): count, Σu, Σw, Σuw
  const segM = new Float64Array(S), segW = new Float64Array(S);
  const touched = new Int32Array(S);
  const point = new Float64Array(4 * S);
  const tree = new Float64Array(4 * (S + 1));
  let tc = 0, tsx = 0, tsy = 0, tsxy = 0;
  const slabItems = new Float64Array(S);
  let kendall = 0;
  const acc = new Float64Array(6); // [s, c] for the cross share, S2, the rank products
  for (let g = 0; g < Lx; g++) {
    const a = start[g], b = start[g + 1];
    let gB = 0, gD = 0;
    let nt = 0;
    let s = 0;
    let next = cut[1];
    // y levels ascend within the group (pairs.ts), each distinct pair once with its multiplicity
    for (let q = a; q < b; q++) {
      const r = yRank[q];
      const m = mult[q];
      gB += m * rb[r];
      gD += m * dy[r];
      if (S > 1) {
        if (r >= next) {
          while (r >= cut[s + 1]) s++;
          next = cut[s + 1];
        }
        if (segM[s] === 0) touched[nt++] = s;
        segM[s] += m;
        segW[s] += m * uy[r];
      }
    }
    addTo(acc, 2, ra[g] * gB);
    addTo(acc, 4, dx[g] * gD);
    if (S === 1) continue;
    const u = ux[g];
    for (let k = 0; k < nt; k++) {
      const sl = touched[k];
      const M = segM[sl], W = segW[sl];
      // sums over the lower slabs (earlier groups): prefix of the slab tree
      let lc = 0, lsx = 0, lsy = 0, lsxy = 0;
      for (let i = sl; i > 0; i -= i & -i) {
        const o = i << 2;
        lc += tree[o];
        lsx += tree[o + 1];
        lsy += tree[o + 2];
        lsxy += tree[o + 3];
      }
      const o = sl << 2;
      const uc = tc - lc - point[o], usx = tsx - lsx - point[o + 1], usy = tsy - lsy - point[o + 2], usxy = tsxy - lsxy - point[o + 3];
      kendall += M * (lc - uc);
      // Σ over the segment's items i and the earlier items j below (+) or above (−): (u − u_j)(w_i − w_j)
      const below = u * W * lc - u * M * lsy - W * lsx + M * lsxy;
      const above = u * W * uc - u * M * usy - W * usx + M * usxy;
      addTo(acc, 0, below - above);
    }
    for (let k = 0; k < nt; k++) {
      const sl = touched[k];
      const M = segM[sl], W = segW[sl], uM = u * M, uW = u * W;
      const o = sl << 2;
      point[o] += M;
      point[o + 1] += uM;
      point[o + 2] += W;
      point[o + 3] += uW;
      for (let i = sl + 1; i <= S; i += i & -i) {
        const t = i << 2;
        tree[t] += M;
        tree[t + 1] += uM;
        tree[t + 2] += W;
        tree[t + 3] += uW;
      }
      tc += M;
      tsx += uM;
      tsy += W;
      tsxy += uW;
      slabItems[sl] += M;
      segM[sl] = 0;
      segW[sl] = 0;
    }
  }
  if (S === 1) slabItems[0] = p.n;
  return {
    input: { start, yRank, mult, cut, ux, uy },
    slabs: S,
    slabItems,
    crossKendall: kendall,
    crossS1: acc[0] + acc[1],
    s2: acc[2] + acc[3],
    spearman: acc[4] + acc[5],
  };
}

/** first position q in [a, b) with yRank[q] ≥ v (yRank ascends there) */
function lowerBound(yRank: RankArray, a: number, b: number, v: number): number {
  while (a < b) {
    const mid = (a + b) >>> 1;
    if (yRank[mid] < v) a = mid + 1;
    else b = mid;
  }
  return a;
}

/**
 * One slab's sweep over the pairs of items both in it: a whole x group at a time, queries before inserts
 * (pairs within a group have x_i − x_j = 0 and add nothing; x ties are neither concordant nor discordant).
 */
export function slabPartial(input: SweepInput, s: number): SlabPartial {
  const { start, yRank, mult, cut, ux, uy } = input;
  const lo = cut[s], hi = cut[s + 1];
  const whole = cut.length === 2;
  const size = hi - lo;
  const t = new Float64Array((size + 1) * 4);
  const eqCount = new Int32Array(size);
  let C = 0, SX = 0, SY = 0, SXY = 0;
  let acc = 0, accC = 0;
  let S = 0;
  const Lx = start.length - 1;
  for (let g = 0; g < Lx; g++) {
    let a = start[g], b = start[g + 1];
    if (!whole) {
      if (a === b || yRank[b - 1] < lo || yRank[a] >= hi) continue;
      if (yRank[a] < lo) a = lowerBound(yRank, a, b, lo);
      if (yRank[b - 1] >= hi) b = lowerBound(yRank, a, b, hi);
    }
    const u = ux[g];
    let gS = 0;
    let gV = 0; // this group's share (every term is ≥ 0: plain sum, then compensated across groups)
    let gC = 0; // items of the group in this slab
    for (let q = a; q < b; q++) {
      const r = yRank[q];
      const m = mult[q];
      gC += m;
      const w = uy[r];
      const rl = r - lo;
      let c = 0, sx = 0, sy = 0, sxy = 0;
      for (let k = rl; k > 0; k -= k & -k) {
        const o = k << 2;
        c += t[o];
        sx += t[o + 1];
        sy += t[o + 2];
        sxy += t[o + 3];
      }
      gS += m * (2 * c + eqCount[rl] - C);
      // Σ_{j seen} (u − u_j)|w − w_j| = Σ_below (u−u_j)(w−w_j) − Σ_rest (u−u_j)(w−w_j)
      gV += m * ((2 * c - C) * u * w - u * (2 * sy - SY) - w * (2 * sx - SX) + (2 * sxy - SXY));
    }
    const tt = acc + gV;
    if (Math.abs(acc) >= Math.abs(gV)) accC += acc - tt + gV; else accC += gV - tt + acc;
    acc = tt;
    for (let q = a; q < b; q++) {
      const r = yRank[q];
      const m = mult[q];
      const w = uy[r];
      const rl = r - lo;
      const mu = m * u, mw = m * w, muw = m * (u * w);
      for (let k = rl + 1; k <= size; k += k & -k) {
        const o = k << 2;
        t[o] += m;
        t[o + 1] += mu;
        t[o + 2] += mw;
        t[o + 3] += muw;
      }
      eqCount[rl] += m;
      SY += mw;
      SXY += muw;
    }
    C += gC;
    SX += u * gC;
    S += gS;
  }
  return { kendall: S, s1: acc + accC };
}

/** The plan plus every slab's partial, added in slab order (exact counts; compensated float sums). */
export function mergeSweep(plan: SweepPlan, partials: readonly SlabPartial[]): PairSweep {
  if (partials.length !== plan.slabs) throw new RangeError(`the sweep has ${plan.slabs} slabs, received ${partials.length} partial results`);
  let kendall = plan.crossKendall;
  const acc = new Float64Array(2);
  addTo(acc, 0, plan.crossS1);
  for (const q of partials) {
    kendall += q.kendall;
    addTo(acc, 0, q.s1);
  }
  return { kendallS: kendall, s1: 2 * (acc[0] + acc[1]), s2: plan.s2, spearman: plan.spearman };
}

/** The whole sweep on this thread. */
export function pairSweep(p: PreparedPairs, lv: SweepLevels, options: SlabOptions = {}): PairSweep {
  const plan = planSweep(p, lv, options);
  const partials: SlabPartial[] = [];
  for (let s = 0; s < plan.slabs; s++) partials.push(slabPartial(plan.input, s));
  return mergeSweep(plan, partials);
}
