/**
 * Numerical building blocks shared by the coefficient modules.
 *
 * - Compensated summation after Neumaier (1974), "Rundungsfehleranalyse einiger Verfahren zur Summation
 *   endlicher Summen", Z. Angew. Math. Mech. 54:39–51, doi:10.1002/zamm.19740540106 — the improved
 *   Kahan–Babuška scheme: the running error term also captures the case |x| > |sum|.
 * - Binary indexed (Fenwick) trees after Fenwick (1994), "A new data structure for cumulative frequency
 *   tables", Softw. Pract. Exper. 24:327–336, doi:10.1002/spe.4380240306.
 *
 * Pure TypeScript on typed arrays: no DOM, no Node APIs.
 */

/** Compensated (Neumaier) accumulator. `value()` returns sum + compensation. */
export class NeumaierSum {
  private s = 0;
  private c = 0;
  add(x: number): void {
    const t = this.s + x;
    if (Math.abs(this.s) >= Math.abs(x)) this.c += this.s - t + x;
    else this.c += x - t + this.s;
    this.s = t;
  }
  value(): number {
    return this.s + this.c;
  }
}

/** Neumaier sum of an array (or of its first `n` entries). */
export function neumaierSum(a: ArrayLike<number>, n = a.length): number {
  let s = 0;
  let c = 0;
  for (let i = 0; i < n; i++) {
    const x = a[i];
    const t = s + x;
    if (Math.abs(s) >= Math.abs(x)) c += s - t + x;
    else c += x - t + s;
    s = t;
  }
  return s + c;
}

/**
 * Rounded mean used as a shift before accumulating squares and products: subtracting it keeps the summands
 * small (no cancellation in Σx² − (Σx)²/n) while keeping integer data integer (exact products).
 * Rounding is to an integer for integer data and to 6 significant digits otherwise.
 */
export function roundedMean(sum: number, n: number, integer: boolean): number {
  if (n === 0) return 0;
  const m = sum / n;
  if (!Number.isFinite(m)) return 0;
  if (integer) return Math.round(m);
  if (m === 0) return 0;
  return Number(m.toPrecision(6));
}

/** Fenwick tree of counts over positions 0..size-1 (Int32 counts; fine for up to 2^31 − 1 items). */
export class FenwickCount {
  readonly tree: Int32Array;
  constructor(readonly size: number) {
    this.tree = new Int32Array(size + 1);
  }
  /** add `w` at position i (0-based) */
  add(i: number, w: number): void {
    const t = this.tree;
    for (let k = i + 1; k <= this.size; k += k & -k) t[k] += w;
  }
  /** sum of positions 0..i-1 (i.e. strictly before i) */
  prefix(i: number): number {
    const t = this.tree;
    let s = 0;
    for (let k = i; k > 0; k -= k & -k) s += t[k];
    return s;
  }
}

/**
 * Fenwick tree carrying four sums per node, interleaved for cache locality: count, Σx, Σy, Σxy.
 * Used by the O(n log L) distance-covariance cross term (Huo & Székely 2016).
 */
export class Fenwick4 {
  readonly tree: Float64Array;
  /** output of the last `prefix` call: [count, Σx, Σy, Σxy] */
  readonly out = new Float64Array(4);
  constructor(readonly size: number) {
    this.tree = new Float64Array((size + 1) * 4);
  }
  add(i: number, x: number, y: number): void {
    const t = this.tree;
    const xy = x * y;
    for (let k = i + 1; k <= this.size; k += k & -k) {
      const o = k << 2;
      t[o] += 1;
      t[o + 1] += x;
      t[o + 2] += y;
      t[o + 3] += xy;
    }
  }
  /** sums over positions strictly before i, written to `out` */
  prefix(i: number): void {
    const t = this.tree;
    let c = 0;
    let sx = 0;
    let sy = 0;
    let sxy = 0;
    for (let k = i; k > 0; k -= k & -k) {
      const o = k << 2;
      c += t[o];
      sx += t[o + 1];
      sy += t[o + 2];
      sxy += t[o + 3];
    }
    const out = this.out;
    out[0] = c;
    out[1] = sx;
    out[2] = sy;
    out[3] = sxy;
  }
}
