/**
 * Spot (punctum) detection in one channel of a volume with anisotropic voxels: spots.ts in 3D.
 *
 * Voxel units: x, y in pixels, z in slices; `zScale` is the slice spacing in pixel widths (z step / pixel
 * size). The spot scale is σ (pixels) in x and y and σz = σ / zScale slices in z — an isotropic physical
 * width — unless `sigmaZ` is given (e.g. from the axial width of the point-spread function).
 * 1. Filter: scale-normalised 3D LoG (gaussian3d.ts) on the region's bounding box plus one voxel, after
 *    subtracting the region's lowest value.
 * 2. Noise: σ̂ = 1.4826 · MAD of the response over the region's voxels (exact; robust-scale.ts; Hampel
 *    1974, J. Am. Stat. Assoc. 69:383–393, doi:10.1080/01621459.1974.10482962).
 * 3. Candidates: region voxels strictly greater than their 26 neighbours (3×3×3; neighbours outside the
 *    volume do not exist) and than k · σ̂; none when σ̂ = 0.
 * 4. Centre: Gaussian-mask centroid (Thompson, Larson & Webb 2002, Biophys. J. 82:2775–2783,
 *    doi:10.1016/S0006-3495(02)75618-X) in a window of half-widths w = ⌈2σ⌉ (x, y) and wz = ⌈2σz⌉ (z) around
 *    the peak voxel, clipped to the volume: intensities minus the local background (median of the window's
 *    outer faces) weighted by the Gaussian of widths σ, σ, σz at the current estimate, iterated from the
 *    peak voxel's centre until it moves < 1e−4 (at most 50 steps); not a spot when the weighted sum is ≤ 0
 *    or the centre leaves the peak voxel's 3×3×3 neighbourhood. Coordinates: origin the corner of voxel
 *    (0, 0, 0), so voxel (i, j, k) has its centre at (i + 0.5, j + 0.5, k + 0.5) — z in slices.
 * 5. Minimum separation: candidates in decreasing response; one closer than `minSeparation` (pixel widths,
 *    z scaled by zScale) to a kept spot is dropped.
 * 6. Close neighbours (as step 6 of spots.ts, 2026-12-03): spots within reach of each other's window are
 *    refined again against the volume minus their neighbours' fitted Gaussian models (amplitude
 *    A·exp(−(dx² + dy²)/2σ² − dz²/2σz²), A the least-squares amplitude of the last centroid step, σ and σz
 *    taken as the spot's widths; see `deblend3D`), until no centre moves by 1e−4 (at most 20 rounds).
 * Pixels without a value: as spots.ts (`missing: 'exclude'` leaves out every voxel within R + 1 in x/y and
 * Rz + 1 in z of one).
 * Degenerate: an empty region, or one whose bounding box is smaller than the window (2w + 1 wide and high,
 * 2wz + 1 deep), gives null.
 */
import { gaussianKernels } from './gaussian';
import { laplacianOfGaussian3D, type VoxelBox } from './gaussian3d';
import { missingMask, nearMissing } from './missing';
import { checkZScale, PointGrid3 } from './pairing3d';
import { medianAndMad } from './robust-scale';
import { MAD_SCALE, regionIndexList, spotOptions } from './spots';
import type { ChannelArray } from './types';

export interface Spot3Options {
  /** lateral filter scale σ in pixels (default 1.5) */
  sigma?: number;
  /** slice spacing in pixel widths (z step / pixel size) */
  zScale: number;
  /** axial scale in slices (default σ / zScale) */
  sigmaZ?: number;
  k?: number;
  /** minimum centre-to-centre distance in pixel widths (default 2σ) */
  minSeparation?: number;
  missing?: 'refuse' | 'exclude';
}

export interface Spot3 {
  x: number;
  y: number;
  z: number;
  peak: number;
  integrated: number;
  response: number;
}

export interface Spot3Detection {
  spots: Spot3[];
  noise: number;
  threshold: number;
  /** centroid window half-widths [w, wz] */
  window: [number, number];
  regionPixels: number;
}

/** resolved, checked options */
export function spot3Options(o: Spot3Options): { sigma: number; sigmaZ: number; zScale: number; k: number; minSeparation: number } {
  const { sigma, k, minSeparation } = spotOptions(o);
  checkZScale(o.zScale);
  const sigmaZ = o.sigmaZ ?? sigma / o.zScale;
  if (!(Number.isFinite(sigmaZ) && sigmaZ > 0 && sigmaZ <= 50)) throw new RangeError(`axial spot sigma must be a number of slices in (0, 50], received ${o.sigmaZ ?? sigmaZ}`);
  return { sigma, sigmaZ, zScale: o.zScale, k, minSeparation };
}

/** margins (x/y, z) a searched voxel keeps from a missing one: the filter's reach plus 1 */
export function missingMargins3D(sigma: number, sigmaZ: number): [number, number] {
  return [gaussianKernels(sigma).radius + 1, gaussianKernels(sigmaZ).radius + 1];
}

/**
 * @param region voxel mask (non-zero inside), sorted-or-not voxel indices (z·plane + y·width + x), or null
 */
export function detectSpots3D(
  data: ChannelArray,
  width: number,
  height: number,
  depth: number,
  region: Uint8Array | ArrayLike<number> | null,
  options: Spot3Options,
): Spot3Detection | null {
  const { sigma, sigmaZ, zScale, k, minSeparation } = spot3Options(options);
  const plane = width * height, N = data.length;
  if (!([width, height, depth].every((v) => Number.isInteger(v) && v > 0) && plane * depth === N))
    throw new RangeError(`volume size ${width}×${height}×${depth} does not match ${N} voxels`);
  let idx = regionIndexList(region, N);
  const gaps = options.missing === 'exclude' ? missingMask([data], N) : null;
  if (gaps) {
    const [m, mz] = missingMargins3D(sigma, sigmaZ);
    const near = nearMissing(gaps, width, height, m, depth, mz);
    idx = idx.filter((i) => !near[i]);
  }
  const n = idx.length;
  if (n === 0) return null;
  const w = Math.ceil(2 * sigma), wz = Math.ceil(2 * sigmaZ);
  let bx0 = width, by0 = height, bz0 = depth, bx1 = -1, by1 = -1, bz1 = -1, low = Infinity;
  for (let t = 0; t < n; t++) {
    const i = idx[t];
    const z = Math.floor(i / plane), r = i - z * plane, y = Math.floor(r / width), x = r - y * width;
    bx0 = Math.min(bx0, x), bx1 = Math.max(bx1, x), by0 = Math.min(by0, y), by1 = Math.max(by1, y), bz0 = Math.min(bz0, z), bz1 = Math.max(bz1, z);
    const v = data[i];
    if (!Number.isFinite(v)) throw new RangeError(`spot detection needs finite voxels; voxel ${i} is ${v}`);
    if (v < low) low = v;
  }
  if (bx1 - bx0 + 1 < 2 * w + 1 || by1 - by0 + 1 < 2 * w + 1 || bz1 - bz0 + 1 < 2 * wz + 1) return null;
  const box: VoxelBox = { x0: Math.max(0, bx0 - 1), y0: Math.max(0, by0 - 1), z0: Math.max(0, bz0 - 1), x1: Math.min(width, bx1 + 2), y1: Math.min(height, by1 + 2), z1: Math.min(depth, bz1 + 2) };
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0, bd = box.z1 - box.z0, bpl = bw * bh;
  const resp = laplacianOfGaussian3D(data, width, height, depth, sigma, sigmaZ, box, low, gaps ? 'zero' : 'refuse');
  const at = (i: number) => {
    const z = Math.floor(i / plane), r = i - z * plane, y = Math.floor(r / width), x = r - y * width;
    return (z - box.z0) * bpl + (y - box.y0) * bw + (x - box.x0);
  };
  const vals = new Float32Array(n);
  for (let t = 0; t < n; t++) vals[t] = resp[at(idx[t])];
  const noise = MAD_SCALE * medianAndMad(vals).mad;
  const threshold = k * noise;
  const result: Spot3Detection = { spots: [], noise, threshold, window: [w, wz], regionPixels: n };
  if (!(noise > 0)) return result;
  const cand: number[] = [];
  for (let t = 0; t < n; t++) {
    const p = at(idx[t]);
    const r = resp[p];
    if (!(r > threshold)) continue;
    const bz = Math.floor(p / bpl), rem = p - bz * bpl, by = Math.floor(rem / bw), bx = rem - by * bw;
    let max = true;
    for (let dz = -1; dz <= 1 && max; dz++) {
      const zz = bz + dz;
      if (zz < 0 || zz >= bd) continue;
      for (let dy = -1; dy <= 1 && max; dy++) {
        const yy = by + dy;
        if (yy < 0 || yy >= bh) continue;
        for (let dx = -1; dx <= 1; dx++) {
          const xx = bx + dx;
          if ((dx === 0 && dy === 0 && dz === 0) || xx < 0 || xx >= bw) continue;
          if (!(r > resp[zz * bpl + yy * bw + xx])) {
            max = false;
            break;
          }
        }
      }
    }
    if (max) cand.push(idx[t]);
  }
  const found: Spot3[] = [];
  for (const i of cand) {
    const z = Math.floor(i / plane), r = i - z * plane, y = Math.floor(r / width), x = r - y * width;
    const s = centroid3D(data, width, height, depth, x, y, z, sigma, sigmaZ, w, wz);
    if (s) {
      s.response = resp[at(i)];
      found.push(s);
    }
  }
  found.sort((a, b) => b.response - a.response || a.z - b.z || a.y - b.y || a.x - b.x);
  if (minSeparation > 0 && found.length > 1) {
    const grid = new PointGrid3(found.map((s) => s.x), found.map((s) => s.y), found.map((s) => s.z * zScale), minSeparation);
    const keep = new Uint8Array(found.length);
    for (let a = 0; a < found.length; a++) {
      let clash = false;
      grid.within(found[a].x, found[a].y, found[a].z * zScale, minSeparation, (b, d) => {
        if (keep[b] && d < minSeparation) clash = true;
      });
      if (!clash) {
        keep[a] = 1;
        result.spots.push(found[a]);
      }
    }
  } else result.spots = found;
  result.spots = deblend3D(data, width, height, depth, result.spots as Refined3[], sigma, sigmaZ, zScale, w, wz);
  return result;
}

/** a spot with what its refinement needs: the peak voxel, the window's background and the model amplitude */
interface Refined3 extends Spot3 {
  px: number;
  py: number;
  pz: number;
  amplitude: number;
}

/**
 * Spots whose windows reach each other's light (centres closer, z scaled, than the window's half-diagonal
 * plus 4 widths) are refined again, each against the volume minus the Gaussian models of its neighbours at
 * their previous estimates, for up to 20 rounds or until no centre moves by 1e−4. A spot left without light
 * of its own once its neighbours' models are subtracted is dropped. Spots without a close neighbour keep
 * their first centre, so isolated spots are as before.
 */
function deblend3D(data: ChannelArray, width: number, height: number, depth: number, spots: Refined3[], sigma: number, sigmaZ: number, zScale: number, w: number, wz: number): Spot3[] {
  const reach = Math.hypot(w, w, wz * zScale) + 4 * Math.max(sigma, sigmaZ * zScale);
  const grid = new PointGrid3(spots.map((s) => s.x), spots.map((s) => s.y), spots.map((s) => s.z * zScale), reach);
  const near: number[][] = spots.map((s, a) => {
    const out: number[] = [];
    grid.within(s.x, s.y, s.z * zScale, reach, (b) => {
      if (b !== a) out.push(b);
    });
    return out;
  });
  let cur: (Refined3 | null)[] = spots;
  if (near.some((l) => l.length > 0))
    for (let round = 0; round < 20; round++) {
      let moved = 0;
      const prev = cur;
      cur = prev.map((s, a) => {
        if (s === null || near[a].length === 0) return s;
        const others = near[a].map((b) => prev[b]).filter((o): o is Refined3 => o !== null);
        const r = centroid3D(data, width, height, depth, s.px, s.py, s.pz, sigma, sigmaZ, w, wz, others);
        if (r === null) {
          moved = Infinity;
          return null;
        }
        r.response = s.response;
        moved = Math.max(moved, Math.abs(r.x - s.x) + Math.abs(r.y - s.y) + Math.abs(r.z - s.z));
        return r;
      });
      if (moved < 1e-4) break;
    }
  return cur.filter((s): s is Refined3 => s !== null).map((s) => ({ x: s.x, y: s.y, z: s.z, peak: s.peak, integrated: s.integrated, response: s.response }));
}

/**
 * Gaussian-mask centroid around peak voxel (px, py, pz), with the models of `others` subtracted; null without
 * signal or when it leaves the 3×3×3 neighbourhood
 */
function centroid3D(data: ChannelArray, width: number, height: number, depth: number, px: number, py: number, pz: number, sigma: number, sigmaZ: number, w: number, wz: number, others: Refined3[] | null = null): Refined3 | null {
  const x0 = Math.max(0, px - w), x1 = Math.min(width - 1, px + w);
  const y0 = Math.max(0, py - w), y1 = Math.min(height - 1, py + w);
  const z0 = Math.max(0, pz - wz), z1 = Math.min(depth - 1, pz + wz);
  const ww = x1 - x0 + 1, wh = y1 - y0 + 1, wd = z1 - z0 + 1;
  const plane = width * height;
  const vals = new Float64Array(ww * wh * wd);
  for (let z = z0, t = 0; z <= z1; z++) for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++, t++) vals[t] = data[z * plane + y * width + x];
  const inv = 1 / (2 * sigma * sigma), invz = 1 / (2 * sigmaZ * sigmaZ);
  const ex = new Float64Array(ww), ey = new Float64Array(wh);
  // neighbours' models, subtracted in turn; each Gaussian separable (one exp per window column, row and slice)
  if (others)
    for (const o of others) {
      for (let x = x0; x <= x1; x++) ex[x - x0] = Math.exp(-((x + 0.5 - o.x) ** 2) * inv);
      for (let y = y0; y <= y1; y++) ey[y - y0] = Math.exp(-((y + 0.5 - o.y) ** 2) * inv);
      for (let z = z0, t = 0; z <= z1; z++) {
        const ez = o.amplitude * Math.exp(-((z + 0.5 - o.z) ** 2) * invz);
        for (let y = y0; y <= y1; y++) {
          const eyz = ey[y - y0] * ez;
          for (let x = x0; x <= x1; x++, t++) vals[t] -= ex[x - x0] * eyz;
        }
      }
    }
  // local background: median of the window's outer faces (of the raw voxels when no neighbours are modelled)
  const shell: number[] = [];
  for (let z = z0, t = 0; z <= z1; z++)
    for (let y = y0; y <= y1; y++)
      for (let x = x0; x <= x1; x++, t++) if (x === x0 || x === x1 || y === y0 || y === y1 || z === z0 || z === z1) shell.push(vals[t]);
  const ring = Float64Array.from(shell).sort();
  const m = ring.length;
  const b = m % 2 ? ring[(m - 1) / 2] : (ring[m / 2 - 1] + ring[m / 2]) / 2;
  let integrated = 0;
  for (let t = 0; t < vals.length; t++) integrated += vals[t] - b;
  let cx = px + 0.5, cy = py + 0.5, cz = pz + 0.5;
  let amplitude = 0;
  for (let it = 0; it < 50; it++) {
    for (let x = x0; x <= x1; x++) ex[x - x0] = Math.exp(-(x + 0.5 - cx) * (x + 0.5 - cx) * inv);
    for (let y = y0; y <= y1; y++) ey[y - y0] = Math.exp(-(y + 0.5 - cy) * (y + 0.5 - cy) * inv);
    let s = 0, sx = 0, sy = 0, sz = 0, gg = 0;
    for (let z = z0, t = 0; z <= z1; z++) {
      const zc = z + 0.5, ez = Math.exp(-(zc - cz) * (zc - cz) * invz);
      for (let y = y0; y <= y1; y++) {
        const yc = y + 0.5, eyz = ey[y - y0] * ez;
        for (let x = x0; x <= x1; x++, t++) {
          const g = ex[x - x0] * eyz;
          const wgt = (vals[t] - b) * ex[x - x0] * eyz;
          s += wgt;
          sx += wgt * (x + 0.5);
          sy += wgt * yc;
          sz += wgt * zc;
          gg += g * g;
        }
      }
    }
    if (!(s > 0)) return null;
    amplitude = s / gg;
    const nx = sx / s, ny = sy / s, nz = sz / s;
    const moved = Math.abs(nx - cx) + Math.abs(ny - cy) + Math.abs(nz - cz);
    cx = nx;
    cy = ny;
    cz = nz;
    if (Math.abs(cx - (px + 0.5)) > 1.5 || Math.abs(cy - (py + 0.5)) > 1.5 || Math.abs(cz - (pz + 0.5)) > 1.5) return null;
    if (moved < 1e-4) break;
  }
  return { x: cx, y: cy, z: cz, peak: data[pz * plane + py * width + px], integrated, response: 0, px, py, pz, amplitude };
}
