/**
 * Spearman's rank correlation ρ (Spearman 1904, Am. J. Psychol. 15:72, doi:10.2307/1412159): Pearson's r
 * of the average ranks (mid-ranks for ties), which is what SciPy's `spearmanr` computes.
 *
 * O(n + L): the average rank of every level comes from the level counts (pairs.ts); doubled and centred,
 * each rank becomes the integer 2·start + count − n, so the centred rank sums are integer sums.
 *
 * Degenerate cases: n < 2 or a constant channel → null.
 */
import type { LevelIndex } from './pairs';
import { prepare, type Pairs, type PreparedPairs } from './pairs';

/** doubled, centred average rank of each level: 2·(avgRank − (n+1)/2) */
export function centredRanks(li: LevelIndex, n: number): Float64Array {
  const d = new Float64Array(li.L);
  let start = 0;
  for (let k = 0; k < li.L; k++) {
    d[k] = 2 * start + li.counts[k] - n;
    start += li.counts[k];
  }
  return d;
}

export function spearman(pairs: Pairs | PreparedPairs): number | null {
  const p = prepare(pairs);
  const n = p.n;
  if (n < 2) return null;
  const lx = p.levelsX, ly = p.levelsY;
  if (lx.L < 2 || ly.L < 2) return null;
  const dx = centredRanks(lx, n), dy = centredRanks(ly, n);
  let sxx = 0, cxx = 0, syy = 0, cyy = 0;
  for (let k = 0; k < lx.L; k++) {
    const v = lx.counts[k] * dx[k] * dx[k];
    const t = sxx + v;
    if (sxx >= v) cxx += sxx - t + v; else cxx += v - t + sxx;
    sxx = t;
  }
  for (let k = 0; k < ly.L; k++) {
    const v = ly.counts[k] * dy[k] * dy[k];
    const t = syy + v;
    if (syy >= v) cyy += syy - t + v; else cyy += v - t + syy;
    syy = t;
  }
  // Σ dx·dy: from the pair sweep when it ran (sweep.ts, per x group), else one pass over the items
  let sum: number;
  if (p.sweep) sum = p.sweep.spearman;
  else {
    const rx = lx.rank, ry = ly.rank;
    let s = 0, c = 0;
    for (let i = 0; i < n; i++) {
      const v = dx[rx[i]] * dy[ry[i]];
      const t = s + v;
      if (Math.abs(s) >= Math.abs(v)) c += s - t + v; else c += v - t + s;
      s = t;
    }
    sum = s + c;
  }
  const r = sum / Math.sqrt((sxx + cxx) * (syy + cyy));
  return r > 1 ? 1 : r < -1 ? -1 : r;
}
