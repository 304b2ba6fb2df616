/**
 * Pairing of two sets of spot centres: each spot's nearest spot of the other channel, found with a uniform
 * grid index (bucketing; Bentley, Weide & Yao 1980, "Optimal expected-time algorithms for closest point
 * problems", ACM Trans. Math. Softw. 6:563–580, doi:10.1145/355921.355927 — from memory). Building the grid
 * is O(n); a nearest-neighbour query visits rings of cells until the best distance is no larger than the
 * distance to the next ring, O(1) expected for points spread over the region, so pairing is O(n1 + n2)
 * expected (O(n log n) or better as required).
 *
 * Object-based co-localization by nearest-neighbour distances follows Lachmanovich et al. 2003,
 * "Co-localization analysis of complex formation among membrane proteins by computerized fluorescence
 * microscopy", J. Microsc. 212:122–131, doi:10.1046/j.1365-2818.2003.01239.x (from memory).
 *
 * Definitions (decided here): distances are Euclidean in pixels, √(dx² + dy²). A channel-1 spot is paired
 * when its nearest channel-2 spot is at distance ≤ d (`paired1` = fraction of channel-1 spots paired;
 * `paired2` the reverse). A mutual pair is (i, j) with j the nearest of i, i the nearest of j and distance
 * ≤ d. Equal distances go to the lower index. Medians of an even count are the mean of the two middle
 * values. With no spot in either channel the fractions and medians are null and `mutualPairs` is 0.
 */

/** Uniform grid over fixed points, for nearest-neighbour and fixed-radius queries. */
export class PointGrid {
  readonly xs: Float64Array;
  readonly ys: Float64Array;
  readonly cell: number;
  private readonly gx0: number;
  private readonly gy0: number;
  private readonly nx: number;
  private readonly ny: number;
  /** points sorted by cell: start[c]..start[c+1] index into `order` */
  private readonly start: Int32Array;
  private readonly order: Int32Array;

  /**
   * @param cell cell side in pixels; default √(bounding-box area / n) (about one point per cell)
   */
  constructor(xs: ArrayLike<number>, ys: ArrayLike<number>, cell?: number) {
    const n = xs.length;
    if (ys.length !== n) throw new RangeError(`point coordinates differ in length: ${n} x vs ${ys.length} y`);
    this.xs = Float64Array.from(xs);
    this.ys = Float64Array.from(ys);
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let i = 0; i < n; i++) {
      const x = this.xs[i], y = this.ys[i];
      if (!(Number.isFinite(x) && Number.isFinite(y))) throw new RangeError(`point ${i} is not finite: (${x}, ${y})`);
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
    if (n === 0) x0 = y0 = x1 = y1 = 0;
    const span = Math.max(x1 - x0, y1 - y0, 1e-9);
    let c = cell ?? Math.sqrt(Math.max((x1 - x0) * (y1 - y0), span) / Math.max(n, 1));
    if (!(Number.isFinite(c) && c > 0)) throw new RangeError(`grid cell size must be positive, received ${cell}`);
    // at most about 4n + 16 cells
    const maxCells = 4 * n + 16;
    while (Math.ceil((x1 - x0) / c + 1e-9) * Math.ceil((y1 - y0) / c + 1e-9) > maxCells) c *= 1.5;
    this.cell = c;
    this.gx0 = x0;
    this.gy0 = y0;
    this.nx = Math.max(1, Math.floor((x1 - x0) / c) + 1);
    this.ny = Math.max(1, Math.floor((y1 - y0) / c) + 1);
    const counts = new Int32Array(this.nx * this.ny + 1);
    const cellOf = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      const k = this.cellIndex(this.xs[i], this.ys[i]);
      cellOf[i] = k;
      counts[k + 1]++;
    }
    for (let k = 0; k < this.nx * this.ny; k++) counts[k + 1] += counts[k];
    this.start = counts.slice();
    const fill = counts.slice(0, this.nx * this.ny);
    this.order = new Int32Array(n);
    for (let i = 0; i < n; i++) this.order[fill[cellOf[i]]++] = i;
  }

  get size(): number {
    return this.xs.length;
  }

  private cx(x: number): number {
    const i = Math.floor((x - this.gx0) / this.cell);
    return i < 0 ? 0 : i >= this.nx ? this.nx - 1 : i;
  }
  private cy(y: number): number {
    const j = Math.floor((y - this.gy0) / this.cell);
    return j < 0 ? 0 : j >= this.ny ? this.ny - 1 : j;
  }
  private cellIndex(x: number, y: number): number {
    return this.cy(y) * this.nx + this.cx(x);
  }

  /**
   * Nearest point to (qx, qy): writes its index and distance into `out` ([index, distance]); index −1 when
   * the grid is empty.
   */
  nearest(qx: number, qy: number, out: Float64Array): void {
    out[0] = -1;
    out[1] = Infinity;
    if (this.xs.length === 0) return;
    const ci = this.cx(qx), cj = this.cy(qy);
    let best = Infinity, bestJ = -1;
    const c = this.cell;
    // a cell at Chebyshev ring r around the query's cell is at least (r − 1)·c away; a query outside the
    // grid (clamped onto an edge cell) is also at least its distance to the grid's box from every cell
    const ox = Math.max(this.gx0 - qx, qx - (this.gx0 + this.nx * c), 0);
    const oy = Math.max(this.gy0 - qy, qy - (this.gy0 + this.ny * c), 0);
    const outside = Math.max(ox, oy);
    const maxR = Math.max(this.nx, this.ny);
    for (let r = 0; r <= maxR; r++) {
      if (r > 0 && best <= Math.max((r - 1) * c, outside)) break;
      const j0 = cj - r, j1 = cj + r, i0 = ci - r, i1 = ci + r;
      for (let j = Math.max(0, j0); j <= Math.min(this.ny - 1, j1); j++) {
        const edgeRow = j === j0 || j === j1;
        for (let i = Math.max(0, i0); i <= Math.min(this.nx - 1, i1); i++) {
          if (!edgeRow && i !== i0 && i !== i1) continue;
          const k = j * this.nx + i;
          for (let p = this.start[k]; p < this.start[k + 1]; p++) {
            const idx = this.order[p];
            const dx = this.xs[idx] - qx, dy = this.ys[idx] - qy;
            const d = Math.sqrt(dx * dx + dy * dy);
            if (d < best || (d === best && idx < bestJ)) {
              best = d;
              bestJ = idx;
            }
          }
        }
      }
    }
    out[0] = bestJ;
    out[1] = best;
  }

  /** calls visit(index, distance) for every point at distance ≤ radius from (qx, qy) */
  within(qx: number, qy: number, radius: number, visit: (index: number, distance: number) => void): void {
    if (this.xs.length === 0) return;
    const c = this.cell;
    const i0 = Math.max(0, Math.floor((qx - radius - this.gx0) / c)), i1 = Math.min(this.nx - 1, Math.floor((qx + radius - this.gx0) / c));
    const j0 = Math.max(0, Math.floor((qy - radius - this.gy0) / c)), j1 = Math.min(this.ny - 1, Math.floor((qy + radius - this.gy0) / c));
    for (let j = j0; j <= j1; j++)
      for (let i = i0; i <= i1; i++) {
        const k = j * this.nx + i;
        for (let p = this.start[k]; p < this.start[k + 1]; p++) {
          const idx = this.order[p];
          const dx = this.xs[idx] - qx, dy = this.ys[idx] - qy;
          const d = Math.sqrt(dx * dx + dy * dy);
          if (d <= radius) visit(idx, d);
        }
      }
  }
}

export interface NearestResult {
  /** index of the nearest point of the other set, −1 when that set is empty */
  index: Int32Array;
  distance: Float64Array;
}

/** For every query point, its nearest point of `grid`. */
export function nearestNeighbours(grid: PointGrid, qx: ArrayLike<number>, qy: ArrayLike<number>): NearestResult {
  const n = qx.length;
  const index = new Int32Array(n), distance = new Float64Array(n);
  const out = new Float64Array(2);
  for (let i = 0; i < n; i++) {
    grid.nearest(qx[i], qy[i], out);
    index[i] = out[0];
    distance[i] = out[1];
  }
  return { index, distance };
}

/** median of the values (a copy is sorted); null for none */
export function median(values: ArrayLike<number>): number | null {
  const n = values.length;
  if (n === 0) return null;
  const s = Float64Array.from(values).sort();
  return n % 2 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
}

export interface PairingResult {
  count1: number;
  count2: number;
  paired1: number | null;
  paired2: number | null;
  mutualPairs: number;
  medianNearest1: number | null;
  medianNearest2: number | null;
  /** channel 1 → nearest channel 2 and the reverse */
  nearest12: NearestResult;
  nearest21: NearestResult;
}

export function checkPairDistance(d: number): void {
  if (!(Number.isFinite(d) && d >= 0)) throw new RangeError(`pair distance must be a non-negative number of pixels, received ${d}`);
}

/** Nearest neighbours both ways and the pairing measures at distance d. */
export function pairSpots(x1: ArrayLike<number>, y1: ArrayLike<number>, x2: ArrayLike<number>, y2: ArrayLike<number>, d: number): PairingResult {
  checkPairDistance(d);
  const g1 = new PointGrid(x1, y1), g2 = new PointGrid(x2, y2);
  const n1 = g1.size, n2 = g2.size;
  const nearest12 = nearestNeighbours(g2, x1, y1);
  const nearest21 = nearestNeighbours(g1, x2, y2);
  return pairingMeasures(n1, n2, nearest12, nearest21, d);
}

/**
 * The pairing measures from the nearest neighbours both ways (shared by the 2-D and 3-D pairings): a spot is
 * paired when its nearest partner is at most d away; mutual pairs are each other's nearest and within d.
 */
export function pairingMeasures(n1: number, n2: number, nearest12: NearestResult, nearest21: NearestResult, d: number): PairingResult {
  let p1 = 0, p2 = 0, mutual = 0;
  for (let i = 0; i < n1; i++) {
    if (nearest12.distance[i] <= d) p1++;
    const j = nearest12.index[i];
    if (j >= 0 && nearest21.index[j] === i && nearest12.distance[i] <= d) mutual++;
  }
  for (let j = 0; j < n2; j++) if (nearest21.distance[j] <= d) p2++;
  const both = n1 > 0 && n2 > 0;
  return {
    count1: n1,
    count2: n2,
    paired1: both ? p1 / n1 : null,
    paired2: both ? p2 / n2 : null,
    mutualPairs: both ? mutual : 0,
    medianNearest1: both ? median(nearest12.distance) : null,
    medianNearest2: both ? median(nearest21.distance) : null,
    nearest12,
    nearest21,
  };
}
