/**
 * Fixed-edge histograms for comparing distributions between conditions, and the two distances the product
 * reports: the chi-squared histogram distance ½ Σ (pᵢ − qᵢ)² / (pᵢ + qᵢ) over normalized histograms
 * (bins where both are empty are skipped; Rubner, Tomasi & Guibas 2000, Int. J. Comput. Vis. 40:99,
 * doi:10.1023/A:1026543900054, section on bin-by-bin dissimilarities) and the 1-D Earth Mover's distance,
 * the L1 distance between cumulative histograms times the bin width (Rubner et al. 2000; for 1-D
 * distributions it equals the Wasserstein-1 distance).
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

function normalize(c: ArrayLike<number>): number[] | null {
  let s = 0;
  for (let i = 0; i < c.length; i++) s += c[i];
  if (!(s > 0)) return null;
  return Array.from(c, (v) => v / s);
}

/** ½ Σ (p − q)²/(p + q) over normalized counts, in [0, 1]; null when either histogram is empty. */
export function chiSquaredDistance(a: ArrayLike<number>, b: ArrayLike<number>): number | null {
  if (a.length !== b.length) throw new RangeError(`histograms differ in length: ${a.length} vs ${b.length}`);
  const p = normalize(a);
  const q = normalize(b);
  if (!p || !q) return null;
  let d = 0;
  for (let i = 0; i < p.length; i++) {
    const s = p[i] + q[i];
    if (s > 0) d += ((p[i] - q[i]) * (p[i] - q[i])) / s;
  }
  return d / 2;
}

/** Σ |P − Q| · width over cumulative normalized counts (the 1-D EMD); null when either is empty. */
export function earthMoversDistance(a: ArrayLike<number>, b: ArrayLike<number>, binWidth = 1): number | null {
  if (a.length !== b.length) throw new RangeError(`histograms differ in length: ${a.length} vs ${b.length}`);
  const p = normalize(a);
  const q = normalize(b);
  if (!p || !q) return null;
  let cp = 0;
  let cq = 0;
  let d = 0;
  for (let i = 0; i < p.length; i++) {
    cp += p[i];
    cq += q[i];
    d += Math.abs(cp - cq);
  }
  return d * binWidth;
}
