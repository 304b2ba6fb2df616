/**
 * Kendall's τ-b with the tie correction of Kendall (1945), "The treatment of ties in ranking problems",
 * Biometrika 33:239, doi:10.1093/biomet/33.3.239:
 *   τ-b = (C − D) / √((n0 − n1)(n0 − n2)), n0 = n(n−1)/2, n1 = Σ t(t−1)/2 over x ties, n2 likewise for y.
 *
 * Exact, O(n log L) for n pairs and L distinct y values: items are visited in x order by a counting sort
 * over x then y levels (pairs.ts, equal pairs taken together as one run); a Fenwick tree (Fenwick 1994, doi:10.1002/spe.4380240306) over y levels counts
 * the earlier items below y; a whole group of equal x is queried before it is inserted, so x ties are
 * neither concordant nor discordant. Same idea as Knight (1966), J. Am. Stat. Assoc. 61:436,
 * doi:10.1080/01621459.1966.10480879, with the merge sort replaced by counting. Every count is an integer
 * below 2^53, so C − D is exact.
 *
 * Degenerate cases: n < 2 or a constant channel → null.
 */
import { FenwickCount } from './numeric';
import { prepare, type Pairs, type PreparedPairs, type LevelIndex } from './pairs';

function tiedPairs(li: LevelIndex): number {
  let s = 0;
  for (let k = 0; k < li.L; k++) {
    const t = li.counts[k];
    s += (t * (t - 1)) / 2;
  }
  return s;
}

/** C − D over all pairs (exact integer). Cached on the prepared pairs (the dCor sweep also fills it). */
export function kendallS(pairs: Pairs | PreparedPairs): number {
  const p = prepare(pairs);
  if (p.kendallS !== undefined) return p.kendallS;
  const ly = p.levelsY;
  const { start, yRank } = p.sortedByX;
  const size = ly.L;
  const tree = new FenwickCount(size).tree;
  const eqCount = new Int32Array(size);
  let S = 0;
  let inserted = 0;
  const Lx = start.length - 1;
  for (let g = 0; g < Lx; g++) {
    const a = start[g], b = start[g + 1];
    let groupS = 0;
    // y levels ascend within the group (pairs.ts): a run of equal y is one query and one insert
    for (let q = a; q < b; ) {
      const r = yRank[q];
      let e = q + 1;
      while (e < b && yRank[e] === r) e++;
      let less = 0;
      for (let k = r; k > 0; k -= k & -k) less += tree[k];
      groupS += (e - q) * (2 * less + eqCount[r] - inserted);
      q = e;
    }
    for (let q = a; q < b; ) {
      const r = yRank[q];
      let e = q + 1;
      while (e < b && yRank[e] === r) e++;
      const m = e - q;
      for (let k = r + 1; k <= size; k += k & -k) tree[k] += m;
      eqCount[r] += m;
      q = e;
    }
    inserted += b - a;
    S += groupS;
  }
  p.kendallS = S;
  return S;
}

/** Kendall's τ-b; null for n < 2 or a constant channel. */
export function kendallTauB(pairs: Pairs | PreparedPairs): number | null {
  const p = prepare(pairs);
  const n = p.n;
  if (n < 2) return null;
  const n0 = (n * (n - 1)) / 2;
  const n1 = tiedPairs(p.levelsX);
  const n2 = tiedPairs(p.levelsY);
  if (n0 - n1 <= 0 || n0 - n2 <= 0) return null;
  const S = kendallS(p);
  const t = S / (Math.sqrt(n0 - n1) * Math.sqrt(n0 - n2));
  return t > 1 ? 1 : t < -1 ? -1 : t;
}
