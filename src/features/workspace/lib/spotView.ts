/**
 * What the workspace draws and plots from a cell's spots: the pairs within d (the engine's pairing,
 * shared/analysis/pairing.ts, so the lines are exactly the pairs the measures count) and the histogram of
 * channel-1 → channel-2 nearest-neighbour distances with its chance expectation.
 *
 * Chance expectation: for channel-2 spots placed independently and uniformly at random with density
 * λ = n₂ / A (A = the cell's area in pixels), the distance from a point to its nearest one has
 * P(D ≤ r) = 1 − exp(−λπr²) (the nearest-neighbour distribution of a Poisson process; Clark & Evans 1954,
 * "Distance to nearest neighbor as a measure of spatial relationships in populations", Ecology 35:445–453,
 * doi:10.2307/1931034 — from memory). The expected count in bin [a, b) is n₁ · (F(b) − F(a)). It ignores the
 * cell's edge (distances near the border are longer in truth), which the run's chance placement test
 * handles by placing spots in the cell itself; the curve is a guide for the eye, the p-value is the test.
 */
import { pairSpots } from '@shared/analysis/pairing';

export type Xy = [number, number];

export interface SpotPair {
  x1: number;
  y1: number;
  x2: number;
  y2: number;
  distance: number;
}

/** Channel-1 spots whose nearest channel-2 spot is within d, joined to it; and every nearest distance 1 → 2. */
export function pairsWithin(spots1: Xy[], spots2: Xy[], d: number): { pairs: SpotPair[]; nearest: Float64Array } {
  if (!spots1.length || !spots2.length) return { pairs: [], nearest: new Float64Array(0) };
  const p = pairSpots(
    spots1.map((s) => s[0]),
    spots1.map((s) => s[1]),
    spots2.map((s) => s[0]),
    spots2.map((s) => s[1]),
    d,
  );
  const pairs: SpotPair[] = [];
  for (let i = 0; i < spots1.length; i++) {
    const j = p.nearest12.index[i];
    const dist = p.nearest12.distance[i];
    if (j >= 0 && dist <= d) pairs.push({ x1: spots1[i][0], y1: spots1[i][1], x2: spots2[j][0], y2: spots2[j][1], distance: dist });
  }
  return { pairs, nearest: p.nearest12.distance };
}

export interface DistanceHistogram {
  /** bin edges in pixels, length bins + 1 */
  edges: number[];
  counts: number[];
  /** expected counts under uniform random placement of the channel-2 spots (see the module note) */
  chance: number[];
}

/** Histogram of nearest distances in bins of `binPx` up to `maxPx` (longer ones go into the last bin). */
export function nearestHistogram(nearest: ArrayLike<number>, n2: number, areaPx: number, binPx: number, maxPx: number): DistanceHistogram {
  if (!(binPx > 0 && maxPx > binPx)) throw new RangeError(`histogram bins must be positive and below the range, received bin ${binPx}, range ${maxPx}`);
  const bins = Math.ceil(maxPx / binPx);
  const edges = Array.from({ length: bins + 1 }, (_, i) => i * binPx);
  const counts = new Array<number>(bins).fill(0);
  for (let i = 0; i < nearest.length; i++) counts[Math.min(bins - 1, Math.floor(nearest[i] / binPx))]++;
  const n1 = nearest.length;
  const lambda = areaPx > 0 ? n2 / areaPx : 0;
  const F = (r: number) => 1 - Math.exp(-lambda * Math.PI * r * r);
  const chance = counts.map((_, b) => n1 * ((b === bins - 1 ? 1 : F(edges[b + 1])) - F(edges[b])));
  return { edges, counts, chance };
}
