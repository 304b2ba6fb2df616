/**
 * Cross-type Ripley's K and its L transform for two point patterns in a volume (channel-1 and channel-2 spot
 * centres found in 3D): ripley.ts in three dimensions.
 *
 * Points are (x, y, z) in voxel units (x, y in pixels, z in slices); distances are Euclidean after scaling z
 * by `zScale` (the slice spacing in pixel widths, z step / pixel size), so radii and K are in pixel widths
 * (K in pixel widths³). K₁₂(r) = V / (n₁ n₂) · Σᵢ Σⱼ e(i, j) · 1(dᵢⱼ < r), with V the window's volume and e an
 * edge-correction weight; L₁₂(r) = ∛(3 K₁₂(r) / (4π)), which is r for independent patterns without edge
 * effects (K = 4/3 π r³ under complete spatial randomness). Ripley 1976, "The second-order analysis of
 * stationary point processes", J. Appl. Probab. 13:255–266, doi:10.2307/3212829; Ripley 1977, "Modelling
 * spatial patterns", J. R. Stat. Soc. B 39:172–212, doi:10.1111/j.2517-6161.1977.tb01615.x; the cross-type
 * form after Lotwick & Silverman 1982, "Methods for analysing spatial processes of several types of points",
 * J. R. Stat. Soc. B 44:406–413, doi:10.1111/j.2517-6161.1982.tb01221.x; K in three dimensions as in
 * Baddeley, Moyeed, Howard & Boyde 1993, "Analysis of a three-dimensional point pattern with replication",
 * Appl. Stat. 42:641–668, doi:10.2307/2986181 (volume and pages from memory).
 *
 * Edge corrections:
 *  - 'none': e = 1 (any window; V given). For a cell of any shape the edge effect is instead handled by the
 *    Monte Carlo envelope of spot-test3d.ts: the same uncorrected K of placements in the same cell's voxels.
 *  - 'translation': for a box [x0, x1) × [y0, y1) × [z0, z1) (z in slices), e = V / ((W − |dx|)(H − |dy|)(D − |dz|))
 *    with D and dz scaled by zScale: the translation weight of Ohser & Stoyan 1981 (Biometrical J. 23:523–533,
 *    doi:10.1002/bimj.4710230602 — from memory) in three dimensions.
 * Distances are strictly below r (as ripley.ts). Degenerate: a channel without points → K and L null.
 */
import { checkZScale, PointGrid3 } from './pairing3d';
import type { CrossK } from './ripley';

export type KWindow3 = { kind: 'volume'; volume: number } | { kind: 'box'; x0: number; y0: number; z0: number; x1: number; y1: number; z1: number };

/** L of a 3-D K: ∛(3K / 4π), the radius of the ball of volume K */
export const lFromK3 = (k: number): number => Math.cbrt((3 * k) / (4 * Math.PI));

export function checkRadii3(radii: number[]): number {
  if (!Array.isArray(radii) || radii.length === 0) throw new RangeError(`Ripley radii must be a non-empty list, received ${JSON.stringify(radii)}`);
  let rmax = 0;
  for (const r of radii) {
    if (!(Number.isFinite(r) && r > 0)) throw new RangeError(`Ripley radius must be a positive number of pixel widths, received ${r}`);
    rmax = Math.max(rmax, r);
  }
  return rmax;
}

/**
 * @param zScale slice spacing in pixel widths
 * @param window the volume in pixel widths³ ('volume'), or a box in voxel units (z in slices) for 'translation'
 */
export function crossK3D(
  p1: { x: ArrayLike<number>; y: ArrayLike<number>; z: ArrayLike<number> },
  p2: { x: ArrayLike<number>; y: ArrayLike<number>; z: ArrayLike<number> },
  zScale: number,
  radii: number[],
  window: KWindow3,
  correction: 'none' | 'translation' = 'none',
): CrossK {
  const rmax = checkRadii3(radii);
  checkZScale(zScale);
  let volume: number;
  let W = 0, H = 0, D = 0;
  if (window.kind === 'volume') {
    volume = window.volume;
    if (!(Number.isFinite(volume) && volume > 0)) throw new RangeError(`window volume must be positive, received ${volume}`);
    if (correction !== 'none') throw new RangeError(`edge correction '${correction}' needs a box window`);
  } else {
    W = window.x1 - window.x0;
    H = window.y1 - window.y0;
    D = (window.z1 - window.z0) * zScale;
    if (!(W > 0 && H > 0 && D > 0)) throw new RangeError(`box ${JSON.stringify(window)} has no volume`);
    volume = W * H * D;
  }
  if (correction !== 'none' && correction !== 'translation') throw new RangeError(`unknown edge correction: ${correction as string}`);
  const n1 = p1.x.length, n2 = p2.x.length;
  if (n1 === 0 || n2 === 0) return { radii: [...radii], K: radii.map(() => null), L: radii.map(() => null) };
  const z2 = Float64Array.from(p2.z, (z) => z * zScale);
  const grid2 = new PointGrid3(p2.x, p2.y, z2, Math.max(rmax, 1e-6));
  const sums = new Float64Array(radii.length);
  for (let i = 0; i < n1; i++) {
    const px = p1.x[i], py = p1.y[i], pz = p1.z[i] * zScale;
    grid2.within(px, py, pz, rmax, (j, d) => {
      const e = correction === 'translation' ? volume / ((W - Math.abs(p2.x[j] - px)) * (H - Math.abs(p2.y[j] - py)) * (D - Math.abs(z2[j] - pz))) : 1;
      for (let q = 0; q < radii.length; q++) if (d < radii[q]) sums[q] += e;
    });
  }
  const K = Array.from(sums, (s) => (volume * s) / (n1 * n2));
  return { radii: [...radii], K, L: K.map(lFromK3) };
}
