/**
 * Pairing of two sets of spot centres in a volume with anisotropic voxels: pairing.ts in 3D. Centres are
 * (x, y, z) in voxel units (x, y in pixels, z in slices); distances are Euclidean after scaling z by
 * `zScale` (the slice spacing in pixel widths, z step / pixel size), so they are in pixel widths —
 * µm once multiplied by the pixel size. Nearest neighbours by a uniform grid over the scaled points
 * (bucketing; Bentley, Weide & Yao 1980, ACM Trans. Math. Softw. 6:563–580, doi:10.1145/355921.355927 —
 * from memory), O(1) expected per query; object-based co-localization by nearest-neighbour distances after
 * Lachmanovich et al. 2003, J. Microsc. 212:122–131, doi:10.1046/j.1365-2818.2003.01239.x (from memory).
 * The measures and their definitions (≤ d is paired, ties to the lower index, medians, nulls) are those
 * of pairing.ts.
 */
import { checkPairDistance, pairingMeasures, type NearestResult, type PairingResult } from './pairing';

/** Uniform grid over fixed 3D points (already scaled), for nearest-neighbour and fixed-radius queries. */
export class PointGrid3 {
  readonly xs: Float64Array;
  readonly ys: Float64Array;
  readonly zs: Float64Array;
  readonly cell: number;
  private readonly o: [number, number, number];
  private readonly n: [number, number, number];
  private readonly start: Int32Array;
  private readonly order: Int32Array;

  constructor(xs: ArrayLike<number>, ys: ArrayLike<number>, zs: ArrayLike<number>, cell?: number) {
    const n = xs.length;
    if (ys.length !== n || zs.length !== n) throw new RangeError(`point coordinates differ in length: ${n} x, ${ys.length} y, ${zs.length} z`);
    this.xs = Float64Array.from(xs);
    this.ys = Float64Array.from(ys);
    this.zs = Float64Array.from(zs);
    const lo = [Infinity, Infinity, Infinity], hi = [-Infinity, -Infinity, -Infinity];
    for (let i = 0; i < n; i++) {
      const p = [this.xs[i], this.ys[i], this.zs[i]];
      for (let a = 0; a < 3; a++) {
        if (!Number.isFinite(p[a])) throw new RangeError(`point ${i} is not finite: (${p.join(', ')})`);
        lo[a] = Math.min(lo[a], p[a]);
        hi[a] = Math.max(hi[a], p[a]);
      }
    }
    if (n === 0) lo.fill(0), hi.fill(0);
    const ext = hi.map((h, a) => Math.max(h - lo[a], 1e-9));
    let c = cell ?? Math.cbrt((ext[0] * ext[1] * ext[2]) / Math.max(n, 1));
    if (!(Number.isFinite(c) && c > 0)) throw new RangeError(`grid cell size must be positive, received ${cell}`);
    const maxCells = 4 * n + 64;
    const count = (c: number) => ext.reduce((m, e) => m * (Math.floor(e / c) + 1), 1);
    while (count(c) > maxCells) c *= 1.5;
    this.cell = c;
    this.o = [lo[0], lo[1], lo[2]];
    this.n = [Math.floor(ext[0] / c) + 1, Math.floor(ext[1] / c) + 1, Math.floor(ext[2] / c) + 1];
    const cells = this.n[0] * this.n[1] * this.n[2];
    const counts = new Int32Array(cells + 1);
    const cellOf = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      const k = this.index(this.at(0, this.xs[i]), this.at(1, this.ys[i]), this.at(2, this.zs[i]));
      cellOf[i] = k;
      counts[k + 1]++;
    }
    for (let k = 0; k < cells; k++) counts[k + 1] += counts[k];
    this.start = counts.slice();
    const fill = counts.slice(0, cells);
    this.order = new Int32Array(n);
    for (let i = 0; i < n; i++) this.order[fill[cellOf[i]]++] = i;
  }

  get size(): number {
    return this.xs.length;
  }
  private at(a: number, v: number): number {
    const i = Math.floor((v - this.o[a]) / this.cell);
    return i < 0 ? 0 : i >= this.n[a] ? this.n[a] - 1 : i;
  }
  private index(i: number, j: number, k: number): number {
    return (k * this.n[1] + j) * this.n[0] + i;
  }

  /** nearest point to (qx, qy, qz): [index, distance] into out; index −1 when the grid is empty */
  nearest(qx: number, qy: number, qz: number, out: Float64Array): void {
    out[0] = -1;
    out[1] = Infinity;
    if (this.xs.length === 0) return;
    const q = [qx, qy, qz];
    const ci = [this.at(0, qx), this.at(1, qy), this.at(2, qz)];
    const c = this.cell;
    // a cell at Chebyshev ring r is at least (r − 1)·c away; a query outside the grid's box also its distance to the box
    let outside = 0;
    for (let a = 0; a < 3; a++) outside = Math.max(outside, this.o[a] - q[a], q[a] - (this.o[a] + this.n[a] * c));
    let best = Infinity, bestJ = -1;
    const maxR = Math.max(...this.n);
    for (let r = 0; r <= maxR; r++) {
      if (r > 0 && best <= Math.max((r - 1) * c, outside)) break;
      for (let k = Math.max(0, ci[2] - r); k <= Math.min(this.n[2] - 1, ci[2] + r); k++)
        for (let j = Math.max(0, ci[1] - r); j <= Math.min(this.n[1] - 1, ci[1] + r); j++)
          for (let i = Math.max(0, ci[0] - r); i <= Math.min(this.n[0] - 1, ci[0] + r); i++) {
            // only the shell of ring r
            if (Math.max(Math.abs(i - ci[0]), Math.abs(j - ci[1]), Math.abs(k - ci[2])) !== r) continue;
            const cell = this.index(i, j, k);
            for (let p = this.start[cell]; p < this.start[cell + 1]; p++) {
              const idx = this.order[p];
              const dx = this.xs[idx] - qx, dy = this.ys[idx] - qy, dz = this.zs[idx] - qz;
              const d = Math.sqrt(dx * dx + dy * dy + dz * dz);
              if (d < best || (d === best && idx < bestJ)) {
                best = d;
                bestJ = idx;
              }
            }
          }
    }
    out[0] = bestJ;
    out[1] = best;
  }

  /** calls visit(index, distance) for every point at distance ≤ radius from (qx, qy, qz) */
  within(qx: number, qy: number, qz: number, radius: number, visit: (index: number, distance: number) => void): void {
    if (this.xs.length === 0) return;
    const q = [qx, qy, qz];
    const lo = [0, 1, 2].map((a) => Math.max(0, Math.floor((q[a] - radius - this.o[a]) / this.cell)));
    const hi = [0, 1, 2].map((a) => Math.min(this.n[a] - 1, Math.floor((q[a] + radius - this.o[a]) / this.cell)));
    for (let k = lo[2]; k <= hi[2]; k++)
      for (let j = lo[1]; j <= hi[1]; j++)
        for (let i = lo[0]; i <= hi[0]; i++) {
          const cell = this.index(i, j, k);
          for (let p = this.start[cell]; p < this.start[cell + 1]; p++) {
            const idx = this.order[p];
            const dx = this.xs[idx] - qx, dy = this.ys[idx] - qy, dz = this.zs[idx] - qz;
            const d = Math.sqrt(dx * dx + dy * dy + dz * dz);
            if (d <= radius) visit(idx, d);
          }
        }
  }
}

export function checkZScale(zScale: number): void {
  if (!(Number.isFinite(zScale) && zScale > 0)) throw new RangeError(`the slice spacing must be a positive number of pixel widths, received ${zScale}`);
}

/** z coordinates (slices) scaled to pixel widths */
export function scaleZ(zs: ArrayLike<number>, zScale: number): Float64Array {
  return Float64Array.from(zs, (z) => z * zScale);
}

/** Nearest neighbours both ways and the pairing measures at distance d (pixel widths) in 3D. */
export function pairSpots3D(
  x1: ArrayLike<number>,
  y1: ArrayLike<number>,
  z1: ArrayLike<number>,
  x2: ArrayLike<number>,
  y2: ArrayLike<number>,
  z2: ArrayLike<number>,
  zScale: number,
  d: number,
): PairingResult {
  checkPairDistance(d);
  checkZScale(zScale);
  const s1 = scaleZ(z1, zScale), s2 = scaleZ(z2, zScale);
  const g1 = new PointGrid3(x1, y1, s1), g2 = new PointGrid3(x2, y2, s2);
  const n1 = g1.size, n2 = g2.size;
  const nn = (g: PointGrid3, qx: ArrayLike<number>, qy: ArrayLike<number>, qz: ArrayLike<number>): NearestResult => {
    const index = new Int32Array(qx.length), distance = new Float64Array(qx.length), out = new Float64Array(2);
    for (let i = 0; i < qx.length; i++) {
      g.nearest(qx[i], qy[i], qz[i], out);
      index[i] = out[0];
      distance[i] = out[1];
    }
    return { index, distance };
  };
  const nearest12 = nn(g2, x1, y1, s1), nearest21 = nn(g1, x2, y2, s2);
  return pairingMeasures(n1, n2, nearest12, nearest21, d);
}
