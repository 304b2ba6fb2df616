/**
 * The quadratic-chi histogram distance family of Pele & Werman (2010): "The quadratic-chi histogram distance
 * family", ECCV 2010, LNCS 6312:749–762, doi:10.1007/978-3-642-15552-9_54.
 *
 *   QC^A_m(P, Q) = sqrt( Σ_ij D_i D_j A_ij ),  D_i = (P_i − Q_i) / (Σ_c (P_c + Q_c) A_ci)^m,  0/0 := 0,
 *
 * with a bin-similarity matrix A (A_ii = 1, 0 ≤ A_ij ≤ 1, positive semi-definite) and 0 ≤ m < 1. The
 * normaliser makes differences in heavily populated neighbourhoods count less (χ²-like), and A lets mass
 * moved to a similar bin count less (like a quadratic-form distance). The paper names m = 0.5 "QCS" and
 * m = 0.9 "QCN"; with A = identity and m = 0.5, QC² = Σ (P_i − Q_i)² / (P_i + Q_i), twice the paper's χ²
 * (½ Σ (P − Q)²/(P + Q)), i.e. exactly `chiSquaredDistance` of distances.ts (which has no ½).
 *
 * Here both histograms are first normalised to sum 1 (as for χ² and EMD), so conditions with different
 * numbers of cells compare by shape. The 1-D bin similarity used by Compare is `triangleSimilarity(K, T)`,
 * A_ij = max(0, 1 − |i − j| / T) (a thresholded ground distance turned into a similarity as in the paper,
 * A_ij = 1 − d_ij / d_max with d_ij = min(|i − j|, T)); it is positive semi-definite (its symbol is the
 * non-negative Fejér kernel). Rounding residue below zero under the square root is read as 0.
 *
 * Degenerate cases: different lengths, a matrix of the wrong size, m outside [0, 1) → RangeError quoting
 * the value; a histogram with no mass → null.
 */
import { NeumaierSum } from './numeric';

function normalised(h: ArrayLike<number>): Float64Array | null {
  let t = 0;
  for (let k = 0; k < h.length; k++) {
    if (!(h[k] >= 0) || !Number.isFinite(h[k])) throw new RangeError(`histogram counts must be non-negative numbers, received ${h[k]} at bin ${k}`);
    t += h[k];
  }
  if (!(t > 0)) return null;
  const out = new Float64Array(h.length);
  for (let k = 0; k < h.length; k++) out[k] = h[k] / t;
  return out;
}

/** A_ij = max(0, 1 − |i − j| / T) for K bins, row-major K × K; T > 0 bins (T ≤ 1 gives the identity). */
export function triangleSimilarity(K: number, T: number): Float64Array {
  if (!(Number.isInteger(K) && K >= 1)) throw new RangeError(`number of bins must be a positive integer, received ${K}`);
  if (!(T > 0 && Number.isFinite(T))) throw new RangeError(`similarity threshold must be a positive number of bins, received ${T}`);
  const A = new Float64Array(K * K);
  for (let i = 0; i < K; i++) for (let j = 0; j < K; j++) A[i * K + j] = Math.max(0, 1 - Math.abs(i - j) / T);
  return A;
}

/**
 * QC^A_m between two histograms over the same K bins (normalised to sum 1 first).
 * @param A bin similarity, row-major K × K
 * @param m normalisation exponent in [0, 1): 0.5 = QCS, 0.9 = QCN
 */
export function quadraticChiDistance(h1: ArrayLike<number>, h2: ArrayLike<number>, A: ArrayLike<number>, m: number): number | null {
  const K = h1.length;
  if (h2.length !== K) throw new RangeError(`histograms differ in length: ${K} vs ${h2.length} bins`);
  if (A.length !== K * K) throw new RangeError(`bin similarity must be ${K} × ${K} = ${K * K} values, received ${A.length}`);
  if (!(m >= 0 && m < 1)) throw new RangeError(`quadratic-chi exponent m must be in [0, 1), received ${m}`);
  const P = normalised(h1), Q = normalised(h2);
  if (!P || !Q) return null;
  const D = new Float64Array(K);
  for (let i = 0; i < K; i++) {
    const z = new NeumaierSum();
    for (let c = 0; c < K; c++) z.add((P[c] + Q[c]) * A[c * K + i]);
    const Z = z.value();
    const d = P[i] - Q[i];
    D[i] = d === 0 ? 0 : d / Math.pow(Z, m);
  }
  const s = new NeumaierSum();
  for (let i = 0; i < K; i++) {
    if (D[i] === 0) continue;
    for (let j = 0; j < K; j++) if (D[j] !== 0) s.add(D[i] * D[j] * A[i * K + j]);
  }
  const v = s.value();
  return v > 0 ? Math.sqrt(v) : 0;
}
