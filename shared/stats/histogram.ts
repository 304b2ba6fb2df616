/**
 * Fixed-edge histograms for comparing distributions between conditions, and (re-exported from
 * shared/analysis/distances.ts) the chi-squared histogram distance and the 1-D Earth Mover's distance
 * (Rubner, Tomasi & Guibas 2000, Int. J. Comput. Vis. 40:99, doi:10.1023/A:1026543900054).
 */
export interface Histogram {
  /** bin edges, length bins + 1; bin i is [edges[i], edges[i+1]), the last bin closed */
  edges: number[];
  counts: number[];
}

/** Equal-width edges spanning [lo, hi]. A zero-width range is widened by ±0.5. */
export function equalEdges(lo: number, hi: number, bins: number): number[] {
  if (!(Number.isFinite(lo) && Number.isFinite(hi))) throw new RangeError(`histogram range must be finite, received [${lo}, ${hi}]`);
  if (!(Number.isInteger(bins) && bins >= 1 && bins <= 10000)) throw new RangeError(`bins must be an integer in [1, 10000], received ${bins}`);
  if (hi < lo) [lo, hi] = [hi, lo];
  if (hi === lo) {
    lo -= 0.5;
    hi += 0.5;
  }
  const w = (hi - lo) / bins;
  return Array.from({ length: bins + 1 }, (_, i) => (i === bins ? hi : lo + i * w));
}

/** Counts of finite values in equal-width bins; values outside the edges are ignored. */
export function histogram(values: ArrayLike<number>, edges: number[]): Histogram {
  const bins = edges.length - 1;
  const counts = new Array<number>(bins).fill(0);
  const lo = edges[0];
  const hi = edges[bins];
  const w = (hi - lo) / bins;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isFinite(v) || v < lo || v > hi) continue;
    let b = Math.floor((v - lo) / w);
    if (b >= bins) b = bins - 1;
    counts[b]++;
  }
  return { edges, counts };
}

/**
 * The distances are the engine's (shared/analysis/distances.ts), so the product has one definition: chi-squared
 * Σ (p − q)²/(p + q) over normalized counts (range [0, 2]) and the 1-D EMD (L1 between cumulative histograms
 * times the bin width); null when either histogram is empty.
 */
export { chiSquaredDistance, earthMoversDistance1d as earthMoversDistance } from '../analysis/distances';
export { quadraticChiDistance, triangleSimilarity } from '../analysis/quadratic-chi';

/**
 * The quadratic-chi members Compare and reports give beside χ² and EMD (Pele & Werman 2010): the bin
 * similarity A_ij = max(0, 1 − |i − j| / 2) (a neighbouring bin counts half as similar, bins further apart not
 * at all; our choice) with m = 0.5 ("QCS") and m = 0.9 ("QCN").
 */
export const QUADRATIC_CHI = { similarityBins: 2, mS: 0.5, mN: 0.9 } as const;
