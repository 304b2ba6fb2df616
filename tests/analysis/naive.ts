/**
 * Naive reference versions straight from the definitions, O(n²) where the definition is pairwise.
 * Used by the property tests (fast == naive on random small inputs) and by the benchmark as a baseline.
 * Plain double arithmetic; only for small n.
 */

export function naivePearson(x: ArrayLike<number>, y: ArrayLike<number>): number | null {
  const n = x.length;
  if (n < 2) return null;
  let cx = true, cy = true;
  for (let i = 1; i < n; i++) {
    if (x[i] !== x[0]) cx = false;
    if (y[i] !== y[0]) cy = false;
  }
  if (cx || cy) return null;
  let mx = 0, my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i];
    my += y[i];
  }
  mx /= n;
  my /= n;
  let sxx = 0, syy = 0, sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i] - mx) ** 2;
    syy += (y[i] - my) ** 2;
    sxy += (x[i] - mx) * (y[i] - my);
  }
  if (!(sxx > 0 && syy > 0)) return null;
  return sxy / Math.sqrt(sxx * syy);
}

/** average ranks (1-based, ties get the mean of their positions), O(n²) by counting */
export function naiveRanks(v: ArrayLike<number>): number[] {
  const n = v.length;
  const r: number[] = [];
  for (let i = 0; i < n; i++) {
    let less = 0, eq = 0;
    for (let j = 0; j < n; j++) {
      if (v[j] < v[i]) less++;
      else if (v[j] === v[i]) eq++;
    }
    r.push(less + (eq + 1) / 2);
  }
  return r;
}

export function naiveSpearman(x: ArrayLike<number>, y: ArrayLike<number>): number | null {
  return naivePearson(naiveRanks(x), naiveRanks(y));
}

/** Kendall's τ-b by the O(n²) pair loop (Kendall 1945). */
export function naiveKendallTauB(x: ArrayLike<number>, y: ArrayLike<number>): number | null {
  const n = x.length;
  let s = 0, tx = 0, ty = 0, pairs = 0;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      pairs++;
      const a = Math.sign(x[i] - x[j]), b = Math.sign(y[i] - y[j]);
      s += a * b;
      if (a === 0) tx++;
      if (b === 0) ty++;
    }
  }
  const d = (pairs - tx) * (pairs - ty);
  if (!(d > 0)) return null;
  return s / Math.sqrt(d);
}

function distMatrix(v: ArrayLike<number>): Float64Array[] {
  const n = v.length;
  const m: Float64Array[] = [];
  for (let i = 0; i < n; i++) {
    const row = new Float64Array(n);
    for (let j = 0; j < n; j++) row[j] = Math.abs(v[i] - v[j]);
    m.push(row);
  }
  return m;
}

/** double centring (Székely, Rizzo & Bakirov 2007, eq. 2.8) */
function doubleCentre(a: Float64Array[]): Float64Array[] {
  const n = a.length;
  const rm = a.map((r) => r.reduce((s, v) => s + v, 0) / n);
  const gm = rm.reduce((s, v) => s + v, 0) / n;
  return a.map((r, i) => r.map((v, j) => v - rm[i] - rm[j] + gm));
}

/** U-centring (Székely & Rizzo 2014, Ann. Statist. 42:2382, eq. 2.2) */
function uCentre(a: Float64Array[]): Float64Array[] {
  const n = a.length;
  const rs = a.map((r) => r.reduce((s, v) => s + v, 0));
  const g = rs.reduce((s, v) => s + v, 0);
  return a.map((r, i) => r.map((v, j) => (i === j ? 0 : v - rs[i] / (n - 2) - rs[j] / (n - 2) + g / ((n - 1) * (n - 2)))));
}

function inner(a: Float64Array[], b: Float64Array[]): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) for (let j = 0; j < a.length; j++) s += a[i][j] * b[i][j];
  return s;
}

/** dCor (V-statistic, not squared) and bias-corrected dCor² from the O(n²) matrices. */
export function naiveDcor(x: ArrayLike<number>, y: ArrayLike<number>): { dcor: number | null; bcdcorSq: number | null } {
  const n = x.length;
  if (n < 2) return { dcor: null, bcdcorSq: null };
  const ax = distMatrix(x), by = distMatrix(y);
  const A = doubleCentre(ax), B = doubleCentre(by);
  const vxy = inner(A, B), vxx = inner(A, A), vyy = inner(B, B);
  const dcor = vxx > 1e-300 && vyy > 1e-300 ? Math.sqrt(Math.max(0, vxy / Math.sqrt(vxx * vyy))) : null;
  if (n < 4) return { dcor, bcdcorSq: null };
  const UA = uCentre(ax), UB = uCentre(by);
  const uxy = inner(UA, UB), uxx = inner(UA, UA), uyy = inner(UB, UB);
  // Ω(x, x) = 0 happens for non-constant x (all U-centred distances 0): treat rounding residue as 0
  const ok = uxx > 1e-10 * inner(ax, ax) && uyy > 1e-10 * inner(by, by);
  return { dcor, bcdcorSq: ok ? uxy / Math.sqrt(uxx * uyy) : null };
}

/** Costes thresholds by rescanning all pixels at every step (the definition, O(n·K)). */
export function naiveCostes(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  slope: number,
  intercept: number,
  candidates: number[],
  belowSet: 'either' | 'both' = 'either',
): { t1: number; t2: number; r: number | null } | null {
  for (let k = candidates.length - 1; k >= 0; k--) {
    const t = candidates[k];
    const t2 = slope * t + intercept;
    const xs: number[] = [], ys: number[] = [];
    for (let i = 0; i < x.length; i++) {
      const inx = x[i] <= t, iny = y[i] <= t2;
      if (belowSet === 'either' ? inx || iny : inx && iny) {
        xs.push(x[i]);
        ys.push(y[i]);
      }
    }
    const r = naivePearson(xs, ys);
    if (r !== null && r <= 0) return { t1: t, t2, r };
  }
  return null;
}

/** Otsu by evaluating the between-class variance at every integer level (Otsu 1979, eq. 18). */
export function naiveOtsuInteger(v: ArrayLike<number>): number | null {
  let min = Infinity, max = -Infinity;
  for (let i = 0; i < v.length; i++) {
    min = Math.min(min, v[i]);
    max = Math.max(max, v[i]);
  }
  if (!(max > min)) return null;
  let best = -1, bestT = NaN;
  for (let t = min; t < max; t++) {
    let n0 = 0, s0 = 0, n1 = 0, s1 = 0;
    for (let i = 0; i < v.length; i++) {
      if (v[i] <= t) {
        n0++;
        s0 += v[i];
      } else {
        n1++;
        s1 += v[i];
      }
    }
    if (n0 === 0 || n1 === 0) continue;
    const sb = ((n0 * n1) / (v.length * v.length)) * (s0 / n0 - s1 / n1) ** 2;
    if (sb > best * (1 + 1e-12)) {
      best = sb;
      bestT = t;
    }
  }
  return bestT;
}

/**
 * MICe and TICe by brute force (Reshef et al. 2016, JMLR 17:1–63): for each k × l with k·l ≤ B = max(n^α, 4),
 * the larger axis is equipartitioned (2011 SOM, Algorithm 3: tie groups never split, a group opens a new row
 * when that keeps the row closer to n_left / rows_left) and the other axis' cut points are tried in every
 * combination of at most k − 1 cuts between distinct values; normalised by log min(k, rows actually made).
 * Diagonal entries come from equipartitioning x. No clump cap: valid while every axis has fewer distinct
 * values than c·⌊B/l⌋ (small n). Exponential: only for n ≲ 16 distinct values per axis.
 */
export function naiveMicE(x: ArrayLike<number>, y: ArrayLike<number>, alpha = 0.6): { micE: number; ticE: number } {
  const n = x.length;
  const B = Math.max(n ** alpha, 4);
  const rowsOf = (v: ArrayLike<number>, l: number): number[] => {
    const vals = [...new Set(Array.from(v))].sort((a, b) => a - b);
    const size = vals.map((u) => Array.from(v).filter((w) => w === u).length);
    const row = new Map<number, number>();
    let target = n / l, h = 0, cur = 0, used = 0;
    vals.forEach((u, g) => {
      if (h !== 0 && Math.abs(h + size[g] - target) >= Math.abs(h - target)) {
        cur++;
        h = 0;
        target = (n - used) / (l - cur);
      }
      row.set(u, cur);
      used += size[g];
      h += size[g];
    });
    return Array.from(v, (u) => row.get(u)!);
  };
  const mi = (a: number[], b: number[]): number => {
    const joint = new Map<string, number>(), ma = new Map<number, number>(), mb = new Map<number, number>();
    for (let i = 0; i < n; i++) {
      const key = `${a[i]},${b[i]}`;
      joint.set(key, (joint.get(key) ?? 0) + 1);
      ma.set(a[i], (ma.get(a[i]) ?? 0) + 1);
      mb.set(b[i], (mb.get(b[i]) ?? 0) + 1);
    }
    let s = 0;
    for (const [key, c] of joint) {
      const [u, w] = key.split(',').map(Number);
      s += (c / n) * Math.log((c * n) / (ma.get(u)! * mb.get(w)!));
    }
    return s;
  };
  // best MI with the rows of `eq` and at most k columns cut from `free`
  const best = (eq: ArrayLike<number>, free: ArrayLike<number>, l: number, k: number) => {
    const rows = rowsOf(eq, l);
    const q = new Set(rows).size;
    const vals = [...new Set(Array.from(free))].sort((a, b) => a - b);
    const cuts = vals.length - 1;
    let top = 0;
    for (let mask = 0; mask < 2 ** cuts; mask++) {
      let bits = 0;
      for (let m = mask; m; m >>= 1) bits += m & 1;
      if (bits > k - 1) continue;
      const colOf = new Map<number, number>();
      let col = 0;
      vals.forEach((u, g) => {
        if (g > 0 && mask & (1 << (g - 1))) col++;
        colOf.set(u, col);
      });
      top = Math.max(top, mi(rows, Array.from(free, (u) => colOf.get(u)!)));
    }
    return top / Math.min(Math.log(k), Math.log(q));
  };
  let micE = 0, ticE = 0;
  for (let ly = 2; ly * 2 <= B; ly++)
    for (let kx = 2; kx * ly <= B; kx++) {
      // kx columns on x, ly rows on y: equipartition the larger (x on the diagonal)
      const v = kx >= ly ? best(x, y, kx, ly) : best(y, x, ly, kx);
      micE = Math.max(micE, v);
      ticE += v;
    }
  return { micE, ticE };
}
