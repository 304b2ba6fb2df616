/**
 * Cross-type Ripley's K and its L transform for two point patterns (channel-1 and channel-2 spot centres).
 *
 * K₁₂(r) = A / (n₁ n₂) · Σᵢ Σⱼ e(i, j) · 1(dᵢⱼ < r), with A the window area and e an edge-correction weight;
 * L₁₂(r) = √(K₁₂(r) / π), which is r for independent patterns without edge effects. Ripley 1976, "The
 * second-order analysis of stationary point processes", J. Appl. Probab. 13:255–266, doi:10.2307/3212829;
 * Ripley 1977, "Modelling spatial patterns", J. R. Stat. Soc. B 39:172–212,
 * doi:10.1111/j.2517-6161.1977.tb01615.x; the cross-type (bivariate) form after Lotwick & Silverman 1982,
 * "Methods for analysing spatial processes of several types of points", J. R. Stat. Soc. B 44:406–413,
 * doi:10.1111/j.2517-6161.1982.tb01221.x (volume and pages from memory).
 *
 * Edge corrections (the window is a rectangle [x0, x1) × [y0, y1) except for 'none'):
 *  - 'none': e = 1 (any window; A given). For a cell of any shape the edge effect is instead handled by the
 *    Monte Carlo envelope of spot-test.ts: the same uncorrected K of placements in the same cell.
 *  - 'translation': e = A / ((W − |dx|)(H − |dy|)) (Ohser & Stoyan 1981, Biometrical J. 23:523–533,
 *    doi:10.1002/bimj.4710230602 — from memory; as in astropy's RipleysKEstimator 'translation').
 *  - 'ripley': e = 1 / (fraction of the circle of radius dᵢⱼ around the channel-1 point inside the window),
 *    Ripley's isotropic weight for a rectangle, the formula of astropy's RipleysKEstimator 'ripley' mode
 *    (nearest vertical and horizontal edge only, so radii must be ≤ half the shorter side).
 * Distances are strictly below r (as astropy). Pairs at distance 0 take weight 1.
 */
import { PointGrid } from './pairing';

export type KCorrection = 'none' | 'translation' | 'ripley';

export type KWindow = { kind: 'area'; area: number } | { kind: 'rectangle'; x0: number; y0: number; x1: number; y1: number };

export interface CrossK {
  radii: number[];
  K: (number | null)[];
  L: (number | null)[];
}

function checkRadii(radii: number[]): number {
  if (!Array.isArray(radii) || radii.length === 0) throw new RangeError(`Ripley radii must be a non-empty list, received ${JSON.stringify(radii)}`);
  let rmax = 0;
  for (const r of radii) {
    if (!(Number.isFinite(r) && r > 0)) throw new RangeError(`Ripley radius must be a positive number of pixels, received ${r}`);
    rmax = Math.max(rmax, r);
  }
  return rmax;
}

export function crossK(
  x1: ArrayLike<number>,
  y1: ArrayLike<number>,
  x2: ArrayLike<number>,
  y2: ArrayLike<number>,
  radii: number[],
  window: KWindow,
  correction: KCorrection = 'none',
): CrossK {
  const rmax = checkRadii(radii);
  let area: number;
  let W = 0, H = 0, wx0 = 0, wy0 = 0;
  if (window.kind === 'area') {
    area = window.area;
    if (!(Number.isFinite(area) && area > 0)) throw new RangeError(`window area must be positive, received ${area}`);
    if (correction !== 'none') throw new RangeError(`edge correction '${correction}' needs a rectangular window`);
  } else {
    ({ x0: wx0, y0: wy0 } = window);
    W = window.x1 - window.x0;
    H = window.y1 - window.y0;
    if (!(W > 0 && H > 0)) throw new RangeError(`rectangle ${JSON.stringify(window)} has no area`);
    area = W * H;
    if (correction === 'ripley' && rmax > Math.min(W, H) / 2)
      throw new RangeError(`Ripley's isotropic correction needs radii ≤ half the shorter side (${Math.min(W, H) / 2}), received ${rmax}`);
  }
  if (correction !== 'none' && correction !== 'translation' && correction !== 'ripley') throw new RangeError(`unknown edge correction: ${correction}`);
  const n1 = x1.length, n2 = x2.length;
  const nullK: CrossK = { radii: [...radii], K: radii.map(() => null), L: radii.map(() => null) };
  if (n1 === 0 || n2 === 0) return nullK;
  const grid2 = new PointGrid(x2, y2);
  const sums = new Float64Array(radii.length);
  for (let i = 0; i < n1; i++) {
    const px = x1[i], py = y1[i];
    const eh = Math.min(wx0 + W - px, px - wx0), ev = Math.min(wy0 + H - py, py - wy0);
    grid2.within(px, py, rmax, (j, d) => {
      let e = 1;
      if (correction === 'translation') e = area / ((W - Math.abs(x2[j] - px)) * (H - Math.abs(y2[j] - py)));
      else if (correction === 'ripley' && d > 0) {
        const inside = d <= Math.hypot(eh, ev)
          ? 1 - (Math.acos(Math.min(ev, d) / d) + Math.acos(Math.min(eh, d) / d)) / Math.PI
          : 3 / 4 - (Math.acos(ev / d) + Math.acos(eh / d)) / (2 * Math.PI);
        e = 1 / inside;
      }
      for (let q = 0; q < radii.length; q++) if (d < radii[q]) sums[q] += e;
    });
  }
  const K = Array.from(sums, (s) => (area * s) / (n1 * n2));
  return { radii: [...radii], K, L: K.map((k) => Math.sqrt(k / Math.PI)) };
}
