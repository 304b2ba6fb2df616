/**
 * Distances between two histograms over the same bins, for comparing intensity or coefficient
 * distributions. Both histograms are normalised to sum 1 first.
 *
 * - Chi-squared distance, the symmetric variant Σ_k (p_k − q_k)² / (p_k + q_k) over bins with p_k + q_k > 0
 *   (no ½ factor; range [0, 2]). This is the χ² statistic of p and q against their mean histogram as used
 *   by Puzicha, Hofmann & Buhmann (1997), CVPR, doi:10.1109/CVPR.1997.609331 (from memory).
 * - 1-D Earth Mover's distance (Rubner, Tomasi & Guibas 2000, Int. J. Comput. Vis. 40:99,
 *   doi:10.1023/A:1026543900054): in one dimension it is the L1 distance between the cumulative
 *   histograms (Vallender 1973, Theory Probab. Appl. 18:784, doi:10.1137/1118101), times the bin width.
 *
 * Degenerate cases: different lengths → RangeError; a histogram with no mass → null.
 */
import { NeumaierSum } from './numeric';

function normalised(h: ArrayLike<number>): Float64Array | null {
  const s = new NeumaierSum();
  for (let k = 0; k < h.length; k++) {
    if (!(h[k] >= 0)) throw new RangeError(`histogram counts must be non-negative numbers, received ${h[k]} at bin ${k}`);
    s.add(h[k]);
  }
  const t = s.value();
  if (!(t > 0)) return null;
  const out = new Float64Array(h.length);
  for (let k = 0; k < h.length; k++) out[k] = h[k] / t;
  return out;
}

function check(a: ArrayLike<number>, b: ArrayLike<number>): void {
  if (a.length !== b.length) throw new RangeError(`histograms differ in length: ${a.length} vs ${b.length} bins`);
}

export function chiSquaredDistance(h1: ArrayLike<number>, h2: ArrayLike<number>): number | null {
  check(h1, h2);
  const p = normalised(h1), q = normalised(h2);
  if (!p || !q) return null;
  const s = new NeumaierSum();
  for (let k = 0; k < p.length; k++) {
    const d = p[k] - q[k], t = p[k] + q[k];
    if (t > 0) s.add((d * d) / t);
  }
  return s.value();
}

export function earthMoversDistance1d(h1: ArrayLike<number>, h2: ArrayLike<number>, binWidth = 1): number | null {
  check(h1, h2);
  if (!(binWidth > 0)) throw new RangeError(`bin width must be positive, received ${binWidth}`);
  const p = normalised(h1), q = normalised(h2);
  if (!p || !q) return null;
  const s = new NeumaierSum();
  let cp = 0, cq = 0;
  for (let k = 0; k < p.length; k++) {
    cp += p[k];
    cq += q[k];
    s.add(Math.abs(cp - cq));
  }
  return s.value() * binWidth;
}
